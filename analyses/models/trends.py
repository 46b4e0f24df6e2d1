"""Control-chart baselines and the alerts raised by trend rules and stability studies."""
from __future__ import annotations

from django.conf import settings
from django.db import models


class SeriesKind(models.TextChoices):
    QC_CHECK = "qc", "QC check sample series (Westgard)"
    PRODUCTION = "production", "Production results (Nelson, EWMA, out-of-trend)"


class BaselineSource(models.TextChoices):
    ESTABLISHED = "established", "Established from the first results of the series"
    ENTERED = "entered", "Entered by QA"


class ControlBaseline(models.Model):
    """Mean and SD of one series, from its first results or entered by QA. The series key
    is "qc:<lot id>:<method>" or "production:<product id>:<method>"."""

    series_key = models.CharField(max_length=120, unique=True)
    kind = models.CharField(max_length=16, choices=SeriesKind.choices)
    method_code = models.CharField(max_length=40)
    mean = models.FloatField()
    sd = models.FloatField()
    n_points = models.PositiveIntegerField(default=0)
    source = models.CharField(max_length=16, choices=BaselineSource.choices)
    set_by = models.ForeignKey(settings.AUTH_USER_MODEL, null=True, blank=True, on_delete=models.PROTECT, related_name="+")
    set_at = models.DateTimeField()

    class Meta:
        ordering = ["series_key"]
        permissions = [("set_control_baseline", "Can enter control-chart baselines (QA)")]

    def __str__(self) -> str:
        return f"{self.series_key}: {self.mean:g} ± {self.sd:g}"


class AlertSource(models.TextChoices):
    TREND = "trend", "Trend rule"
    STABILITY = "stability", "Stability study"
    TRACEABILITY = "traceability", "Reagent or instrument falling due"
    POST_RELEASE = "post_release", "Finding on a released lot"


class AlertSeverity(models.TextChoices):
    WARNING = "warning", "Warning"
    ALARM = "alarm", "Alarm"


class AlertState(models.TextChoices):
    OPEN = "open", "Open"
    ACKNOWLEDGED = "acknowledged", "Acknowledged"


class Alert(models.Model):
    """One alert per rule-violation episode; ``episode_key`` keeps a later scan from
    raising it again. Notification state is kept so a failed webhook is retried, never lost."""

    source = models.CharField(max_length=16, choices=AlertSource.choices)
    rule = models.CharField(max_length=60)
    severity = models.CharField(max_length=8, choices=AlertSeverity.choices, default=AlertSeverity.ALARM)
    series_key = models.CharField(max_length=120)
    episode_key = models.CharField(max_length=255, unique=True)
    message = models.TextField()
    points = models.JSONField(default=list, help_text="the points involved: test ids, values, times")
    method_code = models.CharField(max_length=40, blank=True)
    product = models.ForeignKey("analyses.Product", null=True, blank=True, on_delete=models.PROTECT, related_name="alerts")
    lot = models.ForeignKey("analyses.Lot", null=True, blank=True, on_delete=models.PROTECT, related_name="alerts")
    study = models.ForeignKey("analyses.StabilityStudy", null=True, blank=True, on_delete=models.PROTECT, related_name="alerts")
    raised_at = models.DateTimeField()
    state = models.CharField(max_length=16, choices=AlertState.choices, default=AlertState.OPEN)
    acknowledged_by = models.ForeignKey(settings.AUTH_USER_MODEL, null=True, blank=True, on_delete=models.PROTECT, related_name="+")
    acknowledged_at = models.DateTimeField(null=True, blank=True)
    acknowledgement = models.TextField(blank=True)
    emailed_at = models.DateTimeField(null=True, blank=True)
    webhook_delivered_at = models.DateTimeField(null=True, blank=True)
    webhook_attempts = models.PositiveIntegerField(default=0)
    webhook_last_error = models.TextField(blank=True)
    notify_after = models.DateTimeField(
        null=True, blank=True, help_text="no delivery attempt before this time (a run holds it, or backs off)"
    )

    class Meta:
        ordering = ["-raised_at", "-id"]
        indexes = [
            models.Index(fields=["state", "raised_at"], name="alert_state_idx"),
            models.Index(fields=["series_key"], name="alert_series_idx"),
        ]
        permissions = [("acknowledge_alert", "Can acknowledge alerts (QA)")]

    def __str__(self) -> str:
        return f"{self.rule} on {self.series_key}"
