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


def _fields(obj) -> dict:
    """Every column's value of ``obj``, with its type (a Decimal is not a float, a date not a str)."""
    return {f.attname: (getattr(obj, f.attname), type(getattr(obj, f.attname))) for f in type(obj)._meta.concrete_fields}


def test_lots_by_reference_give_the_querysets_lots_kinds_and_current_standardisations():
    """On PostgreSQL one text of SQL (lateral join), elsewhere the queryset: both give what
    lots_with_current and the standardisations' own rows give, ties included."""
    from analyses.models import ReagentLot, Standardisation, StandardisationStatus
    from analyses.selectors.traceability import lots_by_reference, lots_with_current
    from tests.factories import ReagentLotFactory, StandardisationFactory

    now = timezone.now()
    tied = ReagentLotFactory(code="KOH-TIED")
    # two current standardisations at the same moment: the later id is the current one; an
    # older one, and a newer one that is not current
    StandardisationFactory(lot=tied, performed_at=now - dt.timedelta(days=3), concentration="0.0990")
    StandardisationFactory(lot=tied, performed_at=now - dt.timedelta(hours=5), concentration="0.1002")
    latest = StandardisationFactory(lot=tied, performed_at=now - dt.timedelta(hours=5), concentration="0.1003")
    StandardisationFactory(lot=tied, performed_at=now - dt.timedelta(hours=1), status=StandardisationStatus.SUPERSEDED)
    bare = ReagentLotFactory(code="KOH-BARE")  # never standardised
    by_id = ReagentLotFactory(code="KOH-BY-ID")
    StandardisationFactory(lot=by_id, replicates=[{"amount": "0.3888", "titre": "18.64"}])
    ReagentLotFactory(code="KOH-NOT-NAMED")

    with CaptureQueriesContext(connection) as captured:
        lots, standardisations = lots_by_reference([by_id.pk, 999_999, "KOH-TIED", "KOH-BARE", "NO-SUCH"])
    assert len(captured) == (1 if connection.vendor == "postgresql" else 2)
    expected = {lot.pk: lot for lot in lots_with_current(ReagentLot.objects.select_related("kind")).filter(pk__in=[tied.pk, bare.pk, by_id.pk])}
    assert sorted(lot.pk for lot in lots) == sorted(expected)
    for lot in lots:
        want = expected[lot.pk]
        assert _fields(lot) == _fields(want)
        assert _fields(lot.kind) == _fields(want.kind)
        assert (lot.current_standardisation_id, lot.current_valid_until) == (want.current_standardisation_id, want.current_valid_until)
    current = Standardisation.objects.in_bulk([latest.pk, by_id.standardisations.get().pk])
    assert {pk: _fields(s) for pk, s in standardisations.items()} == {pk: _fields(s) for pk, s in current.items()}
    got = {lot.code: lot for lot in lots}
    # worked out by hand from the rows above
    assert got["KOH-TIED"].current_standardisation_id == latest.pk
    assert got["KOH-BARE"].current_standardisation_id is None and got["KOH-BARE"].current_valid_until is None
    assert standardisations[got["KOH-BY-ID"].current_standardisation_id].replicates == [{"amount": "0.3888", "titre": "18.64"}]
    with CaptureQueriesContext(connection) as captured:
        assert got["KOH-TIED"].kind.substance == tied.kind.substance  # read with the lot
    assert len(captured) == 0


def test_instruments_with_calibrations_give_the_latest_calibrations_rows():
    from analyses.models import Calibration
    from analyses.selectors.traceability import instruments_with_calibrations

    today = timezone.localdate()
    tied = InstrumentFactory(asset_id="BAL-TIED")
    CalibrationFactory(instrument=tied, calibrated_on=today - dt.timedelta(days=400), passed=False)
    CalibrationFactory(instrument=tied, calibrated_on=today - dt.timedelta(days=3), due_on=today + dt.timedelta(days=10))
    latest = CalibrationFactory(instrument=tied, calibrated_on=today - dt.timedelta(days=3), passed=False, standard_uncertainty="0.00012")
    InstrumentCheckFactory(instrument=tied)
    bare = InstrumentFactory(asset_id="BUR-BARE", kind=InstrumentKind.BURETTE)
    by_id = InstrumentFactory(asset_id="BAL-BY-ID")
    CalibrationFactory(instrument=by_id)

    named = {"BAL-TIED", "BUR-BARE", by_id.pk, "NO-SUCH"}
    with CaptureQueriesContext(connection) as captured:
        found, calibrations = instruments_with_calibrations(named)
    assert len(captured) == (1 if connection.vendor == "postgresql" else 2)
    expected = instruments_by_reference(named)
    assert set(found) == set(expected) == {"BAL-TIED", tied.pk, "BUR-BARE", bare.pk, "BAL-BY-ID", by_id.pk}
    for ref, instrument in expected.items():
        assert _fields(found[ref]) == _fields(instrument)
        assert [(getattr(found[ref], n), type(getattr(found[ref], n))) for n in STATUS] == [
            (getattr(instrument, n), type(getattr(instrument, n))) for n in STATUS
        ]
    want = Calibration.objects.in_bulk([latest.pk, by_id.calibrations.get().pk])
    assert {pk: _fields(c) for pk, c in calibrations.items()} == {pk: _fields(c) for pk, c in want.items()}
    assert found["BAL-TIED"].latest_calibration_id == latest.pk and found["BUR-BARE"].latest_calibration_id is None
