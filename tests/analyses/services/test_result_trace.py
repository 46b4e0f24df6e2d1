"""Result entry through a titrant lot and instruments (issue 9): the concentration comes from
the lot's current standardisation, and every lot or instrument that may not be used is a
409 naming it, with nothing written."""
from __future__ import annotations

import datetime as dt
from decimal import Decimal

import pytest
from django.utils import timezone

from analyses.errors import Conflict, InvalidInput
from analyses.models import AuditEntry, ImmutableRowError, Result, ResultInstrument, Test
from analyses.services.results import result_correct, result_record, result_record_bulk
from tests.analyses.lab_setup import AV_LOW, AV_LOW_TWIN, AV_TRACE, PV_LOW
from tests.factories import (
    CalibrationFactory,
    InstrumentCheckFactory,
    InstrumentFactory,
    ReagentKindFactory,
    ReagentLotFactory,
    StandardisationFactory,
    usable_instrument,
    usable_titrant_lot,
)


@pytest.fixture
def av(assigned_tests) -> Test:
    return next(t for t in assigned_tests if t.method_code == "av")


def _nothing_written():
    return not Result.objects.exists() and not ResultInstrument.objects.exists()


def refused(analyst, test, **trace) -> Conflict:
    with pytest.raises(Conflict) as caught:
        result_record(analyst, test, inputs=AV_LOW, **{**AV_TRACE, **trace})
    assert _nothing_written()
    return caught.value


def test_the_concentration_comes_from_the_current_standardisation(users, av, bench):
    StandardisationFactory(lot=bench["KOH-BENCH"], concentration="0.1002", uncertainty="0.00011")
    result = result_record(users["analyst"], av, inputs=AV_LOW, **AV_TRACE)
    # ISO 660: AV = (S - B) c 56.1 / m = 1.25 x 0.1002 x 56.1 / 20.0, exactly
    assert Decimal(result.value_exact) == Decimal("1.25") * Decimal("0.1002") * Decimal("56.1") / Decimal("20.0")
    assert result.inputs == AV_LOW  # as entered: no concentration was typed
    assert (result.titrant_concentration, result.titrant_uncertainty) == ("0.1002", "0.00011")
    assert result.reagent_lot.code == "KOH-BENCH"
    assert result.standardisation == bench["KOH-BENCH"].standardisations.order_by("-performed_at").first()
    uses = {u.instrument.asset_id: u for u in result.instrument_uses.all()}
    assert set(uses) == {"BAL-BENCH", "BUR-BENCH"}
    assert uses["BAL-BENCH"].routine_check_id is not None and uses["BUR-BENCH"].routine_check_id is None
    audit = AuditEntry.objects.get(object_type="analyses.result", object_id=str(result.pk))
    measured = audit.changes["measured_with"][1]
    assert measured["titrant_lot"] == "KOH-BENCH" and measured["standardisation"] == result.standardisation_id
    assert [i["asset_id"] for i in measured["instruments"]] == ["BAL-BENCH", "BUR-BENCH"]


def test_instruments_and_lots_may_be_named_by_id(users, av, bench):
    result = result_record(
        users["analyst"], av, inputs=AV_LOW, titrant_lot=bench["KOH-BENCH"].pk,
        instruments=[bench["BAL-BENCH"].pk, bench["BUR-BENCH"].pk],
    )
    assert result.reagent_lot_id == bench["KOH-BENCH"].pk


def test_references_to_instruments_are_immutable(users, av):
    use = result_record(users["analyst"], av, inputs=AV_LOW, **AV_TRACE).instrument_uses.first()
    with pytest.raises(ImmutableRowError):
        use.save()
    with pytest.raises(ImmutableRowError):
        ResultInstrument.objects.all().delete()


def test_a_typed_concentration_is_refused_at_entry(users, av):
    with pytest.raises(InvalidInput) as caught:
        result_record(users["analyst"], av, inputs={**AV_LOW, "titrant_concentration": "0.1"}, **AV_TRACE)
    assert "inputs.titrant_concentration" in caught.value.fields
    assert "manage.py calc" in caught.value.detail
    assert _nothing_written()


