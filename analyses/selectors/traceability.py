"""Reads for traceable measurements: the facts the usability rules judge, a fixed number of
queries whatever the number of lots or instruments."""
from __future__ import annotations

import datetime as dt
from collections.abc import Iterable
from functools import lru_cache

from django.db import connections, router
from django.db.models import OuterRef, Subquery

from analyses.models import Calibration, Instrument, InstrumentCheck, ReagentLot, Standardisation, StandardisationStatus
from analyses.traceability.usability import InstrumentFacts, LotFacts


def current_standardisation_subquery():
    return Standardisation.objects.filter(lot=OuterRef("pk"), status=StandardisationStatus.CURRENT).order_by(
        "-performed_at", "-id"
    )


def lots_with_current(queryset=None):
    """Reagent lots annotated with their current standardisation's id and validity."""
    current = current_standardisation_subquery()
    return (queryset if queryset is not None else ReagentLot.objects.all()).annotate(
        current_standardisation_id=Subquery(current.values("id")[:1]),
        current_valid_until=Subquery(current.values("valid_until")[:1]),
    )


def lot_facts(lot: ReagentLot) -> LotFacts:
    annotated = getattr(lot, "current_standardisation_id", "missing")
    if annotated == "missing":
        lot = lots_with_current().get(pk=lot.pk)
    return LotFacts(
        code=lot.code,
        expires_on=lot.expires_on,
        standardisation_id=lot.current_standardisation_id,
        standardisation_valid_until=lot.current_valid_until,
    )


def instruments_with_status(queryset=None):
    """Instruments annotated with their latest calibration and latest routine check."""
    calibration = Calibration.objects.filter(instrument=OuterRef("pk")).order_by("-calibrated_on", "-id")
    check = InstrumentCheck.objects.filter(instrument=OuterRef("pk")).order_by("-performed_at", "-id")
    return (queryset if queryset is not None else Instrument.objects.all()).annotate(
        latest_calibration_id=Subquery(calibration.values("id")[:1]),
        latest_calibration_passed=Subquery(calibration.values("passed")[:1]),
        latest_calibration_due_on=Subquery(calibration.values("due_on")[:1]),
        latest_check_id=Subquery(check.values("id")[:1]),
        latest_check_passed=Subquery(check.values("passed")[:1]),
        latest_check_at=Subquery(check.values("performed_at")[:1]),
    )


def instrument_facts(instrument: Instrument) -> InstrumentFacts:
    if not hasattr(instrument, "latest_calibration_id"):
        instrument = instruments_with_status().get(pk=instrument.pk)
    return InstrumentFacts(
        asset_id=instrument.asset_id,
        calibration_id=instrument.latest_calibration_id,
        calibration_passed=instrument.latest_calibration_passed,
        calibration_due_on=instrument.latest_calibration_due_on,
        check_every_days=instrument.check_every_days,
        check_id=instrument.latest_check_id,
        check_passed=instrument.latest_check_passed,
        check_at=instrument.latest_check_at,
    )


def instruments_by_reference(references: Iterable[int | str]) -> dict[int | str, Instrument]:
    """Instruments named by id (an int) or asset id (a string), with their status; one query."""
    refs = list(references)
    ids = [r for r in refs if isinstance(r, int) and not isinstance(r, bool)]
    codes = [r for r in refs if isinstance(r, str)]
    if connections[router.db_for_read(Instrument)].vendor == "postgresql":
        found = list(Instrument.objects.raw(_instruments_with_status_sql(), [ids, codes]))
    else:
        found = list(instruments_with_status(Instrument.objects.filter(pk__in=ids) | Instrument.objects.filter(asset_id__in=codes)))
    by_ref: dict[int | str, Instrument] = {}
    for instrument in found:
        by_ref[instrument.pk] = instrument
        by_ref[instrument.asset_id] = instrument
    return by_ref


@lru_cache(maxsize=1)
def _instruments_with_status_sql() -> str:
    """PostgreSQL: the instruments whose id is in the first parameter or whose asset id is in
    the second (two arrays), with ``instruments_with_status``'s annotations from two lateral
    joins. Django compiles that queryset's six correlated subqueries anew on every call, which
    took about 3.5 ms against 0.4 ms for this text (issue 12); tests/analyses/selectors/
    test_traceability.py holds the two equal."""
    instrument, calibration, check = (m._meta.db_table for m in (Instrument, Calibration, InstrumentCheck))
    return (
        f"SELECT i.*, c.id AS latest_calibration_id, c.passed AS latest_calibration_passed, "
        f"c.due_on AS latest_calibration_due_on, k.id AS latest_check_id, k.passed AS latest_check_passed, "
        f'k.performed_at AS latest_check_at FROM "{instrument}" i '
        f'LEFT JOIN LATERAL (SELECT id, passed, due_on FROM "{calibration}" WHERE instrument_id = i.id '
        f"ORDER BY calibrated_on DESC, id DESC LIMIT 1) c ON TRUE "
        f'LEFT JOIN LATERAL (SELECT id, passed, performed_at FROM "{check}" WHERE instrument_id = i.id '
        f"ORDER BY performed_at DESC, id DESC LIMIT 1) k ON TRUE "
        f"WHERE i.id = ANY(%s) OR i.asset_id = ANY(%s)"
    )


def due_within(today: dt.date, days: int) -> dt.date:
    return today + dt.timedelta(days=days)


# --- lists for the API: a fixed number of queries whatever the page -------------------
def reagent_kind_list():
    from analyses.models import ReagentKind

    return ReagentKind.objects.select_related("created_by").order_by("name", "id")


def reagent_lot_list():
    return lots_with_current(ReagentLot.objects.select_related("kind", "created_by")).order_by("kind__name", "-prepared_on", "-id")


def standardisation_list(lot_id: int | None = None):
    queryset = Standardisation.objects.select_related("lot", "performed_by", "balance", "burette")
    if lot_id is not None:
        queryset = queryset.filter(lot_id=lot_id)
    return queryset.order_by("-performed_at", "-id")


def instrument_list():
    return instruments_with_status(Instrument.objects.select_related("created_by")).order_by("asset_id")


def calibration_list(instrument_id: int):
    return Calibration.objects.filter(instrument_id=instrument_id).select_related("instrument", "recorded_by").order_by("-calibrated_on", "-id")


def check_list(instrument_id: int):
    return InstrumentCheck.objects.filter(instrument_id=instrument_id).select_related("instrument", "performed_by").order_by("-performed_at", "-id")
