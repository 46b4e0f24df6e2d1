"""Samples and their receipt."""
from __future__ import annotations

from rest_framework import serializers

from analyses.api.serializers.common import StrictSerializer, TextField, username_field
from analyses.api.serializers.rows import RowSerializer
from analyses.api.serializers.states import SampleResumeStateField, SampleStateField, TestStateField, VerdictField
from analyses.models import Lot, Priority, Sample, SampleKind, SampleState, Test, TestState, Verdict


class SampleTestSerializer(RowSerializer):
    """A test as a line of its sample."""

    state = TestStateField(choices=TestState.choices, read_only=True)
    verdict = VerdictField(choices=Verdict.choices, read_only=True, allow_null=True, help_text="null until a result is in")
    assignee = username_field("assignee")

    class Meta:
        model = Test
        fields = ["id", "method_code", "state", "priority", "due_on", "assignee", "reported", "unit", "verdict", "retest_of"]
        read_only_fields = fields


class SampleSerializer(RowSerializer):
    state = SampleStateField(choices=SampleState.choices, read_only=True)
    resume_state = SampleResumeStateField(choices=SampleState.choices, read_only=True)
    lot_code = serializers.CharField(source="lot.code", read_only=True)
    product = serializers.IntegerField(source="lot.product_id", read_only=True)
    product_code = serializers.CharField(source="lot.product.code", read_only=True)
    specification_version = serializers.IntegerField(source="specification.version", read_only=True, allow_null=True)
    registered_by = username_field("registered_by")
    received_by = username_field("received_by")
    tests = SampleTestSerializer(many=True, read_only=True)

    class Meta:
        model = Sample
        fields = [
            "id", "label", "kind", "state", "resume_state", "state_reason", "lot", "lot_code", "product",
            "product_code", "specification", "specification_version", "taken_at", "registered_by", "registered_at",
            "received_by", "received_at", "condition_on_receipt", "storage_place", "tests",
        ]
        read_only_fields = fields


class SampleRegisterSerializer(StrictSerializer):
    lot = serializers.PrimaryKeyRelatedField(queryset=Lot.objects.all())
    kind = serializers.ChoiceField(choices=SampleKind.choices, required=False, default=SampleKind.ROUTINE)
    label = TextField(max_length=80, required=False, help_text='Unique; default "<lot code>-S<n>"')
    taken_at = serializers.DateTimeField(required=False, allow_null=True)


class SampleReceiveSerializer(StrictSerializer):
    condition = TextField(help_text="Condition on receipt (seal, appearance...)")
    storage_place = TextField(max_length=120)
    received_at = serializers.DateTimeField(required=False, allow_null=True, help_text="Default: now")
    priority = serializers.ChoiceField(choices=Priority.choices, required=False, default=Priority.NORMAL)
    due_on = serializers.DateField(
        required=False, allow_null=True, help_text="Default: receipt date + each line's turnaround days"
    )


class RetainTestsSerializer(StrictSerializer):
    """Tests to order on a retained sample of a released lot, and why."""

    methods = serializers.ListField(
        child=TextField(max_length=40), allow_empty=False,
        help_text="Method codes, e.g. [\"av\", \"pv\"]; each needs a line in the specification the lot was released against",
    )
    reason = TextField(help_text="Why the retained sample is tested (a complaint, a periodic check); kept in the audit trail")