def test_a_titration_needs_its_lot_and_instruments(users, av):
    with pytest.raises(InvalidInput) as caught:
        result_record(users["analyst"], av, inputs=AV_LOW, instruments=AV_TRACE["instruments"])
    assert "titrant_lot" in caught.value.fields
    with pytest.raises(InvalidInput) as caught:
        result_record(users["analyst"], av, inputs=AV_LOW, titrant_lot="KOH-BENCH")
    assert "instruments" in caught.value.fields
    with pytest.raises(InvalidInput) as caught:
        result_record(users["analyst"], av, inputs=AV_LOW, titrant_lot="NO-SUCH-LOT", instruments=AV_TRACE["instruments"])
    assert "titrant_lot" in caught.value.fields


def test_expired_lot(users, av):
    lot = usable_titrant_lot("KOH-OLD", kind=ReagentKindFactory(), expires_on=timezone.localdate() - dt.timedelta(days=1))
    conflict = refused(users["analyst"], av, titrant_lot=lot.code)
    assert "titrant lot KOH-OLD expired" in conflict.detail and conflict.missing == ["titrant_lot"]


def test_unstandardised_lot(users, av):
    ReagentLotFactory(code="KOH-NEW", kind=ReagentKindFactory())
    assert "titrant lot KOH-NEW has no standardisation" in refused(users["analyst"], av, titrant_lot="KOH-NEW").detail


def test_standardisation_past_its_validity(users, av):
    lot = ReagentLotFactory(code="KOH-STALE", kind=ReagentKindFactory())
    StandardisationFactory(lot=lot, performed_at=timezone.now() - dt.timedelta(days=8))  # the kind's 7 days
    conflict = refused(users["analyst"], av, titrant_lot="KOH-STALE")
    assert "KOH-STALE" in conflict.detail and "was valid until" in conflict.detail


def test_superseded_standardisation_is_never_used(users, av, bench):
    lot = bench["KOH-BENCH"]
    old = lot.standardisations.get()
    old.status, old.status_reason = "superseded", "wrong KHP mass"
    old.save()
    assert "has no standardisation" in refused(users["analyst"], av).detail


def test_wrong_reagent_kind_for_the_method(users, av):
    # thiosulfate offered for an acid value (the example)
    conflict = refused(users["analyst"], av, titrant_lot="THIO-BENCH")
    assert "THIO-BENCH" in conflict.detail and "takes KOH or NaOH" in conflict.detail


def test_uncalibrated_instrument(users, av):
    InstrumentFactory(asset_id="BAL-NEW", kind="balance")
    conflict = refused(users["analyst"], av, instruments=["BAL-NEW", "BUR-BENCH"])
    assert conflict.detail == "instrument BAL-NEW is uncalibrated" and conflict.missing == ["instruments.BAL-NEW"]


def test_instrument_overdue_for_calibration(users, av):
    burette = InstrumentFactory(asset_id="BUR-LATE", kind="burette")
    CalibrationFactory(instrument=burette, calibrated_on=timezone.localdate() - dt.timedelta(days=400),
                       due_on=timezone.localdate() - dt.timedelta(days=1), unit="mL")
    conflict = refused(users["analyst"], av, instruments=["BAL-BENCH", "BUR-LATE"])
    assert "BUR-LATE is overdue for calibration" in conflict.detail


def test_instrument_that_failed_its_calibration(users, av):
    burette = usable_instrument("BUR-FAIL", "burette")
    CalibrationFactory(instrument=burette, calibrated_on=timezone.localdate(), passed=False, unit="mL")
    assert "BUR-FAIL failed its calibration" in refused(users["analyst"], av, instruments=["BAL-BENCH", "BUR-FAIL"]).detail


def test_balance_that_failed_its_daily_check(users, av, bench):
    InstrumentCheckFactory(instrument=bench["BAL-BENCH"], measured="100.0021", passed=False, performed_at=timezone.now())
    conflict = refused(users["analyst"], av)
    assert "BAL-BENCH failed its routine check" in conflict.detail and conflict.missing == ["instruments.BAL-BENCH"]


