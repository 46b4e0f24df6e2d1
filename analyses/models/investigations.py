"""Out-of-specification investigations: opened when an accepted test is out of
specification. On an open lot they block its release until QA closes them; on a released
lot (a retained sample tested after release) the investigation is a post-release one,
whose outcomes are a hold notice on the lot or no action (``services/post_release.py``)."""
from __future__ import annotations

from django.conf import settings
from django.db import models
from django.db.models import Q


class InvestigationState(models.TextChoices):
    OPEN = "open", "Open"
    CLOSED = "closed", "Closed"


class InvestigationKind(models.TextChoices):
    RELEASE = "release", "Before release: blocks the lot's release"
    POST_RELEASE = "post_release", "After release: the lot was already released when the result was found"


class Conclusion(models.TextChoices):
    CONFIRMED = "confirmed", "OOS confirmed: the lot is rejected"
    LAB_ERROR = "lab_error", "Lab error found: the result is invalidated and the test repeated"
    # the outcomes of an investigation on a lot that is already released
    NO_ACTION = "no_action", "After release: no action on the lot"
    HOLD_NOTICE = "hold_notice", "After release: a hold notice marks the lot released, under investigation"


class Investigation(models.Model):
    lot = models.ForeignKey("analyses.Lot", on_delete=models.PROTECT, related_name="investigations")
    test = models.ForeignKey("analyses.Test", on_delete=models.PROTECT, related_name="investigations")
    kind = models.CharField(max_length=16, choices=InvestigationKind.choices, default=InvestigationKind.RELEASE)
    state = models.CharField(max_length=8, choices=InvestigationState.choices, default=InvestigationState.OPEN)
    opened_by = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+")
    opened_at = models.DateTimeField()
    conclusion = models.CharField(max_length=16, choices=Conclusion.choices, blank=True)
    findings = models.TextField(blank=True)
    closed_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, null=True, blank=True, on_delete=models.PROTECT, related_name="+"
    )
    closed_at = models.DateTimeField(null=True, blank=True)
    retest = models.ForeignKey(
        "analyses.Test", null=True, blank=True, on_delete=models.PROTECT, related_name="+"
    )
    effect = models.TextField(blank=True, help_text="what closing it changed, in words; empty while open")

    class Meta:
        ordering = ["-opened_at", "-id"]
        constraints = [
            models.UniqueConstraint(
                fields=["test"], condition=Q(state="open"), name="investigation_one_open_per_test"
            ),
        ]
        permissions = [("close_investigation", "Can close OOS investigations (QA)")]

    def __str__(self) -> str:
        return f"OOS #{self.pk} on lot {self.lot_id} ({self.state})"
