"""Timing the main list endpoints through the API, in process, as a signed-in user of the
role that uses each list, and counting the SQL queries each page runs."""
from __future__ import annotations

import logging
import statistics
import time
from collections import Counter
from collections.abc import Callable
from contextlib import contextmanager
from dataclasses import dataclass

from django.conf import settings
from django.db import connection
from django.test.utils import override_settings
from rest_framework.test import APIClient

from analyses.benchmarks.list_seed import SeedScope
from analyses.services.tokens import token_issue

# a rate the benchmark never reaches: the throttle still runs (and costs what it costs), but
# does not answer 429 halfway through
UNREACHED_RATE = "1000000/minute"


@dataclass(frozen=True)
class Listing:
    """One list endpoint: its name in the table, who asks for it, and the path of the n-th
    request (the per-object lists rotate through different objects)."""

    name: str
    role: str
    path: Callable[[SeedScope, int], str]


def _pick(ids: list[int], n: int) -> int:
    """The n-th target, spread over the whole history (old and new objects alike)."""
    return ids[(n * 7919) % len(ids)]


LISTINGS: tuple[Listing, ...] = (
    Listing("samples", "manager", lambda scope, n: "/api/samples/"),
    Listing("samples in testing", "manager", lambda scope, n: "/api/samples/?state=in_testing"),
    Listing("tests", "manager", lambda scope, n: "/api/tests/"),
    Listing("tests assigned to an analyst", "manager",
            lambda scope, n: f"/api/tests/?state=assigned&assignee={scope.users['analyst1'].pk}"),
    Listing("work queue (av)", "analyst1", lambda scope, n: "/api/tests/queue/av/"),
    Listing("my queue", "analyst1", lambda scope, n: "/api/tests/mine/"),
    Listing("review queue", "analyst1", lambda scope, n: "/api/tests/review/"),
    Listing("results of a test", "analyst1",
            lambda scope, n: f"/api/tests/{_pick(scope.tests_with_results, n)}/results/"),
    Listing("sample audit trail", "qa", lambda scope, n: f"/api/samples/{_pick(scope.sample_ids, n)}/audit-trail/"),
    Listing("lot audit trail", "qa", lambda scope, n: f"/api/lots/{_pick(scope.lot_ids, n)}/audit-trail/"),
)


@dataclass(frozen=True)
class Measurement:
    name: str
    example: str  # the first timed request's path
    rows: int  # rows on the last page served
    total: int  # rows the list holds (its "count")
    p50_ms: float
    p95_ms: float
    max_ms: float
    sql_p50_ms: float  # of the wall time: waiting for the database
    cpu_p50_ms: float  # of the wall time: this process's CPU (the rest: waiting for a core, or the database)
    queries: tuple[int, ...]  # per timed request

    @property
    def queries_label(self) -> str:
        """The usual count per page; "9 (10 once)" style when a request ran more (a token's
        once-a-minute "last used" write)."""
        usual, _ = Counter(self.queries).most_common(1)[0]
        others = sorted(set(self.queries) - {usual})
        if not others:
            return str(usual)
        return f"{usual} ({', '.join(f'{q} x{self.queries.count(q)}' for q in others)})"

    @property
    def usual_queries(self) -> int:
        return Counter(self.queries).most_common(1)[0][0]


def percentile(values: list[float], share: int) -> float:
    """The ``share``-th percentile, interpolated between the nearest ranks (statistics'
    "inclusive" method; numpy's default gives the same)."""
    if len(values) == 1:
        return values[0]
    return statistics.quantiles(values, n=100, method="inclusive")[share - 1]


class _QueryCounter:
    """Counts the SQL statements a request runs and the time spent waiting for them."""

    def __init__(self):
        self.count = 0
        self.seconds = 0.0

    def __call__(self, execute, sql, params, many, context):
        self.count += 1
        started = time.perf_counter()
        try:
            return execute(sql, params, many, context)
        finally:
            self.seconds += time.perf_counter() - started


def _clients(scope: SeedScope, purpose: str) -> dict[str, APIClient]:
    clients = {}
    for role, user in scope.users.items():
        client = APIClient()
        client.credentials(HTTP_AUTHORIZATION=f"Token {token_issue(user, name=f'list benchmark {purpose}').secret}")
        clients[role] = client
    return clients