def test_balance_whose_check_is_overdue(users, av, bench):
    balance = InstrumentFactory(asset_id="BAL-IDLE", kind="balance")
    CalibrationFactory(instrument=balance)
    InstrumentCheckFactory(instrument=balance, performed_at=timezone.now() - dt.timedelta(days=2))
    assert "BAL-IDLE is overdue for its routine check" in refused(users["analyst"], av, instruments=["BAL-IDLE", "BUR-BENCH"]).detail


def test_wrong_instrument_kind(users, av):
    usable_instrument("OVEN-1", "oven")
    conflict = refused(users["analyst"], av, instruments=["BAL-BENCH", "BUR-BENCH", "OVEN-1"])
    assert "OVEN-1 is a oven" in conflict.detail and conflict.missing == ["instruments.OVEN-1"]
    conflict = refused(users["analyst"], av, instruments=["BAL-BENCH"])
    assert "needs a burette or automatic_titrator" in conflict.detail


def test_bulk_refusal_names_the_item(users, assigned_tests):
    av, pv = sorted(assigned_tests, key=lambda t: t.method_code)
    items = [
        {"test": av.pk, "inputs": AV_LOW, **AV_TRACE},
        {"test": pv.pk, "inputs": PV_LOW, "titrant_lot": "KOH-BENCH", "instruments": AV_TRACE["instruments"]},
    ]
    with pytest.raises(Conflict) as caught:
        result_record_bulk(users["analyst"], items)
    assert caught.value.detail.startswith("results.1: titrant lot KOH-BENCH")
    assert _nothing_written()


def test_a_correction_keeps_what_the_result_was_measured_with_even_after_expiry(users, av, bench):
    first = result_record(users["analyst"], av, inputs=AV_LOW, **AV_TRACE)
    lot = bench["KOH-BENCH"]
    lot.expires_on = timezone.localdate() - dt.timedelta(days=1)  # a wrong titre read, found the day after expiry
    lot.save()
    corrected = result_correct(users["analyst"], first, inputs=AV_LOW_TWIN, reason="titre misread")
    assert corrected.standardisation_id == first.standardisation_id
    assert {u.instrument_id for u in corrected.instrument_uses.all()} == {u.instrument_id for u in first.instrument_uses.all()}
    with pytest.raises(Conflict):  # naming the lot again judges it now
        result_correct(users["analyst"], corrected, inputs=AV_LOW, reason="again", titrant_lot="KOH-BENCH")


def test_a_correction_may_name_other_instruments(users, av):
    usable_instrument("BUR-2", "burette")
    first = result_record(users["analyst"], av, inputs=AV_LOW, **AV_TRACE)
    corrected = result_correct(users["analyst"], first, inputs=AV_LOW, reason="read from the other burette",
                               instruments=["BAL-BENCH", "BUR-2"])
    assert corrected.reagent_lot.code == "KOH-BENCH"
    assert sorted(u.instrument.asset_id for u in corrected.instrument_uses.all()) == ["BAL-BENCH", "BUR-2"]


def test_a_repeated_key_with_another_lot_or_instruments_is_a_conflict(users, av):
    first = result_record(users["analyst"], av, inputs=AV_LOW, idempotency_key="t-1", **AV_TRACE)
    again = result_record(users["analyst"], av, inputs=AV_LOW, idempotency_key="t-1", titrant_lot=first.reagent_lot_id,
                          instruments=["BUR-BENCH", "BAL-BENCH"])
    assert again.pk == first.pk
    usable_instrument("BUR-2", "burette")
    with pytest.raises(Conflict, match="other instruments"):
        result_record(users["analyst"], av, inputs=AV_LOW, idempotency_key="t-1", titrant_lot="KOH-BENCH", instruments=["BAL-BENCH", "BUR-2"])
    with pytest.raises(Conflict, match="another titrant lot"):
        result_record(users["analyst"], av, inputs=AV_LOW, idempotency_key="t-1", titrant_lot="THIO-BENCH", instruments=AV_TRACE["instruments"])
