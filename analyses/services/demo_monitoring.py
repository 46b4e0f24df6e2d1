"""The demo's monitoring part (fixtures/demo_monitoring.json): a QC reference-oil series
that drifts, a production series whose acid value steps up, and a stability study with accelerated conditions, all entered through the
services as the lab would. INVENTED DEMO DATA: values come from stated rules, not a lab.
"""
from __future__ import annotations

import datetime as dt
import json
from collections.abc import Callable, Mapping
from pathlib import Path
from typing import Any

import numpy as np
from django.conf import settings
from django.utils import timezone
from scipy.constants import R

from analyses.models import Lot, Product, PullPoint, StabilityStudy, Test
from analyses.services.assignments import test_assign_bulk
from analyses.services.lots import lot_create
from analyses.services.results import result_record
from analyses.services.review import test_accept
from analyses.services.samples import sample_receive, sample_register
from analyses.services.stability import stability_pulls_schedule, stability_studies_evaluate, stability_study_create
from analyses.services.trend_scan import trend_scan

MONITORING_FILE = Path(settings.BASE_DIR) / "fixtures" / "demo_monitoring.json"
Log = Callable[[str], None]
MASS_G, BLANK_ML = 20.0, 0.05  # acid value test portion and blank


def av_inputs(value: float) -> dict[str, str]:
    """Titration readings that give ``value`` mg KOH/g by AV = (S - B) c 56.1 / m (ISO 660)."""
    titre = value * MASS_G / (0.1 * 56.1) + BLANK_ML
    return {"sample_mass": f"{MASS_G}", "sample_volume": f"{titre:.4f}", "blank_volume": f"{BLANK_ML}", "titrant_concentration": "0.1"}


def pv_inputs(value: float) -> dict[str, str]:
    """Readings for ``value`` meq O2/kg by PV = (S - B) c 1000 / m (AOCS Cd 8b-90), with the
    thiosulfate strength Cd 8b-90 prescribes: 0.002 mol/L below PV 12, 0.01 above."""
    strength = 0.002 if value < 12 else 0.01
    titre = value * 5.0 / (strength * 1000) + BLANK_ML
    return {"sample_mass": "5.0", "sample_volume": f"{titre:.4f}", "blank_volume": f"{BLANK_ML}", "titrant_concentration": f"{strength}"}


INPUTS_FOR = {"av": av_inputs, "pv": pv_inputs}


# the result_record keywords for a method's readings: the inputs without the titrant strength
# they were written for, the titrant lot of that strength and the instruments (demo_bench)
Trace = Callable[[str, Mapping[str, Any]], dict[str, Any]]


def _complete(users: Mapping[str, Any], test: Test, value: float, trace: Trace) -> None:
    """Assign, enter duplicates (identical readings) and accept as a second analyst."""
    test_assign_bulk(users["manager"], [test], assignee=users["analyst"])
    keywords = trace(test.method_code, INPUTS_FOR[test.method_code](value))
    for _ in range(test.replicates):
        result_record(users["analyst"], test, **keywords)
    test_accept(users["analyst2"], Test.objects.get(pk=test.pk))


def qc_values(spec: Mapping[str, Any]) -> list[float]:
    """In-control baseline points, then a steady upward creep of ``drift_step_sd`` s per point."""
    rng = np.random.default_rng(spec["seed"])
    baseline = spec["mean"] + spec["sd"] * np.clip(rng.standard_normal(spec["baseline_points"]), -1.8, 1.8)
    drift = spec["mean"] + spec["sd"] * spec["drift_step_sd"] * np.arange(1, spec["drift_points"] + 1)
    return [round(float(v), 4) for v in np.concatenate([baseline, drift])]


def _qc_series(spec: Mapping[str, Any], users: Mapping[str, Any], log: Log, trace: Trace) -> None:
    if Lot.objects.filter(code=spec["lot"]).exists():
        log(f"  QC reference lot {spec['lot']}: exists, skipped")
        return
    lot = lot_create(users["manager"], code=spec["lot"], product=Product.objects.get(code=spec["product"]), origin="production")
    values = qc_values(spec)
    for index, value in enumerate(values):
        received = timezone.now() - dt.timedelta(days=len(values) - index)
        sample = sample_register(
            users["manager"], lot, kind="qc_check", label=f"{lot.code}-QC{index + 1:02d}", registered_at=received
        )
        sample_receive(users["manager"], sample, condition="reference oil, sealed ampoule", storage_place="QC fridge",
                       received_at=received, methods=[spec["method"]])
        _complete(users, sample.tests.get(), value, trace)
        if (index + 1) % 10 == 0:
            log(f"  QC reference lot {lot.code}: {index + 1}/{len(values)} check samples tested")


