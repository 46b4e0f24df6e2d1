"""Prometheus metrics of the service (prometheus-client), and the helpers services call.

Counters of lab events are incremented after the commit (``count_on_commit``), so a rolled
back entry is never counted. With several processes (gunicorn workers, Celery prefork
children) set ``PROMETHEUS_MULTIPROC_DIR`` to one directory shared by the web and worker
processes of a host: each process writes its own file there and ``/metrics`` adds them up.
"""
from __future__ import annotations

import os
from pathlib import Path

from django.db import transaction
from prometheus_client import Counter, Histogram

if os.environ.get("PROMETHEUS_MULTIPROC_DIR"):
    # each process writes its file there from its first metric on; a missing directory would stop it
    Path(os.environ["PROMETHEUS_MULTIPROC_DIR"]).mkdir(parents=True, exist_ok=True)

RESULTS_ENTERED = Counter(
    "oleotrace_results_entered",
    "Results (replicates) entered, corrections (before and after release) included; derived results (TOTOX) are worked out, not entered, and not counted",
)
OOS_OPENED = Counter(
    "oleotrace_oos_investigations_opened",
    "OOS investigations opened: on acceptance, on a released lot, or after a correction after release",
)
ALERTS_RAISED = Counter("oleotrace_alerts_raised", "Alerts raised, one per rule episode", ["source"])
ALERT_DELIVERIES = Counter(
    "oleotrace_alert_deliveries", "Alert delivery attempts by channel and outcome", ["channel", "outcome"]
)
REQUEST_LATENCY = Histogram(
    "oleotrace_http_request_duration_seconds", "Time to answer a request, by route pattern",
    ["method", "route", "status"],
    buckets=(0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 1.0, 2.5, 5.0, 10.0),
)
TASK_RUNTIME = Histogram(
    "oleotrace_task_duration_seconds", "Celery task run time", ["task", "state"],
    buckets=(0.01, 0.05, 0.1, 0.5, 1.0, 5.0, 15.0, 60.0, 300.0, 900.0),
)
TASK_FAILURES = Counter("oleotrace_task_failures", "Celery tasks that raised", ["task"])


def count_on_commit(counter, amount: float = 1, **labels: str) -> None:
    """Add ``amount`` to ``counter`` once the current transaction commits (at once outside one)."""
    target = counter.labels(**labels) if labels else counter
    transaction.on_commit(lambda: target.inc(amount))
