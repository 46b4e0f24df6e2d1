"""Certificates of analysis: the JSON issued when a lot is released; never changed."""
from __future__ import annotations

from django.conf import settings
from django.db import models

from analyses.models.immutable import AppendOnlyModel


class Certificate(AppendOnlyModel):
    lot = models.OneToOneField("analyses.Lot", on_delete=models.PROTECT, related_name="certificate")
    number = models.CharField(max_length=80, unique=True)
    content = models.JSONField()
    content_sha256 = models.CharField(max_length=64)
    issued_by = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+")
    issued_at = models.DateTimeField()

    class Meta:
        ordering = ["-issued_at", "-id"]

    def __str__(self) -> str:
        return self.number
