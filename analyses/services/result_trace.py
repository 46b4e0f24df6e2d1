"""What a result was measured with: the titrant lot (and through it the standardisation whose
concentration the plugin receives) and the instruments, each checked usable at entry.

Refusals are ``Conflict`` (409) naming the item and the reason: an expired, unstandardised
or out-of-validity lot; a lot of a substance the method does not take; an instrument that is
uncalibrated, overdue or failed its check; an instrument of a kind the method does not need,
or a need no instrument meets. A typed ``titrant_concentration`` is refused here: it is for
``manage.py calc`` and ``/api/calculations/``, which store nothing.
"""
from __future__ import annotations

import datetime as dt
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from functools import cached_property
from typing import Any

from analyses.audit import json_safe
from analyses.errors import Conflict, InvalidInput
from analyses.row_writes import new_row, related_rows_keep, rows_insert
from analyses.models import Calibration, Instrument, ReagentLot, Result, ResultInstrument, Standardisation
from analyses.selectors.traceability import (
    instrument_facts, instruments_by_reference, instruments_with_calibrations, lot_facts, lots_by_reference, lots_with_current,
)
from analyses.services.access import ID_MAX
from analyses.traceability.usability import instrument_refusal, lot_refusal
from plugins.contract import TITRANT_INPUT, MethodPlugin

TRACE_FIELDS = ("reagent_lot", "standardisation", "titrant_concentration", "titrant_uncertainty")
MAX_INSTRUMENTS = 20


@dataclass(frozen=True)
class InstrumentUse:
    instrument: Instrument
    calibration_id: int
    check_id: int | None


@dataclass(frozen=True)
class Trace:
    lot: ReagentLot | None = None
    standardisation: Standardisation | None = None
    uses: tuple[InstrumentUse, ...] = field(default_factory=tuple)

    def plugin_inputs(self, inputs: Mapping[str, Any]) -> dict[str, Any]:
        """The entered inputs, with the standardisation's exact concentration as the titrant's."""
        given = dict(inputs)
        if self.standardisation is not None:
            given[TITRANT_INPUT] = self.standardisation.concentration  # a Decimal string: exact
        return given

    def result_fields(self) -> dict[str, Any]:
        s = self.standardisation
        return {
            "reagent_lot": self.lot,
            "standardisation": s,
            "titrant_concentration": s.concentration if s else "",
            "titrant_uncertainty": s.uncertainty if s else "",
        }

    @cached_property
    def described(self) -> dict[str, Any]:
        """``describe()`` as plain JSON types, worked out once: a batch's results share their
        traces, and each result's audit entry gives it (the entry's encoding copies it). Shared
        by every caller: read it, never change it in place."""
        return json_safe(self.describe())

    def describe(self) -> dict[str, Any]:
        """For the audit entry and the certificate."""
        return {
            "titrant_lot": self.lot.code if self.lot else None,
            "standardisation": self.standardisation.pk if self.standardisation else None,
            "instruments": [
                {"asset_id": u.instrument.asset_id, "kind": u.instrument.kind, "calibration": u.calibration_id, "check": u.check_id}
                for u in self.uses
            ],
        }


@dataclass(frozen=True)
class TraceCatalog:
    """The titrant lots (with their current standardisation) and the instruments (with their
    latest calibration and check) that a batch of entries names, read in a fixed number of
    queries (``trace_catalog``), so that checking each entry's trace reads nothing more."""

    lots_by_pk: dict[int, ReagentLot] = field(default_factory=dict)
    lots_by_code: dict[str, ReagentLot] = field(default_factory=dict)
    standardisations: dict[int, Standardisation] = field(default_factory=dict)
    instruments: dict[int | str, Instrument] = field(default_factory=dict)
    calibrations: dict[int, Calibration] = field(default_factory=dict)
    # the traces checked so far, by plugin, time and the lot and instruments as named
    # (``trace_for_entry``, ``_trace_key``): a batch's entries mostly name the same ones
    traces: dict[tuple, Trace] = field(default_factory=dict)

    def lot(self, ref: int | str) -> ReagentLot | None:
        return self.lots_by_pk.get(ref) if isinstance(ref, int) else self.lots_by_code.get(ref)


def _usable_reference(raw: Any) -> int | str | None:
    """``raw`` as ``_reference`` reads it, or None where it would refuse it."""
    try:
        return _reference(raw, "")
    except InvalidInput:
        return None


