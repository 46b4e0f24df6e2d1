"""Reagent kinds, titrant lots, standardisations, instruments, calibrations, routine checks
and the impact search."""
from __future__ import annotations

from django.utils import timezone
from rest_framework import serializers

from analyses.api.serializers.common import StrictSerializer, TextField, enum_field_class, username_field
from analyses.models import (
    Calibration,
    CheckKind,
    Instrument,
    InstrumentCheck,
    InstrumentKind,
    ReagentKind,
    ReagentLot,
    Standardisation,
    TitrantSubstance,
)
from analyses.models.reagents import DEFAULT_SPREAD_LIMIT, DEFAULT_SPREAD_SOURCE
from analyses.selectors.traceability import instrument_facts, lot_facts
from analyses.traceability.standardisation import PRIMARY_STANDARDS, STANDARDISED_BASE
from analyses.traceability.usability import instrument_refusal, lot_refusal

SubstanceField = enum_field_class("TitrantSubstanceChoice", TitrantSubstance.choices)
InstrumentKindField = enum_field_class("InstrumentKindChoice", InstrumentKind.choices)
CheckKindField = enum_field_class("CheckKindChoice", CheckKind.choices)
PRIMARY_STANDARD_CHOICES = [(code, s.name) for code, s in PRIMARY_STANDARDS.items()] + [(STANDARDISED_BASE, "a standardised base")]
PrimaryStandardField = enum_field_class("PrimaryStandardChoice", PRIMARY_STANDARD_CHOICES)


class ReagentKindSerializer(serializers.ModelSerializer):
    substance = SubstanceField(choices=TitrantSubstance.choices, read_only=True)
    created_by = username_field("created_by")

    class Meta:
        model = ReagentKind
        fields = [
            "id", "name", "substance", "solvent", "nominal_concentration", "nominal_as_written", "equivalents_per_mole",
            "validity_days", "spread_limit", "spread_limit_source", "created_by", "created_at",
        ]
        read_only_fields = fields


class ReagentKindCreateSerializer(StrictSerializer):
    name = TextField(max_length=120)
    substance = SubstanceField(choices=TitrantSubstance.choices)
    solvent = TextField(max_length=60, required=False, allow_blank=True, default="water")
    nominal_concentration = serializers.CharField(max_length=64, help_text='"0.5 mol/L", "0.1 N" (divided by equivalents_per_mole)')
    equivalents_per_mole = serializers.IntegerField(required=False, default=1)
    validity_days = serializers.IntegerField(help_text="How long a standardisation stays valid (1 = daily)")
    spread_limit = serializers.CharField(required=False, default=DEFAULT_SPREAD_LIMIT, help_text="Relative range of the replicates")
    spread_limit_source = TextField(required=False, default=DEFAULT_SPREAD_SOURCE, max_length=200)


class ReagentKindChangeSerializer(StrictSerializer):
    validity_days = serializers.IntegerField(required=False)
    spread_limit = serializers.CharField(required=False)
    spread_limit_source = TextField(required=False, max_length=200)
    reason = TextField(help_text="Why; kept in the audit trail")


class ReagentLotSerializer(serializers.ModelSerializer):
    kind_name = serializers.CharField(source="kind.name", read_only=True)
    substance = serializers.CharField(source="kind.substance", read_only=True)
    created_by = username_field("created_by")
    current_standardisation = serializers.IntegerField(source="current_standardisation_id", read_only=True, allow_null=True)
    standardisation_valid_until = serializers.DateTimeField(source="current_valid_until", read_only=True, allow_null=True)
    usable = serializers.SerializerMethodField()
    refusal = serializers.SerializerMethodField(help_text="Why entry would refuse it now; null when usable")

    class Meta:
        model = ReagentLot
        fields = [
            "id", "code", "kind", "kind_name", "substance", "prepared_on", "expires_on", "prepared_by",
            "current_standardisation", "standardisation_valid_until", "usable", "refusal", "created_by", "created_at",
        ]
        read_only_fields = fields

    def get_refusal(self, lot) -> str | None:
        return lot_refusal(lot_facts(lot), timezone.now())

    def get_usable(self, lot) -> bool:
        return self.get_refusal(lot) is None


class ReagentLotCreateSerializer(StrictSerializer):
    kind = serializers.PrimaryKeyRelatedField(queryset=ReagentKind.objects.all())
    code = TextField(max_length=60)
    prepared_on = serializers.DateField()
    expires_on = serializers.DateField()
    prepared_by = TextField(max_length=120, help_text="Who prepared it, or the supplier")


class StandardisationSerializer(serializers.ModelSerializer):
    lot_code = serializers.CharField(source="lot.code", read_only=True)
    performed_by = username_field("performed_by")
    balance = serializers.CharField(source="balance.asset_id", read_only=True, allow_null=True)
    burette = serializers.CharField(source="burette.asset_id", read_only=True, allow_null=True)

    class Meta:
        model = Standardisation
        fields = [
            "id", "lot", "lot_code", "primary_standard", "standard_reference", "purity", "purity_uncertainty", "molar_mass",
            "molar_mass_uncertainty", "reference", "replicates", "blank", "balance", "burette", "concentrations",
            "concentration", "uncertainty", "relative_spread", "spread_limit", "performed_by", "performed_at",
            "valid_until", "status", "supersedes", "reason", "status_reason",
        ]
        read_only_fields = fields


