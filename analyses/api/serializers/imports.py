"""Import mappings and imported files."""
from __future__ import annotations

from rest_framework import serializers

from analyses.api.serializers.common import StrictSerializer, TextField, enum_field_class, username_field
from analyses.models import ImportLayout, ImportMapping, ResultImport

ImportLayoutField = enum_field_class("ImportLayoutEnum", ImportLayout.choices)


class ImportMappingSerializer(serializers.ModelSerializer):
    layout = ImportLayoutField(choices=ImportLayout.choices)
    columns = serializers.DictField(child=serializers.CharField())
    extra_inputs = serializers.DictField(child=serializers.CharField())
    default_instruments = serializers.ListField(child=serializers.CharField())
    created_by = username_field("created_by")

    class Meta:
        model = ImportMapping
        fields = ["id", "name", "layout", "columns", "extra_inputs", "default_instruments", "created_by", "created_at"]


class ImportMappingCreateSerializer(StrictSerializer):
    name = TextField(max_length=80)
    layout = ImportLayoutField(choices=ImportLayout.choices)
    columns = serializers.DictField(child=TextField(), help_text='role -> column heading, e.g. {"titre": "V (mL)"}')
    extra_inputs = serializers.DictField(child=TextField(), required=False, default=dict,
                                         help_text='method input -> column heading, e.g. {"fatty_acid_basis": "Basis"}')
    default_instruments = serializers.ListField(child=TextField(), required=False, default=list,
                                                help_text="asset ids used for every row, e.g. the titrator and the balance")


class ResultImportSerializer(serializers.ModelSerializer):
    mapping = serializers.CharField(source="mapping.name", read_only=True)
    imported_by = username_field("imported_by")
    results = serializers.ListField(source="result_ids", child=serializers.IntegerField(), read_only=True)

    class Meta:
        model = ResultImport
        fields = ["id", "file_name", "sha256", "size_bytes", "mapping", "rows", "results", "imported_by", "imported_at"]


class ResultImportUploadSerializer(StrictSerializer):
    file = serializers.FileField(help_text="the export, .csv (UTF-8) or .xlsx")
    mapping = TextField(help_text="the import mapping's name")
