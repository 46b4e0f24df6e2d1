"""Alerts and control baselines."""
from __future__ import annotations

from drf_spectacular.utils import extend_schema_field
from rest_framework import serializers

from analyses.api.serializers.common import StrictSerializer, TextField, enum_field_class, username_field
from analyses.services.alert_texts import alert_chart_url, alert_rule_in_words
from analyses.models import Alert, AlertSeverity, AlertSource, AlertState, BaselineSource, ControlBaseline, SeriesKind

AlertStateField = enum_field_class("AlertStateEnum", AlertState.choices)
AlertSeverityField = enum_field_class("AlertSeverityEnum", AlertSeverity.choices)
AlertSourceField = enum_field_class("AlertSourceEnum", AlertSource.choices)
SeriesKindField = enum_field_class("SeriesKindEnum", SeriesKind.choices)
BaselineSourceField = enum_field_class("BaselineSourceEnum", BaselineSource.choices)


class AlertSerializer(serializers.ModelSerializer):
    source = AlertSourceField(choices=AlertSource.choices, read_only=True)
    severity = AlertSeverityField(choices=AlertSeverity.choices, read_only=True)
    state = AlertStateField(choices=AlertState.choices, read_only=True)
    acknowledged_by = username_field("acknowledged_by")
    product_code = serializers.CharField(source="product.code", read_only=True, allow_null=True, default=None)
    lot_code = serializers.CharField(source="lot.code", read_only=True, allow_null=True, default=None)
    study_code = serializers.CharField(source="study.code", read_only=True, allow_null=True, default=None)
    rule_in_words = serializers.SerializerMethodField(help_text='The rule that fired, in words, e.g. "10-x: 10 consecutive results above the mean"')
    chart_url = serializers.SerializerMethodField(help_text="Absolute link to the PNG chart the alert is about, or null")

    class Meta:
        model = Alert
        fields = [
            "id", "source", "rule", "rule_in_words", "severity", "series_key", "message", "chart_url", "points", "method_code", "product",
            "product_code", "lot", "lot_code", "study", "study_code", "raised_at", "state", "acknowledged_by",
            "acknowledged_at", "acknowledgement", "emailed_at", "webhook_delivered_at", "webhook_attempts",
        ]
        read_only_fields = fields


    def get_rule_in_words(self, alert: Alert) -> str:
        return alert_rule_in_words(alert)

    @extend_schema_field(serializers.URLField(allow_null=True))
    def get_chart_url(self, alert: Alert) -> str | None:
        return alert_chart_url(alert)


class AcknowledgeSerializer(StrictSerializer):
    comment = TextField(help_text="What QA found or did; kept in the audit trail")


class BaselineSerializer(serializers.ModelSerializer):
    kind = SeriesKindField(choices=SeriesKind.choices, read_only=True)
    source = BaselineSourceField(choices=BaselineSource.choices, read_only=True)
    set_by = username_field("set_by")

    class Meta:
        model = ControlBaseline
        fields = ["id", "series_key", "kind", "method_code", "mean", "sd", "n_points", "source", "set_by", "set_at"]
        read_only_fields = fields


class BaselineInSerializer(StrictSerializer):
    series_key = TextField(
        max_length=120,
        help_text="qc:<lot id>:<method> or production:<product id>:<method>; the lot or product must exist and the "
        "method be registered (a 400 naming series_key otherwise), though the series may have no results yet",
    )
    mean = serializers.FloatField()
    sd = serializers.FloatField(help_text="Above 0")
    reason = TextField(required=False, allow_blank=True, default="")


class SeriesSerializer(serializers.Serializer):
    series_key = serializers.CharField()
    kind = SeriesKindField(choices=SeriesKind.choices)
    method_code = serializers.CharField()
    results = serializers.IntegerField()
    baseline = serializers.DictField(allow_null=True)
