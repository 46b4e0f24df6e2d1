"""Impact search: every result, sample and lot that used a titrant lot or an instrument in a
period, with the lots already released flagged (they may need recall). A fixed number of
queries whatever the number of results.

"Used" is direct (the result named the lot or instrument) or through a standardisation: a
solution standardised against this lot (a standardised base), or a standardisation weighed or
titrated on this instrument, passes its use on to every result that took its concentration.
"""
from __future__ import annotations

import datetime as dt
from typing import Any

from django.db.models import Q, QuerySet

from analyses.models import Instrument, LotState, ReagentLot, Result, Standardisation


def _in_period(queryset: QuerySet, field: str, start: dt.date | None, end: dt.date | None) -> QuerySet:
    if start is not None:
        queryset = queryset.filter(**{f"{field}__date__gte": start})
    if end is not None:
        queryset = queryset.filter(**{f"{field}__date__lte": end})
    return queryset


def _results(queryset: QuerySet) -> list[Result]:
    return list(queryset.select_related("test__sample__lot__product", "reagent_lot").order_by("entered_at", "id"))


def _report(item: dict[str, Any], direct: list[Result], standardisations: list[Standardisation], indirect: list[Result],
            start: dt.date | None, end: dt.date | None) -> dict[str, Any]:
    rows, samples, lots = [], {}, {}
    seen: set[int] = set()
    for via, results in (("direct", direct), ("standardisation", indirect)):
        for result in results:
            if result.pk in seen:
                continue
            seen.add(result.pk)
            sample, lot = result.test.sample, result.test.sample.lot
            rows.append({
                "id": result.pk, "via": via if via == "direct" else f"standardisation {result.standardisation_id}",
                "test": result.test_id, "replicate": result.replicate, "version": result.version, "status": result.status,
                "method_code": result.method_code, "reported": result.reported, "unit": result.unit,
                "entered_at": result.entered_at, "titrant_lot": result.reagent_lot.code if result.reagent_lot_id else None,
                "sample": sample.label, "lot": lot.code,
            })
            samples.setdefault(sample.pk, {"id": sample.pk, "label": sample.label, "state": sample.state, "lot": lot.code})
            lots.setdefault(lot.pk, {
                "id": lot.pk, "code": lot.code, "product": lot.product.code, "state": lot.state,
                "released": lot.state == LotState.RELEASED,
            })
    lot_rows = sorted(lots.values(), key=lambda row: row["code"])
    return {
        "item": item,
        "from": start,
        "to": end,
        "standardisations": [
            {"id": s.pk, "titrant_lot": s.lot.code, "performed_at": s.performed_at, "status": s.status} for s in standardisations
        ],
        "results": rows,
        "samples": sorted(samples.values(), key=lambda row: row["label"]),
        "lots": lot_rows,
        "released_lots": [row["code"] for row in lot_rows if row["released"]],
    }


def reagent_lot_impact(lot: ReagentLot, *, start: dt.date | None = None, end: dt.date | None = None) -> dict[str, Any]:
    """What titrant lot ``lot`` touched: results that used it, and results of solutions
    standardised against it. Four queries (with the lot's)."""
    direct = _results(_in_period(Result.objects.filter(reagent_lot=lot), "entered_at", start, end))
    through = _in_period(Standardisation.objects.filter(reference__lot=lot), "performed_at", start, end)
    standardisations = list(through.select_related("lot"))
    indirect = _results(Result.objects.filter(standardisation__in=through.values("pk")))
    item = {"type": "reagent_lot", "id": lot.pk, "code": lot.code, "kind": lot.kind.name, "expires_on": lot.expires_on}
    return _report(item, direct, standardisations, indirect, start, end)


def instrument_impact(instrument: Instrument, *, start: dt.date | None = None, end: dt.date | None = None) -> dict[str, Any]:
    """What ``instrument`` touched: results it was used for, and results that took their
    concentration from a standardisation weighed or titrated on it. Four queries (with the
    instrument's)."""
    direct = _results(_in_period(Result.objects.filter(instrument_uses__instrument=instrument), "entered_at", start, end))
    through = _in_period(
        Standardisation.objects.filter(Q(balance=instrument) | Q(burette=instrument)), "performed_at", start, end
    )
    standardisations = list(through.select_related("lot"))
    indirect = _results(Result.objects.filter(standardisation__in=through.values("pk")))
    item = {"type": "instrument", "id": instrument.pk, "asset_id": instrument.asset_id, "kind": instrument.kind}
    return _report(item, direct, standardisations, indirect, start, end)
