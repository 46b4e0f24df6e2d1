"""Instrument file import: named column mappings, and each file imported.

A mapping says which column of a lab's export holds what (``analyses.imports.layouts``);
it lives in the database so a lab names its own ("titrator 2 export"). A file is imported
once: its SHA-256 is unique, and a second import of the same bytes answers with the first
one's results (a replay), never a second set.
"""
from __future__ import annotations

from django.conf import settings
from django.db import models


class ImportLayout(models.TextChoices):
    TITRATOR = "titrator", "Titrator table: sample, method, titre, blank, titrant lot"
    GC = "gc", "GC table: sample, component, area or area %"


class ImportMapping(models.Model):
    name = models.CharField(max_length=80, unique=True, help_text='e.g. "titrator 2 export"')
    layout = models.CharField(max_length=16, choices=ImportLayout.choices)
    columns = models.JSONField(help_text="role -> column heading in the file")
    extra_inputs = models.JSONField(default=dict, blank=True, help_text="method input name -> column heading")
    default_instruments = models.JSONField(default=list, blank=True, help_text="asset ids used for every row")
    created_by = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+")
    created_at = models.DateTimeField()

    class Meta:
        ordering = ["name"]

    def __str__(self) -> str:
        return self.name


class ResultImport(models.Model):
    sha256 = models.CharField(max_length=64, unique=True)
    file_name = models.CharField(max_length=255)
    size_bytes = models.PositiveIntegerField()
    mapping = models.ForeignKey(ImportMapping, on_delete=models.PROTECT, related_name="imports")
    rows = models.PositiveIntegerField(default=0)
    result_ids = models.JSONField(default=list)
    imported_by = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+")
    imported_at = models.DateTimeField()

    class Meta:
        ordering = ["-imported_at", "-id"]

    def __str__(self) -> str:
        return f"{self.file_name} ({self.sha256[:12]})"
