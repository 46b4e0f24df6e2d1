"""Out-of-specification investigations: opened when an accepted test is out of
specification; they block the lot's release until QA closes them."""
from __future__ import annotations

from django.conf import settings
from django.db import models
from django.db.models import Q


class InvestigationState(models.TextChoices):
    OPEN = "open", "Open"
    CLOSED = "closed", "Closed"


class Conclusion(models.TextChoices):
    CONFIRMED = "confirmed", "OOS confirmed: the lot is rejected"
    LAB_ERROR = "lab_error", "Lab error found: the result is invalidated and the test repeated"


class Investigation(models.Model):
    lot = models.ForeignKey("analyses.Lot", on_delete=models.PROTECT, related_name="investigations")
    test = models.ForeignKey("analyses.Test", on_delete=models.PROTECT, related_name="investigations")
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
