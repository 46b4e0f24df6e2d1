"""Reads for traceable measurements: the facts the usability rules judge, a fixed number of
queries whatever the number of lots or instruments."""
from __future__ import annotations

import datetime as dt
from collections.abc import Iterable
from functools import lru_cache

from django.db import connections, router
from django.db.models import OuterRef, Q, Subquery

from analyses.models import (
    Calibration, Instrument, InstrumentCheck, ReagentKind, ReagentLot, Standardisation, StandardisationStatus,
)
from analyses.selectors.rows import RowReader, select_list
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
    """Instruments named by id (an int) or asset id (a string), with their status; one query
    (on PostgreSQL, ``instruments_with_calibrations``'s)."""
    if connections[router.db_for_read(Instrument)].vendor == "postgresql":
        return instruments_with_calibrations(references)[0]
    ids, codes = _ids_and_codes(references)
    found = instruments_with_status(Instrument.objects.filter(pk__in=ids) | Instrument.objects.filter(asset_id__in=codes))
    return _by_reference(found)


def _ids_and_codes(references: Iterable[int | str]) -> tuple[list[int], list[str]]:
    """References split into ids (ints, not bools) and codes (strings); anything else is dropped."""
    refs = list(references)
    return [r for r in refs if isinstance(r, int) and not isinstance(r, bool)], [r for r in refs if isinstance(r, str)]


def _by_reference(instruments: Iterable[Instrument]) -> dict[int | str, Instrument]:
    """Each instrument under its id and under its asset id."""
    by_ref: dict[int | str, Instrument] = {}
    for instrument in instruments:
        by_ref[instrument.pk] = by_ref[instrument.asset_id] = instrument
    return by_ref


def lots_by_reference(references: Iterable[int | str]) -> tuple[list[ReagentLot], dict[int, Standardisation]]:
    """The lots named by id (an int) or code (a string), each with its kind and ``lots_with_current``'s
    annotations, and their current standardisations by id. On PostgreSQL one text of SQL with
    a lateral join, which reads the standardisation rows too; elsewhere the queryset and one
    more query. tests/analyses/selectors/test_traceability.py holds the two equal."""
    ids, codes = _ids_and_codes(references)
    connection = connections[router.db_for_read(ReagentLot)]
    if connection.vendor != "postgresql":
        lots = list(lots_with_current(ReagentLot.objects.select_related("kind")).filter(Q(pk__in=ids) | Q(code__in=codes)))
        current = [lot.current_standardisation_id for lot in lots if lot.current_standardisation_id]
        return lots, Standardisation.objects.in_bulk(current)
    lot_rows, kind_rows, standardisation_rows = (RowReader.of(m, connection) for m in (ReagentLot, ReagentKind, Standardisation))
    kind_field = ReagentLot._meta.get_field("kind")
    lots, standardisations = [], {}
    with connection.cursor() as cursor:
        cursor.execute(_lots_with_current_sql(), [StandardisationStatus.CURRENT.value, ids, codes])
        for row in cursor.fetchall():
            lot, at = lot_rows.read(row, 0)
            kind, at = kind_rows.read(row, at)
            standardisation, _ = standardisation_rows.read(row, at)
            kind_field.set_cached_value(lot, kind)
            lot.current_standardisation_id = lot.current_valid_until = None
            if standardisation is not None:
                lot.current_standardisation_id, lot.current_valid_until = standardisation.pk, standardisation.valid_until
                standardisations[standardisation.pk] = standardisation
            lots.append(lot)
    return lots, standardisations


@lru_cache(maxsize=1)
def _lots_with_current_sql() -> str:
    """PostgreSQL: lots whose id is in the second parameter or whose code is in the third, each
    with its kind and its latest standardisation of the first parameter's status (as
    ``current_standardisation_subquery`` orders them), read in one pass."""
    lot, kind, standardisation = (m._meta.db_table for m in (ReagentLot, ReagentKind, Standardisation))
    columns = select_list((ReagentLot, "l"), (ReagentKind, "k"), (Standardisation, "s"))
    return (
        f'SELECT {columns} FROM "{lot}" l JOIN "{kind}" k ON k.id = l.kind_id '
        f'LEFT JOIN LATERAL (SELECT * FROM "{standardisation}" WHERE lot_id = l.id AND status = %s '
        f"ORDER BY performed_at DESC, id DESC LIMIT 1) s ON TRUE "
        f"WHERE l.id = ANY(%s) OR l.code = ANY(%s)"
    )


def instruments_with_calibrations(
    references: Iterable[int | str],
) -> tuple[dict[int | str, Instrument], dict[int, Calibration]]:
    """``instruments_by_reference``, and the latest calibration of each by id. On PostgreSQL
    one text of SQL: ``instruments_with_status``'s annotations from two lateral joins (Django
    compiles that queryset's six correlated subqueries anew on every call, about 3.5 ms against
    0.4 ms for the text, issue 12), the first of which reads the calibration's row too;
    elsewhere the queryset and one more query. tests/analyses/selectors/test_traceability.py
    holds the two equal."""
    ids, codes = _ids_and_codes(references)
    connection = connections[router.db_for_read(Instrument)]
    if connection.vendor != "postgresql":
        found = instruments_by_reference([*ids, *codes])
        latest = {i.latest_calibration_id for i in found.values() if i.latest_calibration_id}
        return found, Calibration.objects.in_bulk(latest)
    instrument_rows, calibration_rows = RowReader.of(Instrument, connection), RowReader.of(Calibration, connection)
    instruments: list[Instrument] = []
    calibrations: dict[int, Calibration] = {}
    with connection.cursor() as cursor:
        cursor.execute(_instruments_with_calibration_sql(), [ids, codes])
        for row in cursor.fetchall():
            instrument, at = instrument_rows.read(row, 0)
            # as the raw query of instruments_by_reference reads them: the values as PostgreSQL gives them
            instrument.latest_check_id, instrument.latest_check_passed, instrument.latest_check_at = row[at:at + 3]
            calibration, _ = calibration_rows.read(row, at + 3)
            if calibration is None:
                instrument.latest_calibration_id = instrument.latest_calibration_passed = instrument.latest_calibration_due_on = None
            else:
                instrument.latest_calibration_id = calibration.pk
                instrument.latest_calibration_passed, instrument.latest_calibration_due_on = calibration.passed, calibration.due_on
                calibrations[calibration.pk] = calibration
            instruments.append(instrument)
    return _by_reference(instruments), calibrations


@lru_cache(maxsize=1)
def _instruments_with_calibration_sql() -> str:
    """PostgreSQL: the instruments whose id is in the first parameter or whose asset id is in
    the second (two arrays), with every column of the latest calibration and the latest
    check's id, outcome and time."""
    instrument, calibration, check = (m._meta.db_table for m in (Instrument, Calibration, InstrumentCheck))
    return (
        f"SELECT {RowReader.select_list(Instrument, 'i')}, k.id, k.passed, k.performed_at, "
        f"{RowReader.select_list(Calibration, 'c')} "
        f'FROM "{instrument}" i '
        f'LEFT JOIN LATERAL (SELECT * FROM "{calibration}" WHERE instrument_id = i.id '
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