def trace_catalog(titrant_lots: Iterable[Any], instruments: Iterable[Any]) -> TraceCatalog:
    """The lots and instruments named (ids or codes; anything unusable is left for the check
    of its entry to refuse), with the lots' current standardisations and the instruments'
    latest calibrations: two queries on PostgreSQL, four elsewhere."""
    refs = {ref for ref in map(_usable_reference, titrant_lots) if ref is not None}
    catalog = TraceCatalog()
    if refs:
        lots, standardisations = lots_by_reference(refs)
        for lot in lots:
            catalog.lots_by_pk[lot.pk] = lot
            catalog.lots_by_code[lot.code] = lot
        catalog.standardisations.update(standardisations)
    named = {ref for ref in map(_usable_reference, instruments) if ref is not None}
    if named:
        found, calibrations = instruments_with_calibrations(named)
        catalog.instruments.update(found)
        catalog.calibrations.update(calibrations)
    return catalog


def _reference(raw: Any, field_name: str) -> int | str:
    if isinstance(raw, bool) or not isinstance(raw, (int, str)) or (isinstance(raw, str) and not raw.strip()):
        raise InvalidInput.for_field(field_name, "must be an id or a code")
    if isinstance(raw, int) and not 1 <= raw <= ID_MAX:
        raise InvalidInput.for_field(field_name, f"no such item: {raw}")
    return raw.strip() if isinstance(raw, str) else raw


def _lot(
    plugin: MethodPlugin, raw: Any, now: dt.datetime, catalog: TraceCatalog | None = None
) -> tuple[ReagentLot, Standardisation]:
    ref = _reference(raw, "titrant_lot")
    if catalog is not None:
        lot = catalog.lot(ref)
    else:
        lookup = {"pk": ref} if isinstance(ref, int) else {"code": ref}
        lot = lots_with_current(ReagentLot.objects.select_related("kind")).filter(**lookup).first()
    if lot is None:
        raise InvalidInput.for_field("titrant_lot", f"no titrant lot {ref!r}")
    if lot.kind.substance not in plugin.titrants:
        raise Conflict(
            f"titrant lot {lot.code} is {lot.kind.name} ({lot.kind.substance}); method {plugin.code} takes "
            f"{' or '.join(plugin.titrants)}",
            missing=["titrant_lot"],
        )
    refusal = lot_refusal(lot_facts(lot), now)
    if refusal:
        raise Conflict(refusal, missing=["titrant_lot"])
    if catalog is not None and lot.current_standardisation_id in catalog.standardisations:
        return lot, catalog.standardisations[lot.current_standardisation_id]
    return lot, Standardisation.objects.get(pk=lot.current_standardisation_id)


def _instruments(
    plugin: MethodPlugin, raw: Any, now: dt.datetime, catalog: TraceCatalog | None = None
) -> tuple[InstrumentUse, ...]:
    if not plugin.instruments and raw in (None, []):
        return ()
    if isinstance(raw, (str, bytes, Mapping)) or not isinstance(raw, Sequence) or not raw:
        needs = "; ".join(" or ".join(need) for need in plugin.instruments)
        raise InvalidInput.for_field("instruments", f"name the instruments used (method {plugin.code} needs: {needs})")
    if len(raw) > MAX_INSTRUMENTS:
        raise InvalidInput.for_field("instruments", f"at most {MAX_INSTRUMENTS}")
    refs = [_reference(item, f"instruments.{i}") for i, item in enumerate(raw)]
    found = catalog.instruments if catalog is not None else instruments_by_reference(refs)
    chosen: list[Instrument] = []
    for index, ref in enumerate(refs):
        instrument = found.get(ref)
        if instrument is None:
            raise InvalidInput.for_field(f"instruments.{index}", f"no instrument {ref!r}")
        if instrument in chosen:
            raise InvalidInput.for_field(f"instruments.{index}", f"{instrument.asset_id} is named twice")
        chosen.append(instrument)
    wanted = {kind for need in plugin.instruments for kind in need}
    for instrument in chosen:
        if instrument.kind not in wanted:
            raise Conflict(
                f"instrument {instrument.asset_id} is a {instrument.kind}; method {plugin.code} uses "
                f"{', '.join(sorted(wanted))}",
                missing=[f"instruments.{instrument.asset_id}"],
            )
    for need in plugin.instruments:
        if not any(i.kind in need for i in chosen):
            raise Conflict(f"method {plugin.code} needs a {' or '.join(need)}; none was named", missing=["instruments"])
    uses = []
    for instrument in chosen:
        facts = instrument_facts(instrument)
        refusal = instrument_refusal(facts, now)
        if refusal:
            raise Conflict(refusal, missing=[f"instruments.{instrument.asset_id}"])
        uses.append(InstrumentUse(instrument, facts.calibration_id, facts.check_id if facts.check_every_days else None))
    return tuple(uses)


