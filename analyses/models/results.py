"""Results: one replicate determination of a test, never overwritten.

A correction inserts a new version (``supersedes`` the old one, which becomes
``superseded``); a test sent back or invalidated marks its results ``invalidated``.
At most one ``current`` result exists per (test, replicate).
"""
from __future__ import annotations

from django.conf import settings
from django.db import models
from django.db.models import Q


class ResultStatus(models.TextChoices):
    CURRENT = "current", "Current"
    SUPERSEDED = "superseded", "Superseded by a correction"
    INVALIDATED = "invalidated", "Invalidated (sent back or lab error)"


class Result(models.Model):
    test = models.ForeignKey("analyses.Test", on_delete=models.PROTECT, related_name="results")
    replicate = models.PositiveSmallIntegerField()
    version = models.PositiveSmallIntegerField(default=1)
    status = models.CharField(max_length=16, choices=ResultStatus.choices, default=ResultStatus.CURRENT)
    inputs = models.JSONField(help_text="raw inputs exactly as entered")
    value = models.FloatField(help_text="computed by the plugin, unrounded")
    value_exact = models.TextField(
        blank=True, help_text="the unrounded value in exact decimal arithmetic, as a Decimal string; verdicts are decided on it"
    )
    reported = models.CharField(max_length=40, help_text="ASTM E29 rounded, Decimal string")
    unit = models.CharField(max_length=40)
    method_code = models.CharField(max_length=40)
    method_version = models.CharField(max_length=40)
    verdict = models.CharField(max_length=8)
    duplicate_check = models.JSONField(null=True, blank=True)
    supersedes = models.OneToOneField(
        "self", null=True, blank=True, on_delete=models.PROTECT, related_name="superseded_by"
    )
    correction_reason = models.TextField(blank=True)
    status_reason = models.TextField(blank=True)
    entered_by = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+")
    entered_at = models.DateTimeField()
    idempotency_key = models.CharField(max_length=100, null=True, blank=True)
    # traceability (issue 9): the titrant lot and the standardisation whose concentration
    # the result used; the instruments are in ``instrument_uses``
    reagent_lot = models.ForeignKey(
        "analyses.ReagentLot", null=True, blank=True, on_delete=models.PROTECT, related_name="results"
    )
    standardisation = models.ForeignKey(
        "analyses.Standardisation", null=True, blank=True, on_delete=models.PROTECT, related_name="results"
    )
    titrant_concentration = models.TextField(blank=True, help_text="mol/L from the standardisation, Decimal string")
    titrant_uncertainty = models.TextField(blank=True, help_text="its standard uncertainty, mol/L, Decimal string")
    # a profile method's every component (plugins.contract "Profiles"): name -> exact and reported
    # value, unit, places, kind, detected; empty for a single-value method
    components = models.JSONField(default=dict, blank=True)

    class Meta:
        ordering = ["test_id", "replicate", "version"]
        constraints = [
            models.UniqueConstraint(
                fields=["entered_by", "idempotency_key"],
                condition=Q(idempotency_key__isnull=False),
                name="result_idempotency_key_unique",
            ),
            models.UniqueConstraint(
                fields=["test", "replicate"],
                condition=Q(status="current"),
                name="result_one_current_per_replicate",
            ),
        ]
        indexes = [
            # the review queue's four-eyes check (has this user a current result on the test?)
            # from the index alone, and its count without reading every queued test's results
            models.Index(fields=["test", "entered_by"], condition=Q(status="current"), name="result_current_by_idx"),
        ]

    def __str__(self) -> str:
        return f"{self.method_code} {self.reported} {self.unit} (test {self.test_id} r{self.replicate} v{self.version})"
