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
lab's client would. Each of ``--rounds`` rounds takes fresh tests and runs: the bulk endpoint in
batches of ``--batch``; right after it ``Result.objects.bulk_create`` of the same rows on another
set of tests; one instrument file of the same readings through the import; one POST per result.
The shared machine's speed drifts by half from one minute to the next, so the table gives each
path's median over the rounds with the range, and takes the ratio to the raw insert within each
round, where the two ran seconds apart.
"""
from __future__ import annotations

import copy
import datetime as dt
import json
import logging
import math
import os
import statistics
import time
import uuid
from contextlib import contextmanager
from pathlib import Path
from typing import Any

from django.conf import settings
from django.contrib.auth import get_user_model
from django.core.files.uploadedfile import SimpleUploadedFile
from django.core.management.base import BaseCommand, CommandError
from django.db import connection, transaction
from django.test.utils import override_settings
from django.utils import timezone

from analyses.benchmarks.dead_rows import dead_rows_warning
from analyses.models import (
    AuditChainHead, AuditEntry, Result, ResultInstrument, ResultUncertainty, Sample, SampleState, Test, TestState,
    TestUncertainty,
)
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
# the tables a run writes most to and rolls back (analyses.benchmarks.dead_rows)
WRITTEN_TABLES = tuple(
    model._meta.db_table
    for model in (AuditEntry, AuditChainHead, Result, ResultInstrument, ResultUncertainty, TestUncertainty, Test, Sample)
)
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
        "per request, as the median of --rounds rounds. Everything it writes is rolled back."
    )

    def add_arguments(self, parser) -> None:
        parser.add_argument("--results", type=int, default=500, help="results per path (default 500: 250 tests x 2)")
        parser.add_argument("--batch", type=int, default=100, help="results per bulk request (default 100)")
        parser.add_argument(
            "--rounds", type=int, default=3,
            help="times every path is run, on fresh tests each time (default 3); the table gives the median and the range",
        )

    def handle(self, *args, results: int, batch: int, rounds: int, **options) -> None:
        if results < 2:
            raise CommandError("--results must be at least 2")
        if not 1 <= batch <= 500:
            raise CommandError("--batch must be between 1 and 500 (the bulk endpoint's limit)")
        if not 1 <= rounds <= 20:
            raise CommandError("--rounds must be between 1 and 20")
        measured: list[dict[str, Timing]] = []
        dead = dead_rows_warning(WRITTEN_TABLES)
        if dead:
            self.stdout.write(dead)
        no_throttle = {**settings.REST_FRAMEWORK, "DEFAULT_THROTTLE_RATES": {"user": None, "anon": None}}
        access_log = logging.getLogger("labcore.access")  # one line per request would drown the progress
        level = access_log.level
        access_log.setLevel(logging.WARNING)
        try:
            with override_settings(ALLOWED_HOSTS=["testserver"], REST_FRAMEWORK=no_throttle):
                with transaction.atomic():
                    measured = self._run(results, batch, rounds)
                    raise _Rollback
        except _Rollback:
            pass
        finally:
            access_log.setLevel(level)
        self._report(measured, results, batch)

    # --- the run ------------------------------------------------------------------------
    def _run(self, count: int, batch: int, rounds: int) -> list[dict[str, Timing]]:
        from rest_framework.test import APIClient

        tag = uuid.uuid4().hex[:8]
        self._progress(f"seeding a lab (run {tag}, rolled back at the end); {rounds} round(s) of {count} results per path")
        users, trace = _seed_lab(tag)
        client = APIClient()
        client.credentials(HTTP_AUTHORIZATION=f"Token {token_issue(users['analyst']).secret}")
        mapping = import_mapping_create(users["manager"], name=f"IB-{tag} titrator", layout="titrator", columns=IMPORT_COLUMNS,
                                        default_instruments=trace["instruments"])

        # one request first, untimed: it loads what the first request loads, and writes the token's last use
        client.get("/api/methods/", secure=True)
        collector_settle()  # as labcore/wsgi.py settles a web worker once it is loaded
        return [
            self._round(number, rounds, users, trace, client, mapping.name, count, batch) for number in range(1, rounds + 1)
        ]

    def _round(self, number: int, rounds: int, users, trace, client, mapping: str, count: int, batch: int) -> dict[str, Timing]:
        """Every path once, on fresh tests. The bulk API and the raw insert of the same rows run
        one after the other, so that their ratio compares the machine in one state; the single
        posts, the longest path, come last."""
        where = f"round {number}/{rounds}"
        tests_per_path = math.ceil(count / 2)
        bulk_tests, single_tests, raw_tests = (_tests(users, tests_per_path) for _ in range(3))
        labels = _import_tests(users, tests_per_path, prefix=f"R{number}")
        timings: dict[str, Timing] = {}

        items = _items(bulk_tests, trace, count)
        entered: list[dict[str, Any]] = []
        timing = timings[BULK] = Timing()
        for first in range(0, count, batch):
            with timing.request():
                response = client.post("/api/results/bulk/", {"results": items[first:first + batch]}, format="json", secure=True)
            if response.status_code != 201:
                raise CommandError(f"bulk entry answered {response.status_code}: {response.content[:500]!r}")
            entered += response.json()
            self._progress(f"{where}: bulk API: {len(entered)}/{count} results")

        model_rows = _raw_rows(entered, raw_tests)
        timing = timings[RAW] = Timing()
        for first in range(0, count, batch):
            with timing.request():
                Result.objects.bulk_create(model_rows[first:first + batch])
        self._progress(f"{where}: raw bulk_create: {count}/{count} rows")

        # an instrument file (issue 11): the same readings as a titrator CSV, one file, one sample per test
        csv = _titrator_csv(labels, trace["titrant_lot"], count)
        timing = timings[IMPORT] = Timing()
        with timing.request():
            response = client.post("/api/imports/", {"file": SimpleUploadedFile(f"{labels[0]}.csv", csv, content_type="text/csv"),
                                                     "mapping": mapping}, format="multipart", secure=True)
        if response.status_code != 201:
            raise CommandError(f"the file import answered {response.status_code}: {response.content[:500]!r}")
        self._progress(f"{where}: file import: {len(response.json()['results'])}/{count} results from one CSV")

        timing = timings[SINGLE] = Timing()
        for done, item in enumerate(_items(single_tests, trace, count), start=1):
            with timing.request():
                response = client.post("/api/results/", item, format="json", secure=True)
            if response.status_code != 201:
                raise CommandError(f"single entry answered {response.status_code}: {response.content[:500]!r}")
            if done % max(1, count // 5) == 0 or done == count:
                self._progress(f"{where}: single posts: {done}/{count} results")
        return timings

    def _progress(self, line: str) -> None:
        self.stderr.write(f"  {line}")

    # --- the figures --------------------------------------------------------------------
    def _report(self, measured: list[dict[str, Timing]], count: int, batch: int) -> None:
        """Per path: the median of the rounds' rates, and their range; the ratio to the raw
        insert is taken in each round (the two ran one after the other) and its median shown."""
        header = ("Path", "Results", "Seconds", "Results/s", "x raw insert", "SQL queries per request")
        names = {RAW: "raw Result.objects.bulk_create", BULK: f"POST /api/results/bulk/, batches of {batch}",
                 SINGLE: "single POST /api/results/", IMPORT: "POST /api/imports/, one CSV file"}
        rate: dict[str, list[float]] = {path: [timings[path].rate(count) for timings in measured] for path in names}
        ratio: dict[str, list[float]] = {
            path: [raw / mine for raw, mine in zip(rate[RAW], rate[path])] for path in names
        }
        lines = []
        for path, name in names.items():
            queries = [q for timings in measured for q in timings[path].queries]
            spread = f"{min(queries)}" if min(queries) == max(queries) else f"{min(queries)}-{max(queries)}"
            # of an even number of rounds, the slower middle one: seconds and results/s then come from one round
            seconds = statistics.median_high(timings[path].seconds for timings in measured)
            times_raw = "1" if path == RAW else _median_and_range(ratio[path], "{:.1f}")
            lines.append((name, str(count), f"{seconds:.3f}", _median_and_range(rate[path], "{:,.0f}", statistics.median_low),
                          times_raw, spread))
        widths = [max(len(str(cell)) for cell in column) for column in zip(header, *lines)]
        out = self.stdout
        load = ", ".join(f"{x:.1f}" for x in os.getloadavg()) if hasattr(os, "getloadavg") else "unknown"
        out.write(
            f"Result entry on {connection.vendor} ({connection.settings_dict.get('NAME')}), {count} results per path, "
            f"{len(measured)} round(s): median (range); {os.cpu_count()} CPUs, load average {load}"
        )
        out.write("| " + " | ".join(h.ljust(w) for h, w in zip(header, widths)) + " |")
        out.write("|" + "|".join("-" * (w + 2) for w in widths) + "|")
        for line in lines:
            out.write("| " + " | ".join(cell.ljust(w) for cell, w in zip(line, widths)) + " |")
        bulk_rate, bulk_ratio = statistics.median_low(rate[BULK]), statistics.median(ratio[BULK])
        full = [q for timings in measured for q in timings[BULK].queries[: count // batch]]  # the last batch may be smaller
        constant = len(set(full or [q for timings in measured for q in timings[BULK].queries])) == 1
        out.write(
            f"Targets (issue 12): bulk API >= {TARGET_RATE:,} results/s: {'met' if bulk_rate >= TARGET_RATE else 'MISSED'} "
            f"({bulk_rate:,.0f}); within {TARGET_RATIO}x of the raw insert: "
            f"{'met' if bulk_ratio <= TARGET_RATIO else 'MISSED'} ({bulk_ratio:.1f}x); "
            f"queries per batch constant: {'yes' if constant else 'NO'} ({', '.join(map(str, measured[0][BULK].queries))})"
        )
        out.write("Nothing was kept: the run's rows were rolled back (commits are not timed).")


RAW, BULK, SINGLE, IMPORT = "raw", "bulk", "single", "import"


class Timing:
    """One path in one round: the time its requests took, and the SQL queries of each."""

    def __init__(self) -> None:
        self.seconds = 0.0
        self.queries: list[int] = []

    @contextmanager
    def request(self):
        with QueryCount() as captured:
            started = time.perf_counter()
            yield
            self.seconds += time.perf_counter() - started
        self.queries.append(captured.count)

    def rate(self, count: int) -> float:
        return count / self.seconds if self.seconds > 0 else float("inf")


def _median_and_range(values: list[float], form: str, median=statistics.median) -> str:
    middle = form.format(median(values))
    if len(values) == 1:
        return middle
    return f"{middle} ({form.format(min(values))}-{form.format(max(values))})"


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


def _import_tests(users: dict[str, Any], count: int, *, prefix: str) -> list[str]:
    """``count`` received samples of the run's lot, one assigned acid-value test each (a file's
    row names its test by sample and method), labelled with ``prefix``; their labels."""
    template_sample, template = users["sample"], users["template"]
    now = timezone.now()
    samples = Sample.objects.bulk_create([
        Sample(lot=template_sample.lot, label=f"{template_sample.label}-{prefix}-F{number}", state=SampleState.IN_TESTING,
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
