"""Out-of-specification investigations."""
from __future__ import annotations

from rest_framework import serializers

from analyses.api.serializers.common import StrictSerializer, TextField, username_field
from analyses.api.serializers.lots import password_field
from analyses.api.serializers.states import ConclusionField, InvestigationStateField
from analyses.models import Conclusion, Investigation, InvestigationState


class InvestigationSerializer(serializers.ModelSerializer):
    lot_code = serializers.CharField(source="lot.code", read_only=True)
    product_code = serializers.CharField(source="lot.product.code", read_only=True)
    sample = serializers.IntegerField(source="test.sample_id", read_only=True)
    sample_label = serializers.CharField(source="test.sample.label", read_only=True)
    method_code = serializers.CharField(source="test.method_code", read_only=True)
    reported = serializers.CharField(source="test.reported", read_only=True)
    unit = serializers.CharField(source="test.unit", read_only=True)
    minimum = serializers.CharField(source="test.specification_line.minimum", read_only=True)
    maximum = serializers.CharField(source="test.specification_line.maximum", read_only=True)
    state = InvestigationStateField(choices=InvestigationState.choices, read_only=True)
    conclusion = ConclusionField(choices=Conclusion.choices, read_only=True, allow_null=True, help_text="null while open")
    opened_by = username_field("opened_by")
    closed_by = username_field("closed_by")

    class Meta:
        model = Investigation
        fields = [
            "id", "lot", "lot_code", "product_code", "test", "sample", "sample_label", "method_code", "reported",
            "unit", "minimum", "maximum", "state", "opened_by", "opened_at", "conclusion", "findings",
            "closed_by", "closed_at", "retest",
        ]
        read_only_fields = fields


class InvestigationCloseSerializer(StrictSerializer):
    conclusion = ConclusionField(
        choices=Conclusion.choices,
        help_text="confirmed: the lot is rejected; lab_error: the result is invalidated and a retest created",
    )
    findings = TextField(help_text="What the investigation found; kept in the audit trail")
    password = password_field()
    password.help_text = (
        "Needed when the conclusion is confirmed and the lot is open (the closing rejects the lot and is signed "
        "as a rejection is): the QA user's own password, re-entered"
    )
