"""Stability studies: the protocol in, the study with its latest evaluation out."""
from __future__ import annotations

from rest_framework import serializers

from analyses.api.serializers.common import StrictSerializer, TextField, enum_field_class, username_field
from analyses.models import Light, Lot, OffsetUnit, Product, PullPoint, StabilityStudy, StorageCategory, StudyState

LightField = enum_field_class("LightEnum", Light.choices)
StorageCategoryField = enum_field_class("StorageCategoryEnum", StorageCategory.choices)
OffsetUnitField = enum_field_class("OffsetUnitEnum", OffsetUnit.choices)
StudyStateField = enum_field_class("StudyStateEnum", StudyState.choices)


class ConditionInSerializer(StrictSerializer):
    temperature_c = serializers.FloatField(min_value=-40, max_value=120)
    light = LightField(choices=Light.choices, default=Light.DARK)


class PullInSerializer(StrictSerializer):
    offset = serializers.IntegerField(min_value=0, max_value=7300, help_text="Days (up to 7300) or months (up to 240) after the start")
    unit = OffsetUnitField(choices=OffsetUnit.choices, default=OffsetUnit.MONTHS)


class AttributeInSerializer(StrictSerializer):
    method_code = TextField(max_length=40)
    minimum = serializers.FloatField(required=False, allow_null=True, default=None)
    maximum = serializers.FloatField(required=False, allow_null=True, default=None, help_text="e.g. PV 10 meq O2/kg")
    significant_change = serializers.FloatField(
        required=False, allow_null=True, default=None,
        help_text="A change from the initial value larger than this (result unit) at the accelerated or intermediate "
        "condition is a significant change (ICH Q1E); a result beyond the limits is one in any case",
    )


class StudyCreateSerializer(StrictSerializer):
    code = TextField(max_length=60)
    title = TextField(max_length=200)
    product = serializers.PrimaryKeyRelatedField(queryset=Product.objects.all())
    lots = serializers.PrimaryKeyRelatedField(queryset=Lot.objects.all(), many=True, allow_empty=False)
    started_on = serializers.DateField()
    storage_temperature_c = serializers.FloatField(min_value=-40, max_value=120, help_text="Labelled storage temperature")
    storage_category = StorageCategoryField(
        choices=StorageCategory.choices, required=False, default=None, allow_null=True,
        help_text="ICH Q1E storage category; decides how far the shelf life may be extrapolated. Defaults to the "
        "category of the storage temperature (at or below -10 °C frozen, at or below 10 °C refrigerated); "
        "may be stricter than that, not more permissive",
    )
    claimed_shelf_life_months = serializers.FloatField(min_value=0.1)
    conditions = ConditionInSerializer(many=True, allow_empty=False)
    pull_points = PullInSerializer(many=True, allow_empty=False)
    attributes = AttributeInSerializer(many=True, allow_empty=False)

    def validate(self, data):
        data["product"] = data["product"].pk
        data["lots"] = [lot.pk for lot in data["lots"]]
        return data


class ConditionSerializer(serializers.Serializer):
    id = serializers.IntegerField()
    temperature_c = serializers.FloatField()
    light = LightField(choices=Light.choices)


class AttributeSerializer(serializers.Serializer):
    method_code = serializers.CharField()
    minimum = serializers.FloatField(allow_null=True)
    maximum = serializers.FloatField(allow_null=True)
    significant_change = serializers.FloatField(allow_null=True)


class StudySerializer(serializers.ModelSerializer):
    product_code = serializers.CharField(source="product.code", read_only=True)
    lots = serializers.SlugRelatedField(slug_field="code", many=True, read_only=True)
    conditions = ConditionSerializer(many=True, read_only=True)
    attributes = AttributeSerializer(many=True, read_only=True)
    state = StudyStateField(choices=StudyState.choices, read_only=True)
    created_by = username_field("created_by")
    storage_category = StorageCategoryField(choices=StorageCategory.choices, read_only=True)
    predicted_shelf_life_months = serializers.SerializerMethodField()
    extrapolation_branch = serializers.SerializerMethodField(
        help_text="The ICH Q1E Appendix A branch of the latest evaluation (its reason is in evaluation.extrapolation)"
    )
    evaluation = serializers.JSONField(
        read_only=True,
        help_text="Kinetics, ICH Q1E and Arrhenius per attribute and condition; extrapolation: the Appendix A branch, "
        "its section, reason and limits, and the significant change found at the accelerated and intermediate conditions",
    )

    class Meta:
        model = StabilityStudy
        fields = [
            "id", "code", "title", "product", "product_code", "lots", "started_on", "storage_temperature_c",
            "storage_category", "claimed_shelf_life_months", "state", "conditions", "attributes",
            "predicted_shelf_life_months", "extrapolation_branch", "evaluated_at", "evaluation", "created_by", "created_at",
        ]
        read_only_fields = fields

    def get_predicted_shelf_life_months(self, study: StabilityStudy) -> float | None:
        return (study.evaluation or {}).get("predicted_shelf_life_months")

    def get_extrapolation_branch(self, study: StabilityStudy) -> str | None:
        return ((study.evaluation or {}).get("extrapolation") or {}).get("branch")


class PullPointSerializer(serializers.ModelSerializer):
    lot = serializers.CharField(source="lot.code", read_only=True)
    temperature_c = serializers.FloatField(source="condition.temperature_c", read_only=True)
    light = LightField(choices=Light.choices, source="condition.light", read_only=True)
    offset_unit = OffsetUnitField(choices=OffsetUnit.choices, read_only=True)
    sample = serializers.CharField(source="sample.label", read_only=True, allow_null=True, default=None)

    class Meta:
        model = PullPoint
        fields = ["id", "lot", "condition", "temperature_c", "light", "offset", "offset_unit", "elapsed_months",
                  "due_on", "sample", "pulled_at", "overdue_since"]
        read_only_fields = fields
