"""Lists on the row path render each row exactly as the serializer renders the instance, and a
serializer whose fields a row cannot give exactly is refused, never rendered otherwise."""
from __future__ import annotations

import datetime as dt

import pytest
from django.core.exceptions import ImproperlyConfigured
from django.utils import timezone
from rest_framework import serializers

from analyses.api.serializers.rows import RowSerializer
from analyses.api.serializers.samples import SampleSerializer, SampleTestSerializer
from analyses.api.serializers.testing import TestSerializer
from analyses.models import Result, ResultStatus, Sample, SampleState, TestState, TestUncertainty
from analyses.selectors.samples import sample_list, with_test_rows
from analyses.selectors.tests import test_list, with_usernames
from analyses.selectors.uncertainty import with_mean_expanded_rows, with_mean_uncertainty
from tests.factories import SampleFactory, SpecificationFactory, TestFactory, UserFactory

pytestmark = pytest.mark.django_db


def _with_mean_u(test, *, stale: bool = False) -> None:
    """Two current replicates and the stored budget of their mean (invented); ``stale``: one
    replicate corrected since, so the budget is no longer of the current replicates."""
    replicates = [
        Result.objects.create(
            test=test, replicate=n, inputs={"x": n}, value=0.35, reported="0.35", unit="mg KOH/g", method_code="av",
            method_version="1.0", verdict="pass", entered_by=UserFactory(), entered_at=timezone.now(),
        )
        for n in (1, 2)
    ]
    TestUncertainty.objects.create(
        test=test, results=[r.pk for r in replicates], budget={"terms": []}, combined=0.0081, expanded="0.017",
        source="invented", computed_at=timezone.now(),
    )
    if stale:
        Result.objects.filter(pk=replicates[1].pk).update(status=ResultStatus.SUPERSEDED)


@pytest.fixture
def varied_tests():
    """Tests that show every kind of value a row may hold: none set yet, a held sample with its
    reason, overdue and not, a retest, reviewed, the mean's U fresh and stale."""
    held = SampleFactory(state=SampleState.ON_HOLD, resume_state=SampleState.RECEIVED, state_reason="drum leaking")
    today = timezone.localdate()
    pending = TestFactory()
    late = TestFactory(state=TestState.ASSIGNED, assignee=UserFactory(), assigned_at=timezone.now(),
                       due_on=today - dt.timedelta(days=2), priority=1)
    held_late = TestFactory(sample=held, due_on=today - dt.timedelta(days=5))
    fresh = TestFactory(state=TestState.RESULT_ENTERED, assignee=UserFactory(), unit="mg KOH/g", reported="0.35",
                        value=0.35, value_exact="0.35", verdict="pass", review_warnings=["outside the validated range"],
                        duplicate_check={"difference": "0.01", "limit": "0.05", "passed": True})
    _with_mean_u(fresh)
    stale = TestFactory(state=TestState.ACCEPTED, assignee=UserFactory(), reviewed_by=UserFactory(),
                        reviewed_at=timezone.now(), review_note="fine", retest_of=pending, unit="mg KOH/g")
    _with_mean_u(stale, stale=True)
    return [pending, late, held_late, fresh, stale]


def test_a_test_row_renders_as_its_instance(varied_tests):
    instances = list(with_mean_uncertainty(test_list().select_related("reviewed_by")))
    rows = list(with_usernames(test_list()).values(*TestSerializer.row_lookups()))
    with_mean_expanded_rows(rows)
    from_rows = TestSerializer(rows, many=True).data
    assert from_rows == TestSerializer(instances, many=True).data
    assert [list(row) for row in from_rows] == [list(TestSerializer.Meta.fields)] * len(varied_tests)
    shown = {row["id"]: row for row in from_rows}
    fresh, stale = varied_tests[3], varied_tests[4]
    assert shown[fresh.pk]["mean_uncertainty"] == {"expanded": "0.017", "coverage_factor": 2, "unit": "mg KOH/g"}
    assert shown[stale.pk]["mean_uncertainty"] is None
    assert shown[varied_tests[1].pk]["is_overdue"] is True
    assert shown[varied_tests[2].pk]["is_overdue"] is False  # held: waits on purpose
    assert shown[varied_tests[2].pk]["hold_reason"] == "drum leaking"


def test_a_sample_row_renders_as_its_instance(varied_tests):
    SampleFactory()  # no tests, no specification, never received
    received = SampleFactory(specification=SpecificationFactory(), received_by=UserFactory(), received_at=timezone.now(),
                             condition_on_receipt="sealed", storage_place="B2", taken_at=timezone.now())
    TestFactory(sample=received)
    instances = list(sample_list())
    rows = list(sample_list().values(*SampleSerializer.row_lookups()))
    with_test_rows(rows, SampleTestSerializer.row_lookups())
    assert SampleSerializer(rows, many=True).data == SampleSerializer(instances, many=True).data
    assert len(rows) == Sample.objects.count()


class _CrossesANullableRelation(RowSerializer):
    # DRF leaves this field out when the sample was never received; a row would say null
    received_by_email = serializers.CharField(source="received_by.email", read_only=True)

    class Meta:
        model = Sample
        fields = ["id", "received_by_email"]


class _ReadsAProperty(RowSerializer):
    standing = serializers.CharField(source="lot.standing", read_only=True)

    class Meta:
        model = Sample
        fields = ["id", "standing"]


class _MethodWithoutRow(RowSerializer):
    shout = serializers.SerializerMethodField()

    class Meta:
        model = Sample
        fields = ["id", "shout"]

    def get_shout(self, sample) -> str:
        return sample.label.upper()


class _CrossesAnAttname(RowSerializer):
    # "lot_id" is the key's number: an instance has no lot_id.code to read
    lot_code = serializers.CharField(source="lot_id.code", read_only=True)

    class Meta:
        model = Sample
        fields = ["id", "lot_code"]


@pytest.mark.parametrize("serializer_class", [_CrossesANullableRelation, _ReadsAProperty, _MethodWithoutRow, _CrossesAnAttname])
def test_a_field_a_row_cannot_give_exactly_is_refused(serializer_class):
    with pytest.raises(ImproperlyConfigured):
        serializer_class.row_lookups()


class _KeyByAttname(RowSerializer):
    lot_key = serializers.IntegerField(source="lot_id", read_only=True)

    class Meta:
        model = Sample
        fields = ["id", "lot_key"]


def test_a_key_named_by_its_attname_is_read_as_its_column(varied_tests):
    assert _KeyByAttname.row_lookups() == ["id", "lot_id"]
    instances = list(Sample.objects.order_by("pk"))
    rows = list(Sample.objects.order_by("pk").values(*_KeyByAttname.row_lookups()))
    assert _KeyByAttname(rows, many=True).data == _KeyByAttname(instances, many=True).data
