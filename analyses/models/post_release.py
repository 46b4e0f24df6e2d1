"""A result corrected after its lot was released: the analyst proposes the corrected raw data,
QA approves it with their signature (the result gets a new version and the certificate is
reissued) or declines it. Four eyes: QA never enters raw data, and the analyst never signs."""
from __future__ import annotations

from django.conf import settings
from django.db import models
from django.db.models import Q


class CorrectionState(models.TextChoices):
    PROPOSED = "proposed", "Proposed, awaiting QA"
    APPLIED = "applied", "Approved by QA: the result corrected, the certificate reissued"
    DECLINED = "declined", "Declined by QA"


class PostReleaseCorrection(models.Model):
    lot = models.ForeignKey("analyses.Lot", on_delete=models.PROTECT, related_name="post_release_corrections")
    result = models.ForeignKey(
        "analyses.Result", on_delete=models.PROTECT, related_name="post_release_corrections",
        help_text="the accepted result the correction replaces",
    )
    inputs = models.JSONField(help_text="the corrected raw inputs, exactly as entered")
    reason = models.TextField(help_text="why the released result was wrong")
    reported = models.CharField(max_length=40, help_text="the corrected replicate as it would be reported (ASTM E29)")
    unit = models.CharField(max_length=40)
    mean_reported = models.CharField(
        max_length=40, blank=True, help_text="the test's result (mean of replicates) with the correction, as reported"
    )
    verdict = models.CharField(
        max_length=8, blank=True, help_text="the test's verdict with the correction, by the line's decision rule"
    )
    derived = models.JSONField(
        default=list, blank=True,
        help_text="the accepted tests worked out from this one (TOTOX) with the correction: "
        '[{"test", "method_code", "reported", "unit", "verdict"}]',
    )
    state = models.CharField(max_length=10, choices=CorrectionState.choices, default=CorrectionState.PROPOSED)
    proposed_by = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+")
    proposed_at = models.DateTimeField()
    decided_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, null=True, blank=True, on_delete=models.PROTECT, related_name="+"
    )
    decided_at = models.DateTimeField(null=True, blank=True)
    decision_note = models.TextField(blank=True)
    correction = models.OneToOneField(
        "analyses.Result", null=True, blank=True, on_delete=models.PROTECT, related_name="+",
        help_text="the new version of the result, once applied",
    )
    certificate = models.OneToOneField(
        "analyses.Certificate", null=True, blank=True, on_delete=models.PROTECT, related_name="+",
        help_text="the certificate reissued for it, once applied",
    )

    class Meta:
        ordering = ["-proposed_at", "-id"]
        constraints = [
            models.UniqueConstraint(
                fields=["result"], condition=Q(state="proposed"), name="post_release_correction_one_open_per_result"
            ),
        ]

    def __str__(self) -> str:
        return f"post-release correction #{self.pk} of result {self.result_id} ({self.state})"
