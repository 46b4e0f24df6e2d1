"""Request latency by route, and the ``/metrics`` page in Prometheus' text format.

``/metrics`` answers only when METRICS_ENABLED is on (404 otherwise), and, when
METRICS_TOKEN is set, only to ``Authorization: Bearer <token>``. Besides the counters of
``labcore.metrics`` it reports, read at scrape time, the depth of the Celery queues when
the broker is Redis (other brokers do not tell) and the age of the worker's heartbeat.
"""
from __future__ import annotations

import hmac
import logging
import os
import time

from django.conf import settings
from django.http import Http404, HttpResponse
from django.views.decorators.cache import never_cache
from prometheus_client import CONTENT_TYPE_LATEST, REGISTRY, CollectorRegistry, generate_latest
from prometheus_client.core import GaugeMetricFamily

from labcore.heartbeat import heartbeat_age
from labcore.metrics import REQUEST_LATENCY

access_log = logging.getLogger("labcore.access")
QUIET_PATHS = {"/healthz", "/readyz", "/metrics"}  # probed every few seconds: measured, not logged
# kombu's Redis transport keeps a queue's messages of priority n in "<queue>\x06\x16<n>" (0 in "<queue>")
PRIORITY_SEPARATOR = "\x06\x16"


def _route(request) -> str:
    match = getattr(request, "resolver_match", None)
    if match is not None and match.route:
        return match.route
    return "static" if request.path.startswith(f"/{settings.STATIC_URL.lstrip('/')}") else "<unmatched>"


class RequestMetricsMiddleware:
    """Times each request under its route pattern (``api/samples/<int:pk>/``, not the path, so
    the label set stays small) and logs one line per request with status, time and user id."""

    def __init__(self, get_response):
        self.get_response = get_response

    def __call__(self, request):
        started = time.perf_counter()
        response = self.get_response(request)
        elapsed = time.perf_counter() - started
        route = _route(request)
        REQUEST_LATENCY.labels(request.method, route, str(response.status_code)).observe(elapsed)
        if request.path not in QUIET_PATHS:
            user = getattr(request, "user", None)  # DRF puts the token's user here too
            access_log.info(
                "%s %s %s", request.method, route, response.status_code,
                extra={
                    "http_method": request.method, "route": route, "status": response.status_code,
                    "duration_ms": round(elapsed * 1000, 1),
                    "user_id": user.pk if user is not None and user.is_authenticated else None,
                },
            )
        return response


class LiveCollector:
    """Gauges read when scraped: queue depth (Redis broker only) and worker heartbeat age."""

    def collect(self):
        age = heartbeat_age()
        heartbeat = GaugeMetricFamily(
            "oleotrace_worker_heartbeat_age_seconds", "Seconds since a Celery worker last wrote its heartbeat"
        )
        if age is not None:
            heartbeat.add_metric([], age)
        yield heartbeat
        depths = queue_depths()
        if depths is not None:
            gauge = GaugeMetricFamily("oleotrace_queue_depth", "Messages waiting in a Celery queue", labels=["queue"])
            for queue, depth in depths.items():
                gauge.add_metric([queue], depth)
            yield gauge


def queue_depths() -> dict[str, int] | None:
    """Messages waiting per queue, or None when the broker cannot tell (not Redis, or down)."""
    if not settings.REDIS_URL:
        return None
    import redis

    from labcore.celery import app

    queues = {q.name for q in (app.conf.task_queues or [])} or {app.conf.task_default_queue}
    try:
        client = redis.Redis.from_url(settings.REDIS_URL, socket_connect_timeout=2, socket_timeout=2)
        steps = app.conf.broker_transport_options.get("priority_steps", [0, 3, 6, 9])
        depths = {}
        for queue in sorted(queues):
            keys = [queue, *(f"{queue}{PRIORITY_SEPARATOR}{step}" for step in steps if step)]
            depths[queue] = sum(client.llen(key) for key in keys)
        return depths
    except redis.RedisError:
        return None


def _authorised(request) -> bool:
    token = settings.METRICS_TOKEN
    if not token:
        return True
    given = request.headers.get("Authorization", "")
    return hmac.compare_digest(given.encode(), f"Bearer {token}".encode())


@never_cache
def metrics(request):
    if not settings.METRICS_ENABLED:
        raise Http404
    if not _authorised(request):
        return HttpResponse("unauthorised\n", status=401, content_type="text/plain", headers={"WWW-Authenticate": "Bearer"})
    if os.environ.get("PROMETHEUS_MULTIPROC_DIR"):
        from prometheus_client import multiprocess

        counted = CollectorRegistry()
        multiprocess.MultiProcessCollector(counted)
    else:
        counted = REGISTRY
    live = CollectorRegistry()
    live.register(LiveCollector())
    return HttpResponse(generate_latest(counted) + generate_latest(live), content_type=CONTENT_TYPE_LATEST)
