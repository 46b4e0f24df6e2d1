"""Samples taken from a lot, and the states they move through.

registered -> received -> in_testing -> testing_complete -> released | rejected;
on_hold (remembers ``resume_state``) and cancelled from any open state, each with a reason.
Transitions are guarded in ``analyses.services.samples``.
"""
from __future__ import annotations

from django.conf import settings
from django.db import models


class SampleKind(models.TextChoices):
    ROUTINE = "routine", "Routine"
    RETAIN = "retain", "Retain"
    QC_CHECK = "qc_check", "QC check"
    STABILITY_PULL = "stability_pull", "Stability pull"


class SampleState(models.TextChoices):
    REGISTERED = "registered", "Registered"
    RECEIVED = "received", "Received"
    IN_TESTING = "in_testing", "In testing"
    TESTING_COMPLETE = "testing_complete", "Testing complete"
    RELEASED = "released", "Released"
    REJECTED = "rejected", "Rejected"
    ON_HOLD = "on_hold", "On hold"
    CANCELLED = "cancelled", "Cancelled"


class Sample(models.Model):
    lot = models.ForeignKey("analyses.Lot", on_delete=models.PROTECT, related_name="samples")
    label = models.CharField(max_length=80, unique=True)
    kind = models.CharField(max_length=20, choices=SampleKind.choices, default=SampleKind.ROUTINE)
    state = models.CharField(max_length=20, choices=SampleState.choices, default=SampleState.REGISTERED)
    resume_state = models.CharField(max_length=20, choices=SampleState.choices, blank=True)
    state_reason = models.TextField(blank=True, help_text="why it was put on hold or cancelled")
    taken_at = models.DateTimeField(null=True, blank=True)
    specification = models.ForeignKey(
        "analyses.Specification", null=True, blank=True, on_delete=models.PROTECT, related_name="samples"
    )
    registered_by = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+")
    registered_at = models.DateTimeField()
    received_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, null=True, blank=True, on_delete=models.PROTECT, related_name="+"
    )
    received_at = models.DateTimeField(null=True, blank=True)
    condition_on_receipt = models.TextField(blank=True)
    storage_place = models.CharField(max_length=120, blank=True)

    class Meta:
        ordering = ["-registered_at", "-id"]
        indexes = [
            # the sample list's order, newest first: a page without sorting the whole table, of
            # all samples or of those in one state
            models.Index(fields=["-registered_at", "-id"], name="sample_newest_idx"),
            models.Index(fields=["state", "-registered_at", "-id"], name="sample_state_newest_idx"),
        ]
        permissions = [
            ("register_sample", "Can register samples"),
            ("receive_sample", "Can receive samples"),
            ("hold_sample", "Can put samples on hold and resume them"),
            ("cancel_sample", "Can cancel samples"),
        ]

    def __str__(self) -> str:
        return self.label
