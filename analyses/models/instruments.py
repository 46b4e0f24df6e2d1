"""Instruments with their calibrations and routine checks (both append-only)."""
from __future__ import annotations

from django.conf import settings
from django.db import models

from analyses.models.immutable import AppendOnlyModel


class InstrumentKind(models.TextChoices):
    BALANCE = "balance", "Balance"
    BURETTE = "burette", "Burette"
    TITRATOR = "automatic_titrator", "Automatic titrator"
    SPECTROPHOTOMETER = "spectrophotometer", "UV-Vis spectrophotometer"
    OVEN = "oven", "Oven"
    THERMOMETER = "thermometer", "Thermometer"
    GC = "gc", "Gas chromatograph"
    OXIDATIVE_STABILITY = "oxidative_stability", "Oxidative stability instrument (AOCS Cd 12b-92)"


class Instrument(models.Model):
    asset_id = models.CharField(max_length=60, unique=True)
    kind = models.CharField(max_length=24, choices=InstrumentKind.choices)
    description = models.CharField(max_length=200, blank=True)
    location = models.CharField(max_length=120, blank=True)
    check_every_days = models.PositiveSmallIntegerField(
        null=True, blank=True, help_text="routine check required this often (balance daily); empty: none required"
    )
    created_by = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+")
    created_at = models.DateTimeField()

    class Meta:
        ordering = ["asset_id"]
        permissions = [("manage_instruments", "Can register instruments and record calibrations")]

    def __str__(self) -> str:
        return self.asset_id


class Calibration(AppendOnlyModel):
    instrument = models.ForeignKey(Instrument, on_delete=models.PROTECT, related_name="calibrations")
    calibrated_on = models.DateField()
    due_on = models.DateField()
    certificate_ref = models.CharField(max_length=120)
    passed = models.BooleanField()
    standard_uncertainty = models.CharField(max_length=40, blank=True, help_text="as the certificate states, Decimal string")
    tolerance = models.CharField(max_length=40, blank=True, help_text="± as the certificate or class states, Decimal string")
    unit = models.CharField(max_length=20, blank=True, help_text="of the uncertainty or tolerance: g, mL, ...")
    recorded_by = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+")
    recorded_at = models.DateTimeField()

    class Meta:
        ordering = ["instrument_id", "-calibrated_on", "-id"]

    def __str__(self) -> str:
        return f"{self.instrument_id} calibrated {self.calibrated_on} ({self.certificate_ref})"


class CheckKind(models.TextChoices):
    CHECK_WEIGHT = "check_weight", "Balance check weight"
    REFERENCE_FILTER = "reference_filter", "Spectrophotometer reference filter"
    OTHER = "other", "Other check"


class InstrumentCheck(AppendOnlyModel):
    instrument = models.ForeignKey(Instrument, on_delete=models.PROTECT, related_name="checks")
    kind = models.CharField(max_length=20, choices=CheckKind.choices)
    reference = models.CharField(max_length=120, blank=True, help_text="the check weight's or filter's identity")
    nominal = models.CharField(max_length=40)
    measured = models.CharField(max_length=40)
    tolerance = models.CharField(max_length=40)
    unit = models.CharField(max_length=20)
    passed = models.BooleanField()
    performed_by = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+")
    performed_at = models.DateTimeField()

    class Meta:
        ordering = ["instrument_id", "-performed_at", "-id"]
        permissions = [("record_instrument_check", "Can record routine instrument checks")]

    def __str__(self) -> str:
        return f"{self.instrument_id} {self.kind} {'passed' if self.passed else 'failed'}"


class ResultInstrument(AppendOnlyModel):
    """An instrument a result used, with the calibration and check that made it usable."""

    result = models.ForeignKey("analyses.Result", on_delete=models.PROTECT, related_name="instrument_uses")
    instrument = models.ForeignKey(Instrument, on_delete=models.PROTECT, related_name="result_uses")
    calibration = models.ForeignKey(Calibration, on_delete=models.PROTECT, related_name="+")
    routine_check = models.ForeignKey(InstrumentCheck, null=True, blank=True, on_delete=models.PROTECT, related_name="+")

    class Meta:
        ordering = ["result_id", "instrument_id"]
        constraints = [models.UniqueConstraint(fields=["result", "instrument"], name="result_instrument_once")]