def refuse_typed_titrant(plugin: MethodPlugin, inputs: Any) -> None:
    if isinstance(inputs, Mapping) and TITRANT_INPUT in inputs and plugin.titrants:
        raise InvalidInput.for_field(
            f"inputs.{TITRANT_INPUT}",
            "comes from the titrant lot's standardisation: name the lot in titrant_lot (a typed concentration "
            "is only for manage.py calc and /api/calculations/)",
        )


def trace_is_complete(plugin: MethodPlugin, trace: Trace) -> bool:
    """Whether a kept trace names everything the method needs (rows entered before issue 9 do not)."""
    if plugin.titrants and trace.standardisation is None:
        return False
    kinds = {u.instrument.kind for u in trace.uses}
    return all(kinds & set(need) for need in plugin.instruments)


def trace_for_entry(
    plugin: MethodPlugin, inputs: Any, *, titrant_lot: Any, instruments: Any, now: dt.datetime,
    catalog: TraceCatalog | None = None,
) -> Trace:
    """The checked trace of a new entry, or the refusal. Runs before anything is written.
    With ``catalog`` (``trace_catalog`` of the batch) the lots and instruments are looked up
    there, not read one by one, and a trace named again by a later entry of the batch for the
    same method is the one checked before (the inputs are still checked for a typed titrant)."""
    refuse_typed_titrant(plugin, inputs)
    key = _trace_key(plugin, titrant_lot, instruments, now) if catalog is not None else None
    if key is not None and key in catalog.traces:
        return catalog.traces[key]
    lot = standardisation = None
    if plugin.titrants:
        if titrant_lot in (None, ""):
            raise InvalidInput.for_field("titrant_lot", f"is required: method {plugin.code} titrates with {' or '.join(plugin.titrants)}")
        lot, standardisation = _lot(plugin, titrant_lot, now, catalog)
    elif titrant_lot not in (None, ""):
        raise InvalidInput.for_field("titrant_lot", f"method {plugin.code} uses no titrant")
    trace = Trace(lot, standardisation, _instruments(plugin, instruments, now, catalog))
    if key is not None:
        catalog.traces[key] = trace
    return trace


def _trace_key(plugin: MethodPlugin, titrant_lot: Any, instruments: Any, now: dt.datetime) -> tuple | None:
    """What a checked trace depends on, besides the catalog it was checked against: the plugin,
    the time, and the lot and instruments as named, each with its type (1 and True, or 5 and
    "5", are not the same name); None for anything else, which is checked afresh."""
    if titrant_lot is not None and type(titrant_lot) not in (int, str):
        return None
    named: Any = None
    if isinstance(instruments, (list, tuple)):
        if any(type(ref) not in (int, str) for ref in instruments):
            return None
        named = (type(instruments), tuple((type(ref), ref) for ref in instruments))
    elif instruments is not None:
        return None
    return (plugin, now, type(titrant_lot), titrant_lot, named)


def stored_inputs(result: Result) -> dict[str, Any]:
    """A stored result's inputs as its plugin took them: as entered, with the concentration of
    the titrant lot's standardisation where the result was measured with one."""
    given = dict(result.inputs)
    if result.titrant_concentration:
        given.setdefault(TITRANT_INPUT, result.titrant_concentration)
    return given


def trace_of(result: Result) -> Trace:
    """The trace a result was entered with (a correction that names none keeps it)."""
    uses = tuple(
        InstrumentUse(use.instrument, use.calibration_id, use.routine_check_id)
        for use in result.instrument_uses.select_related("instrument").order_by("id")
    )
    return Trace(result.reagent_lot, result.standardisation, uses)


def trace_save(result: Result, trace: Trace) -> None:
    """The result's immutable references to the instruments (the lot and standardisation are
    fields of the result itself)."""
    ResultInstrument.objects.bulk_create(
        [ResultInstrument(result=result, instrument=u.instrument, calibration_id=u.calibration_id, routine_check_id=u.check_id) for u in trace.uses]
    )


def trace_save_many(entered: Iterable[tuple[Result, Trace]], *, ids: Sequence[int] | None = None) -> None:
    """``trace_save`` for many inserted results at once: one insert (with ``ids`` reserved
    for the uses, one per use, see ``row_writes.ids_reserve``). Each result then holds its
    instrument uses as ``prefetch_related`` would leave them (in the model's order, by
    instrument), so showing the results reads nothing more."""
    uses = [
        (result, [
            new_row(ResultInstrument, result=result, instrument=u.instrument, calibration_id=u.calibration_id,
                    routine_check_id=u.check_id)
            for u in trace.uses
        ])
        for result, trace in entered
    ]
    rows_insert([row for _, rows in uses for row in rows], ids=ids)
    for result, rows in uses:
        rows.sort(key=lambda row: row.instrument_id)  # ResultInstrument.Meta.ordering, as a read gives them
        related_rows_keep(result, "instrument_uses", rows)
