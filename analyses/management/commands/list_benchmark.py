"""Seed a large synthetic lab history and time the main list endpoints on it.

Everything happens in one transaction that is rolled back at the end, so nothing the run
writes stays: not the samples, not the audit entries (which the audit table's guard would
never let anyone delete), not the head of the audit chain. While it runs it holds the audit
chain's lock, so every other change to the database waits: run it on a scratch or staging
database. It refuses a production installation (``OLEOTRACE_PRODUCTION=1``) unless
``--force``.
"""
from __future__ import annotations

import time

from django.conf import settings
from django.core.management.base import BaseCommand, CommandError
from django.db import connection, transaction
from django.urls import get_resolver

from analyses.api.pagination import PageWithSize
from analyses.benchmarks.dead_rows import dead_rows_warning
from analyses.benchmarks.list_seed import analyze_tables, list_seed, open_sample_count
from analyses.benchmarks.list_timing import Measurement, explain_listings, measure_listings
from labcore.collector import collector_settle

TARGET_P95_MS = 50.0  # issue 12, on PostgreSQL


def table(measurements: list[Measurement]) -> list[str]:
    """The figures as a Markdown table (as the README quotes them)."""
    lines = [
        "| List | Rows on page | Rows in list | p50 ms | p95 ms | max ms | p50 SQL ms | p50 CPU ms | SQL queries per page |",
        "|---|---|---|---|---|---|---|---|---|",
    ]
    for m in measurements:
        lines.append(
            f"| {m.name} | {m.rows} | {m.total:,} | {m.p50_ms:.1f} | {m.p95_ms:.1f} | {m.max_ms:.1f} | "
            f"{m.sql_p50_ms:.1f} | {m.cpu_p50_ms:.1f} | {m.queries_label} |"
        )
    return lines


LISTED_TABLES = ("analyses_sample", "analyses_test", "analyses_result", "analyses_auditentry")


def _require_migrated() -> None:
    from django.db.migrations.executor import MigrationExecutor

    executor = MigrationExecutor(connection)
    if executor.migration_plan(executor.loader.graph.leaf_nodes()):
        raise CommandError("the database has unapplied migrations: run `python manage.py migrate` first")


class Command(BaseCommand):
    help = (
        "Seed N synthetic samples with their tests, results and audit entries, time the main list endpoints "
        "(p50/p95 ms, SQL queries per page), then roll everything back. For a scratch or staging database."
    )

    def add_arguments(self, parser):
        parser.add_argument("--samples", type=int, default=100_000, help="samples to seed (default 100000)")
        parser.add_argument("--repeat", type=int, default=30, help="timed requests per list (default 30)")
        parser.add_argument("--page-size", type=int, default=100, help="rows per page (default 100)")
        parser.add_argument(
            "--open-share", type=float, default=0.05,
            help="share of the newest samples still in testing, the rest released (default 0.05)",
        )
        parser.add_argument(
            "--explain", action="store_true",
            help="also print PostgreSQL's EXPLAIN ANALYZE of every SELECT one page of each list runs",
        )
        parser.add_argument(
            "--force", action="store_true",
            help="run even on a production installation (OLEOTRACE_PRODUCTION=1); other changes wait meanwhile",
        )

    def handle(self, *args, **options):
        samples, repeat, page_size = options["samples"], options["repeat"], options["page_size"]
        open_share = options["open_share"]
        if samples < 1:
            raise CommandError("--samples must be at least 1")
        if repeat < 1:
            raise CommandError("--repeat must be at least 1")
        if not 1 <= page_size <= PageWithSize.max_page_size:
            raise CommandError(f"--page-size must be between 1 and {PageWithSize.max_page_size}")
        if not 0 <= open_share <= 1:
            raise CommandError("--open-share must be between 0 and 1")
        if getattr(settings, "PRODUCTION", False) and not options["force"]:
            raise CommandError(
                "refusing to run on a production installation (OLEOTRACE_PRODUCTION=1): the run holds the audit "
                "chain's lock for its whole length, so every change waits. Use a scratch copy, or --force."
            )
        _require_migrated()
        say = self.stdout.write
        database = settings.DATABASES["default"]
        say(
            f"list_benchmark: {samples:,} samples ({open_sample_count(samples, open_share):,} in testing) on "
            f"{connection.vendor} (database {database.get('NAME')}), {repeat} timed requests per list, "
            f"page size {page_size}"
        )
        say("everything is written in one transaction, rolled back at the end: nothing stays")
        dead = dead_rows_warning(LISTED_TABLES)
        if dead:
            say(dead)
        started, started_cpu = time.perf_counter(), time.process_time()

        def seeded(done: int, total: int) -> None:
            say(f"seeding: {done:,} / {total:,} samples ({time.perf_counter() - started:.1f} s)")

        def measured(m: Measurement) -> None:
            say(f"timed {m.name}: p50 {m.p50_ms:.1f} ms, p95 {m.p95_ms:.1f} ms, {m.queries_label} queries ({m.example})")

        with transaction.atomic():
            scope = list_seed(samples, open_share=open_share, progress=seeded)
            seconds = time.perf_counter() - started
            say(
                "seeded " + ", ".join(f"{count:,} {name}" for name, count in scope.rows.items())
                + f" in {seconds:.1f} s ({scope.rows['samples'] / seconds:,.0f} samples/s; this process's CPU "
                f"{time.process_time() - started_cpu:.1f} s, the rest the database or waiting for a core), "
                f"scope {scope.prefix}"
            )
            analyze_tables()
            # the requests are timed in a process settled as labcore/wsgi.py settles a web worker: every
            # view loaded, then the collector's start-up set frozen (labcore/collector.py)
            get_resolver().url_patterns
            collector_settle()
            measurements = measure_listings(scope, repeat=repeat, page_size=page_size, progress=measured)
            if options["explain"]:
                self._explain(scope, page_size)
            transaction.set_rollback(True)
        say("rolled back: the seeded rows are gone")
        say("")
        for line in table(measurements):
            say(line)
        say("")
        slow = [m.name for m in measurements if m.p95_ms >= TARGET_P95_MS]
        verdict = "every list" if not slow else f"{len(measurements) - len(slow)} of {len(measurements)} lists; over: {', '.join(slow)}"
        say(f"target p95 < {TARGET_P95_MS:.0f} ms (issue 12, on PostgreSQL): {verdict}")

    def _explain(self, scope, page_size: int) -> None:
        say = self.stdout.write
        if connection.vendor != "postgresql":
            say("--explain: only on PostgreSQL; skipped")
            return
        for name, queries in explain_listings(scope, page_size=page_size):
            say(f"== plans of {name} ==")
            for sql, plan in queries:
                say(f"-- {sql[:300]}{' ...' if len(sql) > 300 else ''}")
                for line in plan:
                    say(f"   {line}")
