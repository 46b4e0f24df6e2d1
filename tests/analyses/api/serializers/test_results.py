"""ResultSerializer writes its representation out by hand (issue 12: DRF's walk over the fields
was a tenth of a bulk entry); it must give exactly what that walk gives, field for field and
type for type, on results of every kind."""
from __future__ import annotations

import pytest
from django.utils import timezone
from rest_framework import serializers

from analyses.api.serializers.results import ResultSerializer
from analyses.models import Result, ResultInstrument, ResultStatus
from analyses.selectors.api_results import result_rows
from analyses.services.results import result_correct, result_record_bulk_once
from tests.analyses.lab_setup import AV_LOW, AV_LOW_TWIN, AV_TRACE, PV_LOW, PV_TRACE
from tests.factories import UserFactory

pytestmark = pytest.mark.django_db


def _walked(results: list[Result]) -> list[dict]:
    """What DRF's ModelSerializer gives field by field, without the hand-written path."""
    child = ResultSerializer()
    return [serializers.ModelSerializer.to_representation(child, result) for result in results]


def _assert_same(results: list[Result]) -> None:
    shown = ResultSerializer(results, many=True).data
    walked = _walked(results)
    # repr tells a str from a str-valued enum, an int from a float, and the keys' order
    assert repr(list(shown)) == repr(walked)
    assert [list(row) for row in shown] == [list(ResultSerializer.Meta.fields)] * len(results)


def test_results_just_entered_show_as_the_fields_would_show_them(lab, users):
    av, pv = lab.assigned("analyst")
    implausible = {**AV_LOW_TWIN, "sample_volume": "55.0"}  # beyond one filling of a 50 mL burette: an input warning
    batch = result_record_bulk_once(users["analyst"], [
        {"test": av.pk, "inputs": AV_LOW, **AV_TRACE},
        {"test": av.pk, "inputs": implausible, **AV_TRACE},
        {"test": pv.pk, "inputs": PV_LOW, **PV_TRACE},
    ])
    _assert_same(batch.results)  # the objects the service built, as the bulk view shows them
    _assert_same(list(result_rows().filter(pk__in=[r.pk for r in batch.results])))  # read back
    assert any(row["input_warnings"] for row in ResultSerializer(batch.results, many=True).data)
    assert all(len(row["instruments"]) == 2 for row in ResultSerializer(batch.results, many=True).data)


def test_corrected_invalidated_and_bare_results_show_as_the_fields_would_show_them(lab, users):
    av, _ = lab.assigned("analyst")
    [first] = result_record_bulk_once(users["analyst"], [{"test": av.pk, "inputs": AV_LOW, **AV_TRACE}]).results
    fixed = result_correct(users["analyst"], first, inputs=AV_LOW_TWIN, reason="burette read at 1.33 mL")
    # rows no entry writes today (invented): no titrant lot, no instruments, a profile's
    # components, a method no longer registered, an invalidated status with its reason
    bare = Result.objects.create(
        test=av, replicate=2, inputs={"x": "1"}, value=0.35, value_exact="0.35", reported="0.35", unit="mg KOH/g",
        method_code="gone", method_version="0.9", verdict="pass", entered_by=UserFactory(), entered_at=timezone.now(),
        components={"C18:2": {"name": "C18:2", "exact": "52.1", "reported": "52.1", "unit": "%", "decimals": 1,
                              "kind": "measured", "detected": True}},
        status=ResultStatus.INVALIDATED, status_reason="sent back: lab error",
    )
    assert ResultInstrument.objects.filter(result=bare).count() == 0
    rows = list(result_rows().filter(pk__in=[first.pk, fixed.pk, bare.pk]))
    _assert_same(rows)
    shown = {row["id"]: row for row in ResultSerializer(rows, many=True).data}
    assert shown[fixed.pk]["supersedes"] == first.pk
    assert shown[fixed.pk]["correction_reason"] == "burette read at 1.33 mL"
    assert shown[bare.pk]["titrant_lot"] is None and shown[bare.pk]["instruments"] == []
    assert shown[bare.pk]["status"] == "invalidated"


def test_values_and_relations_missing_in_memory_show_as_the_fields_would_show_them(lab, users):
    """No stored row holds them (the columns are not null), but an object in hand may: None
    stays None, and a missing user reads as None."""
    av, _ = lab.assigned("analyst")
    [result] = result_record_bulk_once(users["analyst"], [{"test": av.pk, "inputs": AV_LOW, **AV_TRACE}]).results
    result.value = None
    for name in ("value_exact", "reported", "verdict", "correction_reason", "titrant_concentration"):
        setattr(result, name, None)
    result.entered_by_id = None
    result.entered_at = None
    _assert_same([result])
    [shown] = ResultSerializer([result], many=True).data
    assert shown["entered_by"] is None and shown["value_exact"] is None and shown["entered_at"] is None


