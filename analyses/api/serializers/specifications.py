"""Specifications and their lines."""
from __future__ import annotations

from rest_framework import serializers

from analyses.api.serializers.common import StrictSerializer, TextField, username_field
from analyses.models import Comparison, DecisionRule, Product, Specification, SpecificationLine


class SpecificationLineSerializer(serializers.ModelSerializer):
    class Meta:
        model = SpecificationLine
        fields = [
            "id", "position", "method_code", "unit", "minimum", "maximum", "comparison",
            "release_critical", "turnaround_days", "limits_source", "basis", "decision_rule", "guard_band_multiple",
        ]
        read_only_fields = fields


class SpecificationSerializer(serializers.ModelSerializer):
    product_code = serializers.CharField(source="product.code", read_only=True)
    created_by = username_field("created_by")
    approved_by = username_field("approved_by")
    lines = SpecificationLineSerializer(many=True, read_only=True)

    class Meta:
        model = Specification
        fields = [
            "id", "product", "product_code", "version", "status", "effective_from", "note", "revised_from",
            "created_by", "created_at", "approved_by", "approved_at", "lines",
        ]
        read_only_fields = fields


LIMIT_HELP = (
    'A decimal number written as the limit should read ("0.6", "189"); its places matter for the rounding '
    'comparison. Kept in plain notation ("1E-7" is stored as "0.0000001"), at most 40 characters.'
)


class SpecificationLineInputSerializer(StrictSerializer):
    """One line: a method with limits, or with ``codex_oil_type`` to take the method
    plugin's Codex default limits for that oil type instead."""

    method = TextField(help_text="Method plugin code, e.g. av, pv, iv, sv, ffa")
    minimum = serializers.CharField(required=False, allow_blank=True, allow_null=True, help_text=LIMIT_HELP)
    maximum = serializers.CharField(required=False, allow_blank=True, allow_null=True, help_text=LIMIT_HELP)
    codex_oil_type = TextField(
        required=False, allow_blank=True,
        help_text="Instead of limits: the oil type whose Codex default limits the plugin carries (see /api/methods/)",
    )
    release_critical = serializers.BooleanField(required=False, help_text="Default true")
    comparison = serializers.ChoiceField(choices=Comparison.choices, required=False, help_text="ASTM E29 method; default absolute")
    turnaround_days = serializers.IntegerField(required=False, min_value=0, max_value=365, help_text="Default 3")
    decision_rule = serializers.ChoiceField(
        choices=DecisionRule.choices, required=False,
        help_text=(
            "How U enters the verdict (ILAC G8:09/2019): simple (default), guard_band (w = guard_band_multiple x U), "
            "or non_binary (pass / conditional pass / conditional fail / fail; needs the lab's opt-in)"
        ),
    )
    guard_band_multiple = serializers.CharField(
        required=False, allow_blank=True, help_text='w = this x U (k = 2), a decimal above 0; default "1" (w = U)'
    )
    basis = serializers.CharField(
        required=False, allow_blank=True,
        help_text=(
            "Where the method has one (ffa: oleic, palmitic, lauric): what results are expressed as; the unit follows "
            '("% as palmitic"). Default: the conventional basis of the Codex oil type or the product\'s oil type, else oleic'
        ),
    )


class SpecificationCreateSerializer(StrictSerializer):
    product = serializers.PrimaryKeyRelatedField(queryset=Product.objects.all())
    effective_from = serializers.DateField()
    note = TextField(required=False, allow_blank=True, default="")
    lines = SpecificationLineInputSerializer(many=True, allow_empty=False)


class SpecificationLinesSerializer(StrictSerializer):
    lines = SpecificationLineInputSerializer(many=True, allow_empty=False)


class SpecificationReviseSerializer(StrictSerializer):
    effective_from = serializers.DateField()
    note = TextField(required=False, allow_blank=True, default="")
    lines = SpecificationLineInputSerializer(
        many=True, allow_empty=False, required=False, help_text="Omit to copy the revised version's lines"
    )
