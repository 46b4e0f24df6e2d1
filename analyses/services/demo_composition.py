"""The demo's fatty-acid composition and instrument files (fixtures/demo_composition.json).

After the rest of the demo is loaded, the soybean and palm olein products get a new
specification version with composition lines (``fac:C18:2`` …), a GC is registered, and three
new samples are received: a soybean oil, a palm olein, and a delivery declared as soybean oil
whose GC profile fails the Codex ranges (an invented blend: the identity screen warns on
review). Their GC run and their AV and PV titrations are then imported from the files in
fixtures/, through named mappings, as an analyst would. INVENTED DEMO DATA.
"""
from __future__ import annotations

import datetime as dt
import json
from collections.abc import Callable, Mapping
from pathlib import Path
from typing import Any

from django.conf import settings
from django.db import transaction
from django.utils import timezone

from analyses.models import ImportMapping, Instrument, Lot, Product, Specification, SpecificationStatus, Test
from analyses.services.assignments import test_assign_bulk
from analyses.services.imports import import_mapping_create, results_import
from analyses.services.instruments import calibration_record, instrument_register
from analyses.services.lots import lot_create
from analyses.services.samples import sample_receive, sample_register
from analyses.services.specifications import specification_approve, specification_revise

FIXTURES = Path(settings.BASE_DIR) / "fixtures"
COMPOSITION_FILE = FIXTURES / "demo_composition.json"
Log = Callable[[str], None]


def _gc(spec: Mapping[str, Any], users: Mapping[str, Any], log: Log) -> None:
    if Instrument.objects.filter(asset_id=spec["asset_id"]).exists():
        return
    instrument = instrument_register(users["manager"], asset_id=spec["asset_id"], kind=spec["kind"],
                                     location=spec["location"], description=spec["description"])
    cal = spec["calibration"]
    on = timezone.localdate() - dt.timedelta(days=cal["days_ago"])
    calibration_record(users["manager"], instrument, calibrated_on=on, due_on=on + dt.timedelta(days=cal["valid_days"]),
                       certificate_ref=cal["certificate_ref"], passed=cal["passed"])
    log(f"  instrument {instrument.asset_id} ({instrument.kind}): registered, calibrated")


def _composition_lines(products: Mapping[str, Mapping[str, Any]], extra: Mapping[str, list], users, log: Log) -> None:
    for code, lines in extra.items():
        product = Product.objects.get(code=code)
        current = Specification.objects.filter(product=product, status=SpecificationStatus.APPROVED).order_by("-version").first()
        if current is None or any(line.method_code.startswith("fac:") for line in current.lines.all()):
            continue
        with transaction.atomic():
            draft = specification_revise(
                users["manager"], current, effective_from=timezone.localdate(), lines=[*products[code]["lines"], *lines],
                note="Adds the fatty-acid composition (INVENTED DEMO DATA)",
            )
            approved = specification_approve(users["qa"], draft)
        log(f"  product {code}: specification v{approved.version} approved, with {', '.join(l['method'] for l in lines)}")


def _samples(lots: list[Mapping[str, Any]], users, log: Log) -> list[Test]:
    tests: list[Test] = []
    for spec in lots:
        if Lot.objects.filter(code=spec["code"]).exists():
            continue
        with transaction.atomic():
            lot = lot_create(
                users["manager"], code=spec["code"], product=Product.objects.get(code=spec["product"]), origin=spec["origin"],
                supplier=spec.get("supplier", ""), container_ref=spec.get("container_ref", ""),
                quantity_kg=spec.get("quantity_kg"), produced_on=timezone.localdate() - dt.timedelta(days=2),
            )
            sample = sample_receive(users["manager"], sample_register(users["manager"], lot, label=spec["sample"]),
                                    condition="sealed, clean, ambient", storage_place="Sample store, shelf C1")
            tests += test_assign_bulk(users["manager"], list(sample.tests.order_by("id")), assignee=users["analyst"])
        log(f"  lot {lot.code} ({spec['product']}, {lot.origin}): sample {sample.label} received, tests given to analyst")
    return tests


def _import(data: Mapping[str, Any], users, log: Log) -> None:
    for spec in data["mappings"]:
        if not ImportMapping.objects.filter(name=spec["name"]).exists():
            import_mapping_create(users["manager"], **spec)
    for name, mapping in ((data["gc_file"], data["mappings"][0]["name"]), (data["titrator_file"], data["mappings"][1]["name"])):
        path = FIXTURES / name
        outcome = results_import(users["analyst"], content=path.read_bytes(), file_name=path.name, mapping=mapping)
        done = outcome.result_import
        log(f"  {path.name} through \"{mapping}\": " + (
            "imported before, nothing entered" if outcome.replayed else f"{len(done.result_ids)} results from {done.rows} rows"))


def demo_composition_load(products: Mapping[str, Mapping[str, Any]], users: Mapping[str, Any], *, log: Log,
                          path: Path | str | None = None) -> None:
    """Load the composition demo; idempotent (an imported file is a replay, existing lots are skipped)."""
    data = json.loads(Path(path or COMPOSITION_FILE).read_text(encoding="utf-8"))
    _gc(data["gc_instrument"], users, log)
    _composition_lines(products, data["composition_lines"], users, log)
    _samples(data["lots"], users, log)
    _import(data, users, log)
    blend = Test.objects.filter(sample__label=data["lots"][-1]["sample"], method_code__startswith="fac:").first()
    if blend is not None and blend.review_warnings:
        log(f"  {blend.sample.label}: the identity screen warns on review: {blend.review_warnings[0]}")