def test_entry_times_show_in_the_current_time_zone_and_format_though_each_is_shown_once(lab, users, settings):
    """A batch's results share their entry time, which is shown once and kept: what is kept must
    follow the time zone of the request and the configured format, as the field itself does."""
    av, _ = lab.assigned("analyst")
    batch = result_record_bulk_once(users["analyst"], [{"test": av.pk, "inputs": AV_LOW, **AV_TRACE}])
    in_utc = ResultSerializer(batch.results, many=True).data[0]["entered_at"]
    with timezone.override("Asia/Kolkata"):
        _assert_same(batch.results)
        in_kolkata = ResultSerializer(batch.results, many=True).data[0]["entered_at"]
    assert in_utc.endswith("Z") and in_kolkata.endswith("+05:30")  # the same instant, shown in each zone
    settings.REST_FRAMEWORK = {**settings.REST_FRAMEWORK, "DATETIME_FORMAT": "%Y-%m-%d %H:%M"}
    _assert_same(batch.results)
    assert ResultSerializer(batch.results, many=True).data[0]["entered_at"] == timezone.localtime(
        batch.results[0].entered_at
    ).strftime("%Y-%m-%d %H:%M")


def test_entry_times_equal_as_instants_or_in_a_repeated_hour_are_each_shown_as_the_field_shows_them():
    """Times that compare equal may be shown differently by the field (found by a review): the
    two 01:30 of the night New York's clocks go back, and the same instant in two zones."""
    import datetime as dt
    from zoneinfo import ZoneInfo

    from analyses.api.serializers.results import _shown_time

    new_york = ZoneInfo("America/New_York")
    first, second = (dt.datetime(2021, 11, 7, 1, 30, fold=fold, tzinfo=new_york) for fold in (0, 1))
    same_instant = first.astimezone(dt.UTC)
    field = serializers.DateTimeField()
    for value in (first, second, same_instant, first, second):
        assert _shown_time(value) == field.to_representation(value)
    assert _shown_time(first) != _shown_time(second)


def test_a_list_shows_its_times_in_the_zone_current_when_it_is_shown(lab, users):
    """A serializer looks the time zone up once for all its results; each serializer (each
    request) looks it up anew, so a list shown under another zone shows that zone's times."""
    av, _ = lab.assigned("analyst")
    results = result_record_bulk_once(users["analyst"], [{"test": av.pk, "inputs": AV_LOW, **AV_TRACE}]).results
    field = serializers.DateTimeField()
    for zone in ("Asia/Kolkata", "America/New_York"):
        with timezone.override(zone):
            [row] = ResultSerializer(results, many=True).data
            assert row["entered_at"] == field.to_representation(results[0].entered_at)
            assert row["entered_at"].endswith(("+05:30",) if zone == "Asia/Kolkata" else ("-05:00", "-04:00"))
        _assert_same(results)


def test_a_serializer_used_after_the_zone_changed_leaves_no_wrong_time_for_the_next_request(lab, users):
    """A serializer keeps the zone it looked up first; a time shown by it after the zone changed
    is shown, and cached, in that zone: a later serializer in the changed zone shows its own
    (found by a review: the cache was filled with the changed zone's text under the first one)."""
    from analyses.api.serializers.results import _shown_time_in

    av, _ = lab.assigned("analyst")
    [result] = result_record_bulk_once(users["analyst"], [{"test": av.pk, "inputs": AV_LOW, **AV_TRACE}]).results
    field = serializers.DateTimeField()
    _shown_time_in.cache_clear()
    with timezone.override("Asia/Kolkata"):
        kept = ResultSerializer(many=True)
        kept.child._time_showing()  # the zone looked up first
    with timezone.override("America/New_York"):
        [row] = kept.to_representation([result])
        with timezone.override("Asia/Kolkata"):
            expected = field.to_representation(result.entered_at)
        assert row["entered_at"] == expected  # the zone it kept, consistently
    with timezone.override("Asia/Kolkata"):
        [row] = ResultSerializer([result], many=True).data
        assert row["entered_at"] == field.to_representation(result.entered_at)
    with timezone.override("America/New_York"):
        [row] = ResultSerializer([result], many=True).data
        assert row["entered_at"] == field.to_representation(result.entered_at)
