"""Out-of-specification investigations."""
from __future__ import annotations

from rest_framework import serializers

from analyses.api.serializers.common import StrictSerializer, TextField, username_field
from analyses.api.serializers.lots import password_field
from analyses.api.serializers.states import ConclusionField, InvestigationKindField, InvestigationStateField
from analyses.models import Conclusion, Investigation, InvestigationKind, InvestigationState


class InvestigationSerializer(serializers.ModelSerializer):
    """An out-of-specification investigation: what was found on which lot, and how QA closed it."""

    lot_code = serializers.CharField(source="lot.code", read_only=True)
    lot_standing = serializers.CharField(
        source="lot.standing", read_only=True,
        help_text='The lot\'s state now, in words: open, released, rejected, or "released, under investigation"',
    )
    kind = InvestigationKindField(
        choices=InvestigationKind.choices, read_only=True,
        help_text="release: found before the lot's release, and blocks it; post_release: found on a lot already "
        "released (a retained sample tested after release), closed with no_action or hold_notice",
    )
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
    effect = serializers.CharField(
        read_only=True, allow_null=True,
        help_text='What closing it changed, in words ("lot L-1 is now rejected", "no change to the lot: L-1 stays '
        'released"); null while open',
    )

    class Meta:
        model = Investigation
        fields = [
            "id", "kind", "lot", "lot_code", "lot_standing", "product_code", "test", "sample", "sample_label", "method_code", "reported",
            "unit", "minimum", "maximum", "state", "opened_by", "opened_at", "conclusion", "findings",
            "closed_by", "closed_at", "retest", "effect",
        ]
        read_only_fields = fields


    def to_representation(self, instance):
        data = super().to_representation(instance)
        data["effect"] = data["effect"] or None  # not set yet: null
        return data


class InvestigationCloseSerializer(StrictSerializer):
    """How QA closes an investigation, and why."""

    conclusion = ConclusionField(
        choices=Conclusion.choices,
        help_text="On an open lot: confirmed (the lot is rejected) or lab_error (the result is invalidated and a "
        "retest created). On a released lot: no_action (nothing changes on the lot), hold_notice (the lot is marked "
        "released, under investigation, and QA is alerted) or lab_error where the sample can be retested; "
        "confirmed is refused there",
    )
    findings = TextField(help_text="What the investigation found; kept in the audit trail")
    hold_reason = TextField(
        required=False, allow_blank=True, default="",
        help_text="With hold_notice only, and required there: why the lot is held, shown on the lot and in the alert",
    )
    password = password_field()
    password.help_text = (
        "Needed when the conclusion is confirmed and the lot is open (the closing rejects the lot and is signed "
        "as a rejection is): the QA user's own password, re-entered"
    )
