"""Lots: a production lot, or an incoming delivery from a supplier."""
from __future__ import annotations

from django.conf import settings
from django.db import models


class LotOrigin(models.TextChoices):
    PRODUCTION = "production", "Production lot"
    DELIVERY = "delivery", "Incoming delivery"


class LotState(models.TextChoices):
    OPEN = "open", "Open"
    RELEASED = "released", "Released"
    REJECTED = "rejected", "Rejected"


class Lot(models.Model):
    code = models.CharField(max_length=60, unique=True)
    product = models.ForeignKey("analyses.Product", on_delete=models.PROTECT, related_name="lots")
    origin = models.CharField(max_length=16, choices=LotOrigin.choices)
    supplier = models.CharField(max_length=200, blank=True)
    customer = models.CharField(max_length=200, blank=True, help_text="who the lot is for; named on its certificate")
    container_ref = models.CharField(max_length=100, blank=True, help_text="tank or container reference")
    quantity_kg = models.DecimalField(max_digits=14, decimal_places=3, null=True, blank=True)
    produced_on = models.DateField(null=True, blank=True, help_text="production or delivery date")
    state = models.CharField(max_length=16, choices=LotState.choices, default=LotState.OPEN)
    decision_reason = models.TextField(blank=True)
    decided_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, null=True, blank=True, on_delete=models.PROTECT, related_name="+"
    )
    decided_at = models.DateTimeField(null=True, blank=True)
    created_by = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+")
    created_at = models.DateTimeField()
    # A hold notice on a released lot (a post-release investigation's outcome): the lot stays
    # released, "released, under investigation", until QA lifts the notice.
    hold_notice_reason = models.TextField(blank=True)
    hold_notice_at = models.DateTimeField(null=True, blank=True)
    hold_notice_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, null=True, blank=True, on_delete=models.PROTECT, related_name="+"
    )
    hold_notice_investigation = models.ForeignKey(
        "analyses.Investigation", null=True, blank=True, on_delete=models.PROTECT, related_name="+"
    )

    class Meta:
        ordering = ["-created_at", "-id"]
        permissions = [
            ("create_lot", "Can create lots"),
            ("release_lot", "Can release or reject lots (QA)"),
        ]

    def __str__(self) -> str:
        return self.code

    @property
    def under_investigation(self) -> bool:
        """Released with a hold notice standing."""
        return self.state == LotState.RELEASED and self.hold_notice_at is not None

    @property
    def standing(self) -> str:
        """The lot's state in words, with a standing hold notice: "released, under investigation"."""
        return "released, under investigation" if self.under_investigation else self.state
