"""Oil products (grades) that a laboratory tests against specifications."""
from __future__ import annotations

from django.conf import settings
from django.db import models


class Product(models.Model):
    """A grade of oil, e.g. refined soybean oil. ``oil_type`` is descriptive (e.g. "soybean");
    each specification line names the Codex oil type it takes limits from, if any."""

    code = models.CharField(max_length=40, unique=True)
    name = models.CharField(max_length=200)
    oil_type = models.CharField(max_length=60, blank=True)
    description = models.TextField(blank=True)
    created_by = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+")
    created_at = models.DateTimeField()

    class Meta:
        ordering = ["code"]

    def __str__(self) -> str:
        return f"{self.code} {self.name}"
