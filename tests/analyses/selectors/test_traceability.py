"""Instruments named by id or asset id, with their latest calibration and routine check
(analyses/selectors/traceability.py): on PostgreSQL one text of SQL, elsewhere the queryset;
the two give the same instruments with the same facts."""
from __future__ import annotations

import datetime as dt

import pytest
from django.db import connection
from django.test.utils import CaptureQueriesContext
from django.utils import timezone

from analyses.models import Instrument, InstrumentKind
from analyses.selectors.traceability import instruments_by_reference, instruments_with_status
from tests.factories import CalibrationFactory, InstrumentCheckFactory, InstrumentFactory

pytestmark = pytest.mark.django_db

STATUS = (
    "latest_calibration_id", "latest_calibration_passed", "latest_calibration_due_on",
    "latest_check_id", "latest_check_passed", "latest_check_at",
)


def test_instruments_by_reference_give_the_querysets_instruments_and_facts(postgres):
    today = timezone.localdate()
    now = timezone.now()
    tied = InstrumentFactory(asset_id="BAL-TIED")
    # two calibrations on the same latest day: the later one (higher id) is the latest; an older failed one
    CalibrationFactory(instrument=tied, calibrated_on=today - dt.timedelta(days=400), passed=False)
    CalibrationFactory(instrument=tied, calibrated_on=today - dt.timedelta(days=3), due_on=today + dt.timedelta(days=10))
    CalibrationFactory(instrument=tied, calibrated_on=today - dt.timedelta(days=3), passed=False)
    same_time = now - dt.timedelta(hours=2)
    InstrumentCheckFactory(instrument=tied, performed_at=same_time, passed=False)
    InstrumentCheckFactory(instrument=tied, performed_at=same_time)
    InstrumentCheckFactory(instrument=tied, performed_at=now - dt.timedelta(days=2), passed=False)
    bare = InstrumentFactory(asset_id="BUR-BARE", kind=InstrumentKind.BURETTE)  # neither calibrated nor checked
    by_id = InstrumentFactory(asset_id="BAL-BY-ID")
    CalibrationFactory(instrument=by_id)
    InstrumentFactory(asset_id="BAL-NOT-NAMED")

    named = {"BAL-TIED", "BUR-BARE", by_id.pk, "NO-SUCH", 999_999}
    with CaptureQueriesContext(connection) as captured:
        found = instruments_by_reference(named)
    assert len(captured) == 1
    assert set(found) == {"BAL-TIED", tied.pk, "BUR-BARE", bare.pk, "BAL-BY-ID", by_id.pk}
    expected = {i.pk: i for i in instruments_with_status(Instrument.objects.filter(pk__in=[tied.pk, bare.pk, by_id.pk]))}
    for pk, instrument in expected.items():
        got = found[pk]
        for field in Instrument._meta.concrete_fields:
            assert getattr(got, field.attname) == getattr(instrument, field.attname), field.attname
        assert [getattr(got, name) for name in STATUS] == [getattr(instrument, name) for name in STATUS]
        assert [type(getattr(got, name)) for name in STATUS] == [type(getattr(instrument, name)) for name in STATUS]
    latest = found["BAL-TIED"]
    # the facts themselves, worked out by hand from the rows above
    assert latest.latest_calibration_passed is False and latest.latest_calibration_due_on == tied.calibrations.order_by("-id")[0].due_on
    assert latest.latest_calibration_id == max(c.pk for c in tied.calibrations.all() if c.calibrated_on == today - dt.timedelta(days=3))
    assert latest.latest_check_passed is True and latest.latest_check_at == same_time
    assert [getattr(found["BUR-BARE"], name) for name in STATUS] == [None] * 6
