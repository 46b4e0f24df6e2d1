"""Tests (one method on one sample): rows of lists and queues, assignment and review."""
from __future__ import annotations

from django.utils import timezone
from drf_spectacular.utils import extend_schema_field
from rest_framework import serializers

from analyses.api.serializers.common import StrictSerializer, username_field
from analyses.api.serializers.rows import Row, RowSerializer
from analyses.api.serializers.states import SampleStateField, TestStateField, VerdictField
from analyses.models import OPEN_TEST_STATES, Priority, SampleState, Test, TestState, Verdict
from analyses.selectors.uncertainty import MEAN_UNCERTAINTY_LOOKUPS, test_mean_expanded


class MeanUncertaintySerializer(serializers.Serializer):
    """The expanded measurement uncertainty of the test's result (the mean of its current replicates)."""

    expanded = serializers.CharField(
        help_text="U, the expanded uncertainty of the mean (GUM, two significant digits rounded up), a decimal string"
    )
    coverage_factor = serializers.IntegerField(help_text="k; U = k x the combined standard uncertainty (k = 2)")
    unit = serializers.CharField(help_text="The unit of U, the result's own")


class TestSerializer(RowSerializer):
    __test__ = False  # not a pytest test class

    sample_label = serializers.CharField(source="sample.label", read_only=True)
    lot = serializers.IntegerField(source="sample.lot_id", read_only=True)
    lot_code = serializers.CharField(source="sample.lot.code", read_only=True)
    product_code = serializers.CharField(source="sample.lot.product.code", read_only=True)
    minimum = serializers.CharField(source="specification_line.minimum", read_only=True)
    maximum = serializers.CharField(source="specification_line.maximum", read_only=True)
    comparison = serializers.CharField(source="specification_line.comparison", read_only=True)
    release_critical = serializers.BooleanField(source="specification_line.release_critical", read_only=True)
    state = TestStateField(choices=TestState.choices, read_only=True)
    verdict = VerdictField(choices=Verdict.choices, read_only=True, allow_null=True, help_text="null until a result is in")
    assignee = username_field("assignee")
    reviewed_by = username_field("reviewed_by")
    is_overdue = serializers.SerializerMethodField(
        help_text="Open and due before today; never while its sample is on hold (see sample_state and hold_reason)"
    )
    sample_state = SampleStateField(
        choices=SampleState.choices, source="sample.state", read_only=True,
        help_text="The sample's state: on_hold means no work on the test until the sample is resumed",
    )
    hold_reason = serializers.SerializerMethodField(help_text="Why the sample is on hold; null unless it is")
    review_warnings = serializers.ListField(
        child=serializers.CharField(), read_only=True,
        help_text="For the reviewer: a result outside the method's validated range, a prescribed blank not run; never a block",
    )
    mean_uncertainty = serializers.SerializerMethodField(
        help_text=(
            "The expanded uncertainty U (k = 2) of the result and its unit, as GET /api/results/<id>/uncertainty/ "
            "gives it for the test's mean; null until every replicate is in (or the method has no budget)"
        )
    )

    class Meta:
        model = Test
        fields = [
            "id", "sample", "sample_label", "sample_state", "hold_reason", "lot", "lot_code", "product_code", "method_code",
            "replicates", "priority", "due_on", "is_overdue", "state", "assignee", "assigned_at", "retest_of",
            "value", "value_exact", "reported", "unit", "mean_uncertainty", "verdict", "duplicate_check", "review_warnings",
            "minimum", "maximum",
            "comparison",
            "release_critical", "reviewed_by", "reviewed_at", "review_note", "created_at",
        ]
        read_only_fields = fields

    # what the row methods read; mean_uncertainty is put on the row by the list's selector
    row_extra_lookups = ("is_overdue", "sample__state", "sample__state_reason", *MEAN_UNCERTAINTY_LOOKUPS)
    # people by subquery, not two joins of the user table (selectors.tests.with_usernames)
    row_columns = {"assignee": "assignee_username", "reviewed_by": "reviewed_by_username"}

    @extend_schema_field(MeanUncertaintySerializer(allow_null=True))
    def get_mean_uncertainty(self, test: Test) -> dict | None:
        return test_mean_expanded(test)

    def get_is_overdue(self, test: Test) -> bool:
        annotated = getattr(test, "is_overdue", None)
        if annotated is not None:
            return bool(annotated)
        held = test.sample.state == SampleState.ON_HOLD
        return test.state in OPEN_TEST_STATES and test.due_on < timezone.localdate() and not held

    @extend_schema_field(serializers.CharField(allow_null=True))
    def get_hold_reason(self, test: Test) -> str | None:
        return test.sample.state_reason if test.sample.state == SampleState.ON_HOLD else None

    def row_mean_uncertainty(self, row: Row) -> dict | None:
        return row["mean_uncertainty"]

    def row_is_overdue(self, row: Row) -> bool:
        return bool(row["is_overdue"])  # every list of tests is annotated (selectors/tests.py)

    def row_hold_reason(self, row: Row) -> str | None:
        return row["sample__state_reason"] if row["sample__state"] == SampleState.ON_HOLD else None


class TestAssignmentSerializer(serializers.ModelSerializer):
    """A test as the assignment left it."""

    __test__ = False

    state = TestStateField(choices=TestState.choices, read_only=True)
    assignee = username_field("assignee")

    class Meta:
        model = Test
        fields = ["id", "sample", "method_code", "state", "assignee", "assigned_at", "priority", "due_on"]
        read_only_fields = fields


class TestAssignSerializer(StrictSerializer):
    __test__ = False

    tests = serializers.ListField(
        child=serializers.IntegerField(min_value=1), allow_empty=False, max_length=500,
        help_text="Test ids; all are assigned or none. An unknown one is a 400 naming its position (`tests.3`)",
    )
    assignee = serializers.IntegerField(help_text="User id of the analyst")
    priority = serializers.ChoiceField(choices=Priority.choices, required=False, allow_null=True)
    due_on = serializers.DateField(required=False, allow_null=True)
