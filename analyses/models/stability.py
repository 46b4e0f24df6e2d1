"""Stability (shelf-life) studies: a protocol, its storage conditions, attributes and pull points.

A study follows one product on one or more lots, stored under one or more conditions
(temperature, light or dark). At each pull point a stability-pull sample is taken from
each lot under each condition and tested with the study's methods.
"""
from __future__ import annotations

from django.conf import settings
from django.db import models


class StudyState(models.TextChoices):
    RUNNING = "running", "Running"
    CLOSED = "closed", "Closed"


class Light(models.TextChoices):
    DARK = "dark", "Dark"
    LIGHT = "light", "Light"


class StorageCategory(models.TextChoices):
    """ICH Q1E's storage categories; which one decides how far a shelf life may be extrapolated."""

    ROOM_TEMPERATURE = "room_temperature", "Room temperature"
    REFRIGERATED = "refrigerated", "Refrigerated"
    FROZEN = "frozen", "Frozen"


class OffsetUnit(models.TextChoices):
    DAYS = "days", "Days"
    MONTHS = "months", "Months"


class StabilityStudy(models.Model):
    code = models.CharField(max_length=60, unique=True)
    title = models.CharField(max_length=200)
    product = models.ForeignKey("analyses.Product", on_delete=models.PROTECT, related_name="stability_studies")
    lots = models.ManyToManyField("analyses.Lot", related_name="stability_studies")
    started_on = models.DateField()
    storage_temperature_c = models.FloatField(help_text="labelled storage temperature the shelf life is claimed for")
    storage_category = models.CharField(
        max_length=20, choices=StorageCategory.choices, default=StorageCategory.ROOM_TEMPERATURE,
        help_text="ICH Q1E storage category of the label; decides the extrapolation allowed",
    )
    claimed_shelf_life_months = models.FloatField()
    state = models.CharField(max_length=16, choices=StudyState.choices, default=StudyState.RUNNING)
    evaluation = models.JSONField(null=True, blank=True, help_text="latest evaluation (stability_study_evaluate)")
    evaluated_at = models.DateTimeField(null=True, blank=True)
    created_by = models.ForeignKey(settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+")
    created_at = models.DateTimeField()

    class Meta:
        ordering = ["-created_at", "-id"]
        verbose_name_plural = "stability studies"
        permissions = [("manage_stability_study", "Can create and close stability studies")]

    def __str__(self) -> str:
        return self.code


class StorageCondition(models.Model):
    study = models.ForeignKey(StabilityStudy, on_delete=models.CASCADE, related_name="conditions")
    temperature_c = models.FloatField()
    light = models.CharField(max_length=8, choices=Light.choices, default=Light.DARK)

    class Meta:
        ordering = ["study_id", "temperature_c", "light"]
        constraints = [
            models.UniqueConstraint(fields=["study", "temperature_c", "light"], name="storage_condition_unique"),
        ]

    def __str__(self) -> str:
        return f"{self.temperature_c:g} °C, {self.light}"


class StudyAttribute(models.Model):
    """A method tested at every pull, with its acceptance limit for the study."""

    study = models.ForeignKey(StabilityStudy, on_delete=models.CASCADE, related_name="attributes")
    method_code = models.CharField(max_length=40)
    minimum = models.FloatField(null=True, blank=True)
    maximum = models.FloatField(null=True, blank=True)
    significant_change = models.FloatField(
        null=True, blank=True,
        help_text="a change from the initial value larger than this (result unit) at the accelerated or "
        "intermediate condition is a significant change (ICH Q1E); the limits count in any case",
    )

    class Meta:
        ordering = ["study_id", "method_code"]
        constraints = [models.UniqueConstraint(fields=["study", "method_code"], name="study_attribute_unique")]

    def __str__(self) -> str:
        return f"{self.method_code} [{self.minimum}, {self.maximum}]"

    @property
    def shelf_life_limit(self) -> tuple[float, str]:
        """The limit shelf life is judged against and its side: the maximum if set (e.g. PV),
        else the minimum."""
        return (self.maximum, "upper") if self.maximum is not None else (self.minimum, "lower")


class PullPoint(models.Model):
    """One pull: a lot under a condition at a nominal time after the study start."""

    study = models.ForeignKey(StabilityStudy, on_delete=models.CASCADE, related_name="pull_points")
    condition = models.ForeignKey(StorageCondition, on_delete=models.CASCADE, related_name="pull_points")
    lot = models.ForeignKey("analyses.Lot", on_delete=models.PROTECT, related_name="pull_points")
    offset = models.PositiveIntegerField()
    offset_unit = models.CharField(max_length=8, choices=OffsetUnit.choices)
    elapsed_months = models.FloatField(help_text="nominal time since the start, in months, for the regressions")
    due_on = models.DateField()
    sample = models.OneToOneField(
        "analyses.Sample", null=True, blank=True, on_delete=models.PROTECT, related_name="pull_point"
    )
    pulled_at = models.DateTimeField(null=True, blank=True)
    overdue_since = models.DateField(null=True, blank=True, help_text="set when the scheduler found it overdue")

    class Meta:
        ordering = ["study_id", "due_on", "condition_id", "lot_id"]
        constraints = [
            models.UniqueConstraint(
                fields=["condition", "lot", "offset", "offset_unit"], name="pull_point_unique"
            ),
        ]
        indexes = [models.Index(fields=["due_on"], name="pull_point_due_idx")]

    def __str__(self) -> str:
        return f"{self.study_id}: {self.offset} {self.offset_unit} @ {self.condition_id} lot {self.lot_id}"
