"""How fast results go in: the bulk API, single posts, and a raw insert of the same rows.

Runs on whatever DATABASE_URL names (the README's figures come from PostgreSQL). Everything
the run creates (users, a product, a specification, a lot, a sample, its acid-value tests, the
titrant lots and instruments, the results and their audit entries) is made inside ONE
transaction that is rolled back at the end: nothing is kept, whatever the database. The audit
table refuses deletes, so a roll-back is the only clean-up that leaves no trace. Two things
follow: commits (and their disk flushes) are not timed, and the run holds the audit chain's
lock until it ends, so run it on a quiet database or a copy.

The API is driven through DRF's APIClient with a real token, so authentication, parsing,
validation, serialisation and the middleware all count. Entry goes through the services as a
lab's client would: the bulk endpoint in batches of ``--batch``, then one POST per result on
fresh tests, then ``Result.objects.bulk_create`` of the same rows on a third set of tests.
"""
from __future__ import annotations

import copy
import datetime as dt
import json
import logging
import math
import os
import time
import uuid
from pathlib import Path
from typing import Any

from django.conf import settings
from django.contrib.auth import get_user_model
from django.core.files.uploadedfile import SimpleUploadedFile
from django.core.management.base import BaseCommand, CommandError
from django.db import connection, transaction
from django.test.utils import override_settings
from django.utils import timezone

from analyses.models import Result, Sample, SampleState, Test, TestState
from analyses.roles import ANALYST, LAB_MANAGER, QA_REVIEWER, roles_ensure
from analyses.services.demo_bench import demo_bench_load
from analyses.services.imports import import_mapping_create
from analyses.services.lots import lot_create
from analyses.services.products import product_create
from analyses.services.samples import sample_receive, sample_register
from analyses.services.specifications import specification_approve, specification_create
from analyses.services.tokens import token_issue
from labcore.collector import collector_settle

BENCH_FIXTURE = Path(settings.BASE_DIR) / "fixtures" / "demo_refinery.json"
# ISO 660 acid value with KOH 0.1 mol/L: two replicates that agree (invented readings)
AV_INPUTS = (
    {"sample_mass": "20.0", "sample_volume": "1.30", "blank_volume": "0.05"},
    {"sample_mass": "20.0", "sample_volume": "1.33", "blank_volume": "0.05"},
)
TITRANT_LOT = "MV-KOH-0.1-2611"  # the demo bench's usable KOH lot, renamed for the run
TARGET_RATE = 1000  # results/s through the bulk API (issue 12)
TARGET_RATIO = 5  # at most this many times slower than the raw insert


class QueryCount:
    """Counts the SQL statements run inside it. Django's CaptureQueriesContext would also keep
    each statement's text, which costs time inside the figures being measured."""

    def __init__(self) -> None:
        self.count = 0

    def __call__(self, execute, sql, params, many, context):
        self.count += 1
        return execute(sql, params, many, context)

    def __enter__(self) -> "QueryCount":
        self._wrapped = connection.execute_wrapper(self)
        self._wrapped.__enter__()
        return self

    def __exit__(self, *exc) -> None:
        self._wrapped.__exit__(*exc)


class _Rollback(Exception):
    """Ends the run's transaction: everything it wrote is undone."""


