"""The demo's bench (fixtures/demo_refinery.json, "bench"): instruments with their
calibrations and checks, titrant lots with their standardisations, through the services by
the roles that may do each. One balance fails its daily check and one titrant lot has
expired, so the demo can show entry refused for each. INVENTED DEMO DATA.
"""
from __future__ import annotations

import datetime as dt
from collections.abc import Callable, Mapping
from decimal import Decimal
from typing import Any

from django.utils import timezone

from analyses.errors import Conflict
from analyses.models import Instrument, ReagentKind, ReagentLot, Test
from analyses.selectors.impact import reagent_lot_impact
from analyses.services.instruments import calibration_record, instrument_check_record, instrument_register
from analyses.services.reagents import reagent_kind_create, reagent_lot_register, standardisation_record
from analyses.services.results import result_record
from plugins.registry import get_registry

Log = Callable[[str], None]


def _instruments(bench: Mapping[str, Any], users: Mapping[str, Any], log: Log) -> None:
    today = timezone.localdate()
    for spec in bench["instruments"]:
        if Instrument.objects.filter(asset_id=spec["asset_id"]).exists():
            log(f"  instrument {spec['asset_id']}: exists, skipped")
            continue
        extra = {"check_every_days": spec["check_every_days"]} if "check_every_days" in spec else {}
        instrument = instrument_register(
            users["manager"], asset_id=spec["asset_id"], kind=spec["kind"], location=spec["location"],
            description=spec["description"], **extra,
        )
        cal = spec["calibration"]
        on = today - dt.timedelta(days=cal["days_ago"])
        calibration_record(
            users["manager"], instrument, calibrated_on=on, due_on=on + dt.timedelta(days=cal["valid_days"]),
            certificate_ref=cal["certificate_ref"], passed=cal["passed"], standard_uncertainty=cal.get("standard_uncertainty", ""),
            tolerance=cal.get("tolerance", ""), unit=cal.get("unit", ""),
        )
        outcome = ""
        if "check" in spec:
            check = instrument_check_record(users["analyst"], instrument, **spec["check"])
            outcome = f"; {check.kind} {'passed' if check.passed else 'FAILED'} ({check.measured} for {check.nominal} ± {check.tolerance})"
        log(f"  instrument {instrument.asset_id} ({instrument.kind}): registered, calibrated{outcome}")


def _reagents(bench: Mapping[str, Any], users: Mapping[str, Any], log: Log) -> None:
    for spec in bench["reagent_kinds"]:
        if not ReagentKind.objects.filter(name=spec["name"]).exists():
            reagent_kind_create(users["manager"], **spec)
    balance, burette = bench["instruments_for"]["titration"]
    today = timezone.localdate()
    for spec in bench["reagent_lots"]:
        if ReagentLot.objects.filter(code=spec["code"]).exists():
            log(f"  titrant lot {spec['code']}: exists, skipped")
            continue
        lot = reagent_lot_register(
            users["analyst"], kind=ReagentKind.objects.get(name=spec["kind"]).pk, code=spec["code"],
            prepared_on=today - dt.timedelta(days=spec["prepared_days_ago"]),
            expires_on=today + dt.timedelta(days=spec["expires_in_days"]), prepared_by=spec["prepared_by"],
        )
        if "standardisation" not in spec:
            log(f"  titrant lot {lot.code}: registered, expired {lot.expires_on}")
            continue
        row = standardisation_record(
            users["analyst"], lot, balance=Instrument.objects.get(asset_id=balance), burette=Instrument.objects.get(asset_id=burette),
            **spec["standardisation"],
        )
        log(
            f"  titrant lot {lot.code}: standardised against {row.primary_standard}: {Decimal(row.concentration):.5f} mol/L, "
            f"u = {Decimal(row.uncertainty):.5f} mol/L (QUAM A2 budget), valid until {row.valid_until:%Y-%m-%d %H:%M}"
        )


def demo_bench_load(bench: Mapping[str, Any], users: Mapping[str, Any], *, log: Log) -> None:
    _instruments(bench, users, log)
    _reagents(bench, users, log)


def demo_trace(bench: Mapping[str, Any], method_code: str, inputs: Mapping[str, Any]) -> dict[str, Any]:
    """``result_record`` keywords for the fixture's inputs, which carry the titrant strength
    the reading was taken with: the inputs without it, the usable demo lot of that substance
    and strength, and the demo instruments for the method."""
    plugin = get_registry().get(method_code)
    given = dict(inputs)
    strength = given.pop("titrant_concentration", None)
    keywords: dict[str, Any] = {
        "inputs": given, "instruments": bench["instruments_for"].get(method_code, bench["instruments_for"]["titration"]),
    }
    if plugin.titrants:
        lots = ReagentLot.objects.filter(kind__substance__in=plugin.titrants, expires_on__gte=timezone.localdate()).select_related("kind")
        keywords["titrant_lot"] = next(
            lot.code for lot in lots.order_by("-prepared_on", "code") if Decimal(lot.kind.nominal_concentration) == Decimal(str(strength))
        )
    return keywords


def demo_bench_show(bench: Mapping[str, Any], users: Mapping[str, Any], *, log: Log) -> None:
    """Entry refused with an expired titrant and with a balance that failed its check (nothing
    is written), and the impact search of the demo's main KOH lot."""
    for spec in bench["refusals"]:
        test = Test.objects.filter(sample__label=spec["sample"], method_code=spec["method"]).select_related("assignee").first()
        if test is None or test.assignee is None:
            continue
        try:
            result_record(
                test.assignee, test, inputs={"sample_mass": "20.0", "sample_volume": "1.30", "blank_volume": "0.05"},
                titrant_lot=spec["titrant_lot"], instruments=spec["instruments"],
            )
        except Conflict as refusal:
            log(f"  {spec['what']}: entry on {spec['sample']} ({spec['method']}) refused, 409: {refusal.detail}")
        else:  # the demo data no longer shows what it should
            raise AssertionError(f"demo: {spec['what']} was not refused")
    lot = ReagentLot.objects.select_related("kind").get(code=bench["impact_of"])
    impact = reagent_lot_impact(lot)
    log(
        f"  impact of titrant lot {lot.code}: {len(impact['results'])} results on {len(impact['samples'])} samples of lots "
        f"{', '.join(row['code'] for row in impact['lots'])}; already released: {', '.join(impact['released_lots']) or 'none'}"
    )
