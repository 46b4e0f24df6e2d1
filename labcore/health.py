"""Liveness and readiness for load balancers and orchestrators; no authentication, and no
detail beyond ok or failed per component (an error text could reveal hosts or versions).

GET /healthz   the process answers.
GET /readyz    the database answers, every migration is applied, the broker accepts a
               connection (503 if any fails); and the age of the Celery worker's heartbeat,
               reported, not required: the web keeps serving while a worker restarts.
"""
from __future__ import annotations

import logging

from django.conf import settings
from django.db import DEFAULT_DB_ALIAS, connections
from django.db.migrations.executor import MigrationExecutor
from django.http import JsonResponse
from django.views.decorators.cache import never_cache
from django.views.decorators.http import require_safe

from labcore.heartbeat import heartbeat_age

logger = logging.getLogger(__name__)
_migrations_applied = False  # once true in this process it stays so: cache the graph walk


@require_safe
@never_cache
def healthz(request):
    return JsonResponse({"status": "ok"})


def database_ok() -> bool:
    with connections[DEFAULT_DB_ALIAS].cursor() as cursor:
        cursor.execute("SELECT 1")
        return cursor.fetchone() == (1,)


def migrations_ok() -> bool:
    global _migrations_applied
    if not _migrations_applied:
        executor = MigrationExecutor(connections[DEFAULT_DB_ALIAS])
        _migrations_applied = not executor.migration_plan(executor.loader.graph.leaf_nodes())
    return _migrations_applied


def broker_ok() -> bool:
    from labcore.celery import app

    with app.connection_for_write() as connection:
        connection.ensure_connection(max_retries=1, timeout=2)
    return True


def _check(name: str, probe) -> str:
    try:
        return "ok" if probe() else "failed"
    except Exception:  # the component is down: say so, log why, never a 500
        logger.warning("readiness check %s failed", name, exc_info=True)
        return "failed"


@require_safe
@never_cache
def readyz(request):
    checks = {"database": _check("database", database_ok)}
    checks["migrations"] = _check("migrations", migrations_ok) if checks["database"] == "ok" else "failed"
    checks["broker"] = _check("broker", broker_ok)
    ready = all(state == "ok" for state in checks.values())
    age = heartbeat_age()
    fresh = age is not None and age <= settings.WORKER_HEARTBEAT_STALE_SECONDS
    body = {
        "status": "ok" if ready else "failed",
        "checks": {**checks, "worker": "ok" if fresh else "failed"},
        "worker_heartbeat_age_seconds": None if age is None else round(age, 1),
    }
    return JsonResponse(body, status=200 if ready else 503)