def production_values(spec: Mapping[str, Any]) -> list[float]:
    """Routine results in control, then shifted up by ``shift_sd`` s (scatter kept within ±1.8 s)."""
    rng = np.random.default_rng(spec["seed"])
    n = spec["in_control_points"] + spec["shifted_points"]
    scatter = spec["sd"] * np.clip(rng.standard_normal(n), -1.8, 1.8)
    shift = np.where(np.arange(n) >= spec["in_control_points"], spec["shift_sd"] * spec["sd"], 0.0)
    return [round(float(v), 4) for v in spec["mean"] + shift + scatter]


def _production_series(spec: Mapping[str, Any], users: Mapping[str, Any], log: Log, trace: Trace) -> None:
    """One production lot a day with one routine sample tested for ``method``: the demo's
    production chart (its specification limit drawn) and its Nelson alert."""
    values = production_values(spec)
    first = f"{spec['lot_prefix']}01"
    if Lot.objects.filter(code=first).exists():
        log(f"  production lots {first}...: exist, skipped")
        return
    product = Product.objects.get(code=spec["product"])
    for index, value in enumerate(values):
        # a day apart, ending a week before the demo's own lots are received
        received = timezone.now() - dt.timedelta(days=len(values) - index + 7)
        lot = lot_create(users["manager"], code=f"{spec['lot_prefix']}{index + 1:02d}", product=product, origin="production",
                         container_ref="Finished-oil tank FT-2")
        sample = sample_register(users["manager"], lot, label=f"{lot.code}-01", registered_at=received)
        sample_receive(users["manager"], sample, condition="sealed bottle", storage_place="sample store",
                       received_at=received, methods=[spec["method"]])
        _complete(users, sample.tests.get(), value, trace)
        if (index + 1) % 10 == 0:
            log(f"  production lots of {product.code}: {index + 1}/{len(values)} tested for {spec['method']}")


def pull_value(kinetics: Mapping[str, Any], method: str, celsius: float, months: float, index: int) -> float:
    """Zero-order growth with an Arrhenius rate: k(T) = k25 exp(-Ea/R (1/T - 1/298.15)),
    plus an alternating scatter so the regressions have a residual."""
    attribute = kinetics[method]
    rate = attribute["rate_per_month_at_25c"] * np.exp(
        -kinetics["activation_energy_j_per_mol"] / R * (1 / (celsius + 273.15) - 1 / 298.15)
    )
    scatter = 1 + kinetics["scatter_fraction"] * (1 if index % 2 else -1)
    return float((attribute["initial"] + rate * months) * scatter)


def _stability_study(spec: Mapping[str, Any], users: Mapping[str, Any], log: Log, trace: Trace) -> None:
    if StabilityStudy.objects.filter(code=spec["code"]).exists():
        log(f"  stability study {spec['code']}: exists, skipped")
        return
    lot = Lot.objects.get(code=spec["lot"])
    today = timezone.localdate()
    study = stability_study_create(
        users["qa"], code=spec["code"], title=spec["title"], product=lot.product_id, lots=[lot.pk],
        started_on=today - dt.timedelta(days=spec["started_days_ago"]), storage_temperature_c=spec["storage_temperature_c"],
        storage_category=spec.get("storage_category"), claimed_shelf_life_months=spec["claimed_shelf_life_months"], conditions=spec["conditions"],
        pull_points=spec["pull_points"], attributes=spec["attributes"],
    )
    # Take each pull on its due day and test it then, as a lab on schedule would.
    due_days = PullPoint.objects.filter(study=study, due_on__lte=today).values_list("due_on", flat=True).distinct()
    for index, due_on in enumerate(sorted(set(due_days))):
        stability_pulls_schedule(due_on)
        pulls = PullPoint.objects.filter(study=study, due_on=due_on).select_related("condition", "sample")
        for pull in pulls.order_by("condition__temperature_c"):
            for test in pull.sample.tests.order_by("method_code"):
                value = pull_value(spec["kinetics"], test.method_code, pull.condition.temperature_c, pull.elapsed_months, index)
                _complete(users, test, value, trace)
        log(f"  stability study {study.code}: pulls due {due_on} taken and tested")


def demo_monitoring_load(
    users: Mapping[str, Any], *, trace: Trace, path: Path | str | None = None, log: Log | None = None
) -> None:
    """Build the QC series and the stability study, then scan and evaluate once so the
    alerts and the predicted shelf life are there at once (the worker repeats this)."""
    log = log or (lambda line: None)
    data = json.loads(Path(path or MONITORING_FILE).read_text(encoding="utf-8"))
    _qc_series(data["qc_series"], users, log, trace)
    if "production_series" in data:
        _production_series(data["production_series"], users, log, trace)
    _stability_study(data["stability_study"], users, log, trace)
    scan = trend_scan()
    log(f"  trend scan: {scan.results_scanned} results in {scan.series_scanned} series, {scan.alerts_raised} new alerts")
    log(f"  stability evaluation: {stability_studies_evaluate()} running studies evaluated")