@contextmanager
def _quiet_access_log():
    """One access line per request would bury the progress lines; the figures leave logging out."""
    logger = logging.getLogger("labcore.access")
    level = logger.level
    logger.setLevel(logging.WARNING)
    try:
        yield
    finally:
        logger.setLevel(level)


def _benchmark_settings():
    framework = dict(settings.REST_FRAMEWORK)
    framework["DEFAULT_THROTTLE_RATES"] = {**framework.get("DEFAULT_THROTTLE_RATES", {}), "user": UNREACHED_RATE}
    # the in-process client calls itself "testserver"; production settings would refuse that name
    return override_settings(REST_FRAMEWORK=framework, ALLOWED_HOSTS=[*settings.ALLOWED_HOSTS, "testserver"])


def measure_listings(
    scope: SeedScope, *, repeat: int, page_size: int, listings: tuple[Listing, ...] = LISTINGS,
    progress: Callable[[Measurement], None] | None = None,
) -> list[Measurement]:
    """Each listing: one untimed request first (warms caches, notes the token's first use),
    then ``repeat`` timed requests, each counted in SQL queries."""
    measurements = []
    with _benchmark_settings(), _quiet_access_log():
        clients = _clients(scope, "timing")
        for listing in listings:
            client = clients[listing.role]
            _checked(client.get(_paged(listing.path(scope, repeat), page_size), secure=True))  # warm-up
            timings, sql, cpu, queries = [], [], [], []
            response = None
            for n in range(repeat):
                path = _paged(listing.path(scope, n), page_size)
                counter = _QueryCounter()
                with connection.execute_wrapper(counter):
                    started, started_cpu = time.perf_counter(), time.process_time()
                    response = client.get(path, secure=True)
                    timings.append((time.perf_counter() - started) * 1000)
                    cpu.append((time.process_time() - started_cpu) * 1000)
                sql.append(counter.seconds * 1000)
                queries.append(counter.count)
                _checked(response, path)
            body = response.json()
            measurement = Measurement(
                name=listing.name, example=_paged(listing.path(scope, 0), page_size),
                rows=len(body["results"]), total=body["count"],
                p50_ms=percentile(timings, 50), p95_ms=percentile(timings, 95), max_ms=max(timings),
                sql_p50_ms=percentile(sql, 50), cpu_p50_ms=percentile(cpu, 50),
                queries=tuple(queries),
            )
            measurements.append(measurement)
            if progress:
                progress(measurement)
    return measurements


def explain_listings(
    scope: SeedScope, *, page_size: int, listings: tuple[Listing, ...] = LISTINGS,
) -> list[tuple[str, list[tuple[str, list[str]]]]]:
    """PostgreSQL's EXPLAIN ANALYZE of every SELECT one page of each listing runs: [(listing,
    [(sql, plan lines)])]. What to read when a list is slow: a Seq Scan or a Sort over the
    whole table where an index would give the page's rows in order."""
    from django.test.utils import CaptureQueriesContext

    plans = []
    with _benchmark_settings(), _quiet_access_log():
        clients = _clients(scope, "plans")
        for listing in listings:
            path = _paged(listing.path(scope, 0), page_size)
            with CaptureQueriesContext(connection) as captured:
                _checked(clients[listing.role].get(path, secure=True), path)
            explained = []
            with connection.cursor() as cursor:
                for query in captured.captured_queries:
                    sql = query["sql"]
                    if not sql.lstrip().upper().startswith("SELECT"):
                        continue
                    cursor.execute(f"EXPLAIN (ANALYZE, BUFFERS) {sql}")
                    explained.append((sql, [row[0] for row in cursor.fetchall()]))
            plans.append((listing.name, explained))
    return plans


def _paged(path: str, page_size: int) -> str:
    return f"{path}{'&' if '?' in path else '?'}page_size={page_size}"


def _checked(response, path: str = "") -> None:
    if response.status_code != 200:
        raise RuntimeError(f"GET {path or response.request['PATH_INFO']} answered {response.status_code}: "
                           f"{response.content[:300]!r}")