class Command(BaseCommand):
    help = (
        "Time result entry: POST /api/results/bulk/ in batches, single POST /api/results/, and a raw "
        "bulk_create of the same rows, and one instrument file of them through POST /api/imports/; prints results/s, the ratio to the raw insert and the SQL queries "
        "per request. Everything it writes is rolled back."
    )

    def add_arguments(self, parser) -> None:
        parser.add_argument("--results", type=int, default=500, help="results per path (default 500: 250 tests x 2)")
        parser.add_argument("--batch", type=int, default=100, help="results per bulk request (default 100)")

    def handle(self, *args, results: int, batch: int, **options) -> None:
        if results < 2:
            raise CommandError("--results must be at least 2")
        if not 1 <= batch <= 500:
            raise CommandError("--batch must be between 1 and 500 (the bulk endpoint's limit)")
        rows: list[tuple[str, int, float, list[int]]] = []
        no_throttle = {**settings.REST_FRAMEWORK, "DEFAULT_THROTTLE_RATES": {"user": None, "anon": None}}
        access_log = logging.getLogger("labcore.access")  # one line per request would drown the progress
        level = access_log.level
        access_log.setLevel(logging.WARNING)
        try:
            with override_settings(ALLOWED_HOSTS=["testserver"], REST_FRAMEWORK=no_throttle):
                with transaction.atomic():
                    rows = self._run(results, batch)
                    raise _Rollback
        except _Rollback:
            pass
        finally:
            access_log.setLevel(level)
        self._report(rows, results, batch)

    # --- the run ------------------------------------------------------------------------
    def _run(self, count: int, batch: int) -> list[tuple[str, int, float, list[int]]]:
        from rest_framework.test import APIClient

        tag = uuid.uuid4().hex[:8]
        self._progress(f"seeding {count} results' worth of tests three times over (run {tag}, rolled back at the end)")
        users, trace = _seed_lab(tag)
        tests_per_path = math.ceil(count / 2)
        bulk_tests, single_tests, raw_tests = (_tests(users, tests_per_path) for _ in range(3))
        client = APIClient()
        client.credentials(HTTP_AUTHORIZATION=f"Token {token_issue(users['analyst']).secret}")

        # one request first, untimed: it loads what the first request loads, and writes the token's last use
        client.get("/api/methods/", secure=True)
        collector_settle()  # as labcore/wsgi.py settles a web worker once it is loaded
        items = _items(bulk_tests, trace, count)
        bulk_queries: list[int] = []
        entered: list[dict[str, Any]] = []
        started = time.perf_counter()
        for first in range(0, count, batch):
            with QueryCount() as captured:
                response = client.post("/api/results/bulk/", {"results": items[first:first + batch]}, format="json", secure=True)
            if response.status_code != 201:
                raise CommandError(f"bulk entry answered {response.status_code}: {response.content[:500]!r}")
            bulk_queries.append(captured.count)
            entered += response.json()
            self._progress(f"bulk API: {len(entered)}/{count} results")
        bulk_seconds = time.perf_counter() - started

        single_queries: list[int] = []
        started = time.perf_counter()
        for number, item in enumerate(_items(single_tests, trace, count), start=1):
            with QueryCount() as captured:
                response = client.post("/api/results/", item, format="json", secure=True)
            if response.status_code != 201:
                raise CommandError(f"single entry answered {response.status_code}: {response.content[:500]!r}")
            single_queries.append(captured.count)
            if number % max(1, count // 5) == 0 or number == count:
                self._progress(f"single posts: {number}/{count} results")
        single_seconds = time.perf_counter() - started

        model_rows = _raw_rows(entered, raw_tests)
        raw_queries: list[int] = []
        started = time.perf_counter()
        for first in range(0, count, batch):
            with QueryCount() as captured:
                Result.objects.bulk_create(model_rows[first:first + batch])
            raw_queries.append(captured.count)
        raw_seconds = time.perf_counter() - started
        self._progress(f"raw bulk_create: {count}/{count} rows")

        # an instrument file (issue 11): the same readings as a titrator CSV, one file, one sample per test
        labels = _import_tests(users, tests_per_path)
        mapping = import_mapping_create(users["manager"], name=f"IB-{tag} titrator", layout="titrator", columns=IMPORT_COLUMNS,
                                        default_instruments=trace["instruments"])
        csv = _titrator_csv(labels, trace["titrant_lot"], count)
        started = time.perf_counter()
        with QueryCount() as captured:
            response = client.post("/api/imports/", {"file": SimpleUploadedFile(f"IB-{tag}.csv", csv, content_type="text/csv"),
                                                     "mapping": mapping.name}, format="multipart", secure=True)
        import_seconds = time.perf_counter() - started
        if response.status_code != 201:
            raise CommandError(f"the file import answered {response.status_code}: {response.content[:500]!r}")
        self._progress(f"file import: {len(response.json()['results'])}/{count} results from one CSV")
        return [
            ("raw Result.objects.bulk_create", count, raw_seconds, raw_queries),
            (f"POST /api/results/bulk/, batches of {batch}", count, bulk_seconds, bulk_queries),
            ("single POST /api/results/", count, single_seconds, single_queries),
            ("POST /api/imports/, one CSV file", count, import_seconds, [captured.count]),
        ]

    def _progress(self, line: str) -> None:
        self.stderr.write(f"  {line}")

    # --- the figures --------------------------------------------------------------------
    def _report(self, rows: list[tuple[str, int, float, list[int]]], count: int, batch: int) -> None:
        raw_rate = count / rows[0][2] if rows and rows[0][2] > 0 else float("inf")
        header = ("Path", "Results", "Seconds", "Results/s", "x raw insert", "SQL queries per request")
        lines = []
        for name, n, seconds, queries in rows:
            rate = n / seconds if seconds > 0 else float("inf")
            spread = f"{min(queries)}" if min(queries) == max(queries) else f"{min(queries)}-{max(queries)}"
            lines.append((name, str(n), f"{seconds:.3f}", f"{rate:,.0f}", f"{raw_rate / rate:.1f}", spread))
        widths = [max(len(str(cell)) for cell in column) for column in zip(header, *lines)]
        out = self.stdout
        load = ", ".join(f"{x:.1f}" for x in os.getloadavg()) if hasattr(os, "getloadavg") else "unknown"
        out.write(
            f"Result entry on {connection.vendor} ({connection.settings_dict.get('NAME')}), {count} results per path; "
            f"{os.cpu_count()} CPUs, load average {load}"
        )
        out.write("| " + " | ".join(h.ljust(w) for h, w in zip(header, widths)) + " |")
        out.write("|" + "|".join("-" * (w + 2) for w in widths) + "|")
        for line in lines:
            out.write("| " + " | ".join(cell.ljust(w) for cell, w in zip(line, widths)) + " |")
        bulk = rows[1]
        bulk_rate = bulk[1] / bulk[2] if bulk[2] > 0 else float("inf")
        full = bulk[3][: count // batch]  # full batches only: the last one may be smaller
        constant = len(set(full or bulk[3])) == 1
        out.write(
            f"Targets (issue 12): bulk API >= {TARGET_RATE:,} results/s: {'met' if bulk_rate >= TARGET_RATE else 'MISSED'} "
            f"({bulk_rate:,.0f}); within {TARGET_RATIO}x of the raw insert: "
            f"{'met' if raw_rate / bulk_rate <= TARGET_RATIO else 'MISSED'} ({raw_rate / bulk_rate:.1f}x); "
            f"queries per batch constant: {'yes' if constant else 'NO'} ({', '.join(map(str, bulk[3]))})"
        )
        out.write("Nothing was kept: the run's rows were rolled back (commits are not timed).")


def _seed_lab(tag: str) -> tuple[dict[str, Any], dict[str, Any]]:
    """Users, an approved acid-value specification, an open lot, a received sample, and the
    demo bench's instruments and titrant lots under names of this run."""
    groups = roles_ensure()
    User = get_user_model()
    users = {}
    for role, group in (("manager", LAB_MANAGER), ("analyst", ANALYST), ("qa", QA_REVIEWER)):
        user = User.objects.create_user(username=f"ingest-bench-{role}-{tag}", password=None)
        user.groups.add(groups[group])
        users[role] = user
    bench = _renamed_bench(tag)
    demo_bench_load(bench, users, log=lambda line: None)
    product = product_create(users["manager"], code=f"IB-{tag}", name=f"Ingest benchmark oil {tag} (rolled back)", oil_type="soybean")
    draft = specification_create(
        users["manager"], product, effective_from=timezone.localdate() - dt.timedelta(days=1),
        lines=[{"method": "av", "codex_oil_type": "refined"}],
    )
    specification_approve(users["qa"], draft)
    lot = lot_create(users["manager"], code=f"IB-{tag}", product=product, origin="production")
    sample = sample_register(users["manager"], lot, label=f"IB-{tag}-1")
    users["sample"] = sample_receive(users["manager"], sample, condition="sealed", storage_place="benchmark")
    users["template"] = Test.objects.get(sample=users["sample"], method_code="av")
    trace = {"titrant_lot": f"IB-{tag}-{TITRANT_LOT}", "instruments": bench["instruments_for"]["titration"]}
    return users, trace


def _renamed_bench(tag: str) -> dict[str, Any]:
    """The demo bench with every asset id and lot code prefixed by the run's tag, so that it
    never meets a real lab's (or the demo's) instruments and lots."""
    bench = copy.deepcopy(json.loads(BENCH_FIXTURE.read_text())["bench"])
    for spec in bench["instruments"]:
        spec["asset_id"] = f"IB-{tag}-{spec['asset_id']}"
    for spec in bench["reagent_lots"]:
        spec["code"] = f"IB-{tag}-{spec['code']}"
    bench["instruments_for"] = {k: [f"IB-{tag}-{a}" for a in v] for k, v in bench["instruments_for"].items()}
    return bench


def _tests(users: dict[str, Any], count: int) -> list[Test]:
    """``count`` acid-value tests on the run's sample, assigned to its analyst."""
    template = users["template"]
    now = timezone.now()
    return Test.objects.bulk_create(
        [
            Test(
                sample=users["sample"], specification_line=template.specification_line, method_code="av", replicates=2,
                priority=template.priority, due_on=template.due_on, state=TestState.ASSIGNED, assignee=users["analyst"],
                assigned_at=now, created_at=now,
            )
            for _ in range(count)
        ]
    )


IMPORT_COLUMNS = {"sample": "Sample", "method": "Method", "titre": "Titre (mL)", "blank": "Blank (mL)",
                  "sample_mass": "Portion (g)", "titrant_lot": "Titrant lot"}


def _import_tests(users: dict[str, Any], count: int) -> list[str]:
    """``count`` received samples of the run's lot, one assigned acid-value test each (a file's
    row names its test by sample and method); their labels."""
    template_sample, template = users["sample"], users["template"]
    now = timezone.now()
    samples = Sample.objects.bulk_create([
        Sample(lot=template_sample.lot, label=f"{template_sample.label}-F{number}", state=SampleState.IN_TESTING,
               specification=template_sample.specification, registered_by=users["manager"], registered_at=now,
               received_by=users["manager"], received_at=now)
        for number in range(count)
    ])
    Test.objects.bulk_create([
        Test(sample=sample, specification_line=template.specification_line, method_code="av", replicates=2,
             priority=template.priority, due_on=template.due_on, state=TestState.ASSIGNED, assignee=users["analyst"],
             assigned_at=now, created_at=now)
        for sample in samples
    ])
    return [sample.label for sample in samples]


def _titrator_csv(labels: list[str], titrant_lot: str, count: int) -> bytes:
    heading = ",".join(IMPORT_COLUMNS.values())
    rows = [f"{label},av,{inputs['sample_volume']},{inputs['blank_volume']},{inputs['sample_mass']},{titrant_lot}"
            for label in labels for inputs in AV_INPUTS][:count]
    return ("\n".join([heading, *rows]) + "\n").encode()


def _items(tests: list[Test], trace: dict[str, Any], count: int) -> list[dict[str, Any]]:
    return [{"test": test.pk, "inputs": inputs, **trace} for test in tests for inputs in AV_INPUTS][:count]


def _raw_rows(entered: list[dict[str, Any]], tests: list[Test]) -> list[Result]:
    """The bulk-entered results as plain rows on ``tests``: the same values, one insert per batch."""
    analyst = tests[0].assignee
    fields = (
        "replicate", "inputs", "value", "value_exact", "reported", "unit", "method_code", "method_version", "verdict",
        "duplicate_check", "titrant_concentration", "titrant_uncertainty",
    )
    stored = {r.pk: r for r in Result.objects.filter(pk__in=[row["id"] for row in entered])}
    rows = []
    for number, row in enumerate(entered):
        source = stored[row["id"]]
        rows.append(
            Result(
                test=tests[number // 2], entered_by=analyst, entered_at=timezone.now(), reagent_lot_id=source.reagent_lot_id,
                standardisation_id=source.standardisation_id, **{name: getattr(source, name) for name in fields},
            )
        )
    return rows
