"""Certificates of analysis: issued when a lot is released, never changed. A reissue (a
corrected customer name, a result corrected after release) is a new version beside the old."""
from __future__ import annotations

from django.conf import settings
from django.db import models

from analyses.models.immutable import AppendOnlyModel


class Certificate(AppendOnlyModel):
    lot = models.ForeignKey("analyses.Lot", on_delete=models.PROTECT, related_name="certificates")
    number = models.CharField(max_length=80, unique=True)
    version = models.PositiveIntegerField(default=1)
    replaces = models.OneToOneField(
        "self", null=True, blank=True, on_delete=models.PROTECT, related_name="replaced_by",
        help_text="the version this one replaces (a reissue)",
    )
    reissue_reason = models.TextField(blank=True)
    content = models.JSONField()
    content_sha256 = models.CharField(max_length=64)
    issued_by = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+")
    issued_at = models.DateTimeField()

    class Meta:
        ordering = ["-issued_at", "-id"]
        constraints = [
            models.UniqueConstraint(fields=["lot", "version"], name="certificate_lot_version_unique"),
        ]

    def __str__(self) -> str:
        return self.number
