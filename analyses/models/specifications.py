"""Versioned product specifications and their lines.

A specification is drafted, then approved by QA and effective from a date. An approved
specification is never edited: a change is a new version (``revised_from`` points back).
"""
from __future__ import annotations

from decimal import Decimal

from django.conf import settings
from django.db import models

from analyses.errors import Conflict


class SpecificationStatus(models.TextChoices):
    DRAFT = "draft", "Draft"
    APPROVED = "approved", "Approved"


class Comparison(models.TextChoices):
    """How a result is compared with a limit, ASTM E29 (the specification names which)."""

    ABSOLUTE = "absolute", "ASTM E29 absolute method (unrounded value)"
    ROUNDING = "rounding", "ASTM E29 rounding method (value rounded to the limit's places)"


class DecisionRule(models.TextChoices):
    """How measurement uncertainty enters conformity (ISO/IEC 17025 7.8.6; ILAC G8:09/2019;
    JCGM 106:2012). See analyses/services/verdicts.py."""

    SIMPLE = "simple", "Simple acceptance (no guard band)"
    GUARD_BAND = "guard_band", "Guard band w = multiple x U: passes only inside the limit by at least w"
    NON_BINARY = "non_binary", "ILAC G8 non-binary statements: pass, conditional pass, conditional fail, fail"


class Specification(models.Model):
    product = models.ForeignKey("analyses.Product", on_delete=models.PROTECT, related_name="specifications")
    version = models.PositiveIntegerField()
    status = models.CharField(max_length=16, choices=SpecificationStatus.choices, default=SpecificationStatus.DRAFT)
    effective_from = models.DateField()
    note = models.TextField(blank=True)
    revised_from = models.ForeignKey("self", null=True, blank=True, on_delete=models.PROTECT, related_name="revisions")
    created_by = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+")
    created_at = models.DateTimeField()
    approved_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, null=True, blank=True, on_delete=models.PROTECT, related_name="+"
    )
    approved_at = models.DateTimeField(null=True, blank=True)

    class Meta:
        ordering = ["product_id", "-version"]
        constraints = [
            models.UniqueConstraint(fields=["product", "version"], name="specification_version_unique"),
        ]
        permissions = [
            ("draft_specification", "Can draft and revise specifications"),
            ("approve_specification", "Can approve specifications (QA)"),
        ]

    def __str__(self) -> str:
        return f"{self.product.code} v{self.version} ({self.status})"

    @property
    def is_approved(self) -> bool:
        return self.status == SpecificationStatus.APPROVED

    def save(self, *args, **kwargs):
        # Only a draft may change; approval itself is the last save a specification gets.
        if not self._state.adding and self.pk is not None:
            stored = type(self).objects.filter(pk=self.pk).values_list("status", flat=True).first()
            if stored == SpecificationStatus.APPROVED:
                raise Conflict(f"specification {self.pk} is approved and cannot be changed; revise it instead")
        super().save(*args, **kwargs)

    def delete(self, *args, **kwargs):
        if self.is_approved:
            raise Conflict(f"specification {self.pk} is approved and cannot be deleted")
        return super().delete(*args, **kwargs)


class SpecificationLine(models.Model):
    """One method with its limits. Limits are Decimal strings as written, in plain notation
    ("0.6", "189", "0.0000001"): the rounding method needs the places the limit was written to."""

    specification = models.ForeignKey(Specification, on_delete=models.CASCADE, related_name="lines")
    position = models.PositiveIntegerField(default=0)
    method_code = models.CharField(max_length=40)
    unit = models.CharField(max_length=40)
    minimum = models.CharField(max_length=40, blank=True)
    maximum = models.CharField(max_length=40, blank=True)
    comparison = models.CharField(max_length=16, choices=Comparison.choices, default=Comparison.ABSOLUTE)
    decision_rule = models.CharField(max_length=16, choices=DecisionRule.choices, default=DecisionRule.SIMPLE)
    # w = guard_band_multiple x U (Decimal string); "1" is ILAC G8's w = U
    guard_band_multiple = models.CharField(max_length=20, default="1")
    release_critical = models.BooleanField(default=True)
    turnaround_days = models.PositiveIntegerField(default=3)
    limits_source = models.CharField(max_length=300, blank=True)
    # what the result is expressed as, where the method has a basis (FFA: oleic, palmitic, lauric);
    # ``unit`` follows it ("% as palmitic")
    basis = models.CharField(max_length=40, blank=True)

    class Meta:
        ordering = ["specification_id", "position", "id"]
        constraints = [
            models.UniqueConstraint(fields=["specification", "method_code"], name="specification_line_method_unique"),
        ]

    def __str__(self) -> str:
        return f"{self.method_code} [{self.minimum or '-'}, {self.maximum or '-'}] {self.unit}"

    @property
    def minimum_decimal(self) -> Decimal | None:
        return Decimal(self.minimum) if self.minimum else None

    @property
    def maximum_decimal(self) -> Decimal | None:
        return Decimal(self.maximum) if self.maximum else None

    def _specification_approved(self) -> bool:
        return Specification.objects.filter(pk=self.specification_id, status=SpecificationStatus.APPROVED).exists()

    def save(self, *args, **kwargs):
        if self._specification_approved():
            raise Conflict(f"specification {self.specification_id} is approved; its lines cannot change")
        super().save(*args, **kwargs)

    def delete(self, *args, **kwargs):
        if self._specification_approved():
            raise Conflict(f"specification {self.specification_id} is approved; its lines cannot change")
        return super().delete(*args, **kwargs)