class StandardisationRecordSerializer(StrictSerializer):
    primary_standard = PrimaryStandardField(choices=PRIMARY_STANDARD_CHOICES)
    replicates = serializers.ListField(
        child=serializers.DictField(), min_length=2, max_length=20,
        help_text='[{"mass": "0.3888 g", "titre": "18.64"}, ...]; against a standardised base [{"aliquot": "15.00", "titre": ...}]',
    )
    burette = serializers.PrimaryKeyRelatedField(queryset=Instrument.objects.all(), help_text="Burette or automatic titrator")
    balance = serializers.PrimaryKeyRelatedField(queryset=Instrument.objects.all(), required=False, allow_null=True)
    blank = serializers.CharField(required=False, default="0", help_text="mL")
    purity = serializers.CharField(required=False, default="1", help_text="Mass fraction, from the standard's certificate")
    purity_uncertainty = serializers.CharField(required=False, default="0", help_text="Its standard uncertainty")
    standard_reference = TextField(required=False, allow_blank=True, default="", max_length=120)
    reference = serializers.PrimaryKeyRelatedField(
        queryset=Standardisation.objects.all(), required=False, allow_null=True,
        help_text="The base's standardisation (primary_standard = standardised_base)",
    )


class StandardisationSupersedeSerializer(StandardisationRecordSerializer):
    reason = TextField(help_text="Why the previous one is wrong; kept with both")


class InstrumentSerializer(serializers.ModelSerializer):
    kind = InstrumentKindField(choices=InstrumentKind.choices, read_only=True)
    created_by = username_field("created_by")
    calibration = serializers.IntegerField(source="latest_calibration_id", read_only=True, allow_null=True)
    calibration_due_on = serializers.DateField(source="latest_calibration_due_on", read_only=True, allow_null=True)
    last_check = serializers.IntegerField(source="latest_check_id", read_only=True, allow_null=True)
    last_check_passed = serializers.BooleanField(source="latest_check_passed", read_only=True, allow_null=True)
    usable = serializers.SerializerMethodField()
    refusal = serializers.SerializerMethodField(help_text="Why entry would refuse it now; null when usable")

    class Meta:
        model = Instrument
        fields = [
            "id", "asset_id", "kind", "description", "location", "check_every_days", "calibration", "calibration_due_on",
            "last_check", "last_check_passed", "usable", "refusal", "created_by", "created_at",
        ]
        read_only_fields = fields

    def get_refusal(self, instrument) -> str | None:
        return instrument_refusal(instrument_facts(instrument), timezone.now())

    def get_usable(self, instrument) -> bool:
        return self.get_refusal(instrument) is None


class InstrumentCreateSerializer(StrictSerializer):
    asset_id = TextField(max_length=60)
    kind = InstrumentKindField(choices=InstrumentKind.choices)
    location = TextField(required=False, allow_blank=True, default="", max_length=120)
    description = TextField(required=False, allow_blank=True, default="", max_length=200)
    check_every_days = serializers.IntegerField(
        required=False, allow_null=True, help_text="Routine check required this often; default daily for a balance"
    )


class CalibrationSerializer(serializers.ModelSerializer):
    asset_id = serializers.CharField(source="instrument.asset_id", read_only=True)
    recorded_by = username_field("recorded_by")

    class Meta:
        model = Calibration
        fields = [
            "id", "instrument", "asset_id", "calibrated_on", "due_on", "certificate_ref", "passed", "standard_uncertainty",
            "tolerance", "unit", "recorded_by", "recorded_at",
        ]
        read_only_fields = fields


class CalibrationCreateSerializer(StrictSerializer):
    calibrated_on = serializers.DateField()
    due_on = serializers.DateField()
    certificate_ref = TextField(max_length=120)
    passed = serializers.BooleanField()
    standard_uncertainty = serializers.CharField(required=False, allow_blank=True, default="")
    tolerance = serializers.CharField(required=False, allow_blank=True, default="")
    unit = TextField(required=False, allow_blank=True, default="", max_length=20)


class InstrumentCheckSerializer(serializers.ModelSerializer):
    kind = CheckKindField(choices=CheckKind.choices, read_only=True)
    asset_id = serializers.CharField(source="instrument.asset_id", read_only=True)
    performed_by = username_field("performed_by")

    class Meta:
        model = InstrumentCheck
        fields = [
            "id", "instrument", "asset_id", "kind", "reference", "nominal", "measured", "tolerance", "unit", "passed",
            "performed_by", "performed_at",
        ]
        read_only_fields = fields


class InstrumentCheckCreateSerializer(StrictSerializer):
    kind = CheckKindField(choices=CheckKind.choices)
    nominal = serializers.CharField(help_text="g for a check weight, absorbance for a filter")
    measured = serializers.CharField()
    tolerance = serializers.CharField()
    reference = TextField(required=False, allow_blank=True, default="", max_length=120)


class ImpactPeriodSerializer(StrictSerializer):
    # "from" is a Python keyword: declared below
    to = serializers.DateField(required=False, help_text="Last day, inclusive")


ImpactPeriodSerializer._declared_fields["from"] = serializers.DateField(required=False, help_text="First day, inclusive")
