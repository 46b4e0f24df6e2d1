"""Results: entry one at a time or in bulk, corrections, history."""
from __future__ import annotations

from rest_framework import serializers

from analyses.api.serializers.common import StrictSerializer, TextField, username_field
from analyses.models import Result, Test

INPUTS_HELP = (
    'Input name to value, as the method plugin defines them (see /api/methods/{code}/): a number in the '
    'default unit or a quantity string such as "2015 mg". Kept exactly as received. Send strings to keep the '
    'digits as written, e.g. "1.30": a JSON number 1.30 is read as 1.3 before it reaches the service.'
)


class ResultSerializer(serializers.ModelSerializer):
    entered_by = username_field("entered_by")

    class Meta:
        model = Result
        fields = [
            "id", "test", "replicate", "version", "status", "inputs", "value", "value_exact", "reported", "unit",
            "method_code", "method_version", "verdict", "duplicate_check", "supersedes", "correction_reason",
            "status_reason", "entered_by", "entered_at",
        ]
        read_only_fields = fields


class ResultRecordSerializer(StrictSerializer):
    test = serializers.PrimaryKeyRelatedField(queryset=Test.objects.all())
    inputs = serializers.DictField(help_text=INPUTS_HELP)
    replicate = serializers.IntegerField(required=False, min_value=1, help_text="Default: the next free replicate")


class BulkResultItemSerializer(StrictSerializer):
    test = serializers.IntegerField(help_text="Test id")
    inputs = serializers.DictField(help_text=INPUTS_HELP)
    replicate = serializers.IntegerField(required=False, min_value=1, help_text="Default: the next free replicate")
    idempotency_key = TextField(
        required=False, max_length=100,
        help_text="Per item; without it, the request's Idempotency-Key header plus the item's position is used",
    )


class ResultRecordBulkSerializer(StrictSerializer):
    results = BulkResultItemSerializer(many=True, allow_empty=False, max_length=500)


class ResultCorrectSerializer(StrictSerializer):
    inputs = serializers.DictField(help_text=INPUTS_HELP)
    reason = TextField(help_text="Why the result is corrected; kept with the new version")
