"""Volumetric solutions: reagent kinds, titrant lots and their standardisations.

A standardisation is never edited: a wrong one is superseded by a new row with a reason
(``supersedes``), and the old one keeps its figures and becomes ``superseded``.
"""
from __future__ import annotations

from django.conf import settings
from django.db import models

# the common acceptance limit for the replicates of a standardisation: relative spread <= 0.2 %
DEFAULT_SPREAD_LIMIT = "0.002"
DEFAULT_SPREAD_SOURCE = "common practice, no source"


class TitrantSubstance(models.TextChoices):
    """What the solution titrates with; methods name the substances they accept."""

    KOH = "KOH", "potassium hydroxide"
    NAOH = "NaOH", "sodium hydroxide"
    HCL = "HCl", "hydrochloric acid"
    H2SO4 = "H2SO4", "sulfuric acid"
    THIOSULFATE = "Na2S2O3", "sodium thiosulfate"


# which primary standards suit which titrant: a base against KHP, an acid against Na2CO3,
# TRIS or a standardised base, thiosulfate against dichromate or iodate (iodometry)
SUBSTANCE_REACTION = {
    TitrantSubstance.KOH: "base",
    TitrantSubstance.NAOH: "base",
    TitrantSubstance.HCL: "acid",
    TitrantSubstance.H2SO4: "acid",
    TitrantSubstance.THIOSULFATE: "iodometric",
}


class ReagentKind(models.Model):
    name = models.CharField(max_length=120, unique=True, help_text='e.g. "KOH in ethanol, 0.5 mol/L"')
    substance = models.CharField(max_length=16, choices=TitrantSubstance.choices)
    solvent = models.CharField(max_length=60, blank=True, default="water")
    nominal_concentration = models.CharField(max_length=40, help_text="mol/L, Decimal string")
    nominal_as_written = models.CharField(max_length=64, help_text='as the lab wrote it, e.g. "0.1 N"')
    equivalents_per_mole = models.PositiveSmallIntegerField(default=1)
    validity_days = models.PositiveSmallIntegerField(help_text="how long a standardisation stays valid (1 = daily)")
    spread_limit = models.CharField(max_length=20, default=DEFAULT_SPREAD_LIMIT, help_text="relative, e.g. 0.002 = 0.2 %")
    spread_limit_source = models.CharField(max_length=200, default=DEFAULT_SPREAD_SOURCE)
    created_by = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+")
    created_at = models.DateTimeField()

    class Meta:
        ordering = ["name"]
        permissions = [("manage_reagent_kinds", "Can register and change reagent kinds")]

    def __str__(self) -> str:
        return self.name


class ReagentLot(models.Model):
    kind = models.ForeignKey(ReagentKind, on_delete=models.PROTECT, related_name="lots")
    code = models.CharField(max_length=60, unique=True)
    prepared_on = models.DateField(help_text="prepared in the lab or received")
    expires_on = models.DateField()
    prepared_by = models.CharField(max_length=120, help_text="who prepared it, or the supplier")
    created_by = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+")
    created_at = models.DateTimeField()

    class Meta:
        ordering = ["kind_id", "-prepared_on", "-id"]
        permissions = [("register_reagent_lot", "Can register titrant lots")]

    def __str__(self) -> str:
        return self.code


class StandardisationStatus(models.TextChoices):
    CURRENT = "current", "Current"
    SUPERSEDED = "superseded", "Superseded"


class Standardisation(models.Model):
    lot = models.ForeignKey(ReagentLot, on_delete=models.PROTECT, related_name="standardisations")
    primary_standard = models.CharField(max_length=24)
    standard_reference = models.CharField(max_length=120, blank=True, help_text="the standard's own lot or certificate")
    purity = models.CharField(max_length=20, blank=True, help_text="mass fraction, Decimal string")
    purity_uncertainty = models.CharField(max_length=20, blank=True, help_text="standard uncertainty of the purity")
    molar_mass = models.CharField(max_length=40, blank=True)
    molar_mass_uncertainty = models.CharField(max_length=80, blank=True)
    reference = models.ForeignKey(
        "self", null=True, blank=True, on_delete=models.PROTECT, related_name="+",
        help_text="the standardised solution titrated against (instead of a primary standard)",
    )
    replicates = models.JSONField(help_text='[{"amount": "0.3888", "titre": "18.64"}, ...] as entered')
    blank = models.CharField(max_length=20, default="0")
    balance = models.ForeignKey("analyses.Instrument", null=True, blank=True, on_delete=models.PROTECT, related_name="+")
    burette = models.ForeignKey("analyses.Instrument", null=True, blank=True, on_delete=models.PROTECT, related_name="+")
    concentrations = models.JSONField(help_text="each replicate's concentration, Decimal strings")
    concentration = models.TextField(help_text="mean, mol/L, exact Decimal string")
    uncertainty = models.TextField(help_text="standard uncertainty, mol/L (QUAM A2), Decimal string")
    relative_spread = models.TextField()
    spread_limit = models.CharField(max_length=20)
    performed_by = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+")
    performed_at = models.DateTimeField()
    valid_until = models.DateTimeField()
    status = models.CharField(max_length=16, choices=StandardisationStatus.choices, default=StandardisationStatus.CURRENT)
    supersedes = models.OneToOneField(
        "self", null=True, blank=True, on_delete=models.PROTECT, related_name="superseded_by"
    )
    reason = models.TextField(blank=True, help_text="why it supersedes the previous one")
    status_reason = models.TextField(blank=True)

    class Meta:
        ordering = ["lot_id", "-performed_at", "-id"]
        indexes = [models.Index(fields=["lot", "status", "performed_at"], name="std_lot_status_idx")]
        permissions = [("record_standardisation", "Can record standardisations")]

    def __str__(self) -> str:
        return f"{self.lot.code}: {self.concentration} mol/L ({self.performed_at:%Y-%m-%d})"
