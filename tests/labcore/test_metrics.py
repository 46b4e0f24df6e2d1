"""Prometheus metrics: /metrics behind its setting, latency by route, and the lab's events
counted once their transaction commits."""
from __future__ import annotations

import pytest
from django.core import mail
from django.db import transaction
from prometheus_client import REGISTRY

from analyses.models import Test
from analyses.services.alert_delivery import alert_notify
from analyses.services.alerts import AlertDraft, alerts_raise
from analyses.services.review import test_accept
from labcore.metrics import RESULTS_ENTERED, count_on_commit
from tests.analyses.lab_setup import *  # noqa: F403  (shared fixtures: users, lot, ...)
from tests.analyses.lab_setup import AV_HIGH, AV_HIGH_TWIN, enter_duplicates


def value(name: str, **labels: str) -> float:
    return REGISTRY.get_sample_value(name, labels) or 0.0


@pytest.fixture
def metrics_on(settings):
    settings.METRICS_ENABLED = True
    settings.METRICS_TOKEN = ""


def test_metrics_are_off_unless_enabled(client, settings):
    settings.METRICS_ENABLED = False
    assert client.get("/metrics").status_code == 404


def test_metrics_need_the_token_when_one_is_set(client, metrics_on, settings):
    settings.METRICS_TOKEN = "s3cret-scrape-token"
    assert client.get("/metrics").status_code == 401
    assert client.get("/metrics", HTTP_AUTHORIZATION="Bearer wrong").status_code == 401
    response = client.get("/metrics", HTTP_AUTHORIZATION="Bearer s3cret-scrape-token")
    assert response.status_code == 200
    assert response["Content-Type"].startswith("text/plain")


def test_request_latency_is_labelled_by_route_not_path(client, metrics_on):
    labels = {"method": "GET", "route": "api/samples/<int:pk>/", "status": "401"}
    before = value("oleotrace_http_request_duration_seconds_count", **labels)
    client.get("/api/samples/123/")
    client.get("/api/samples/456/")
    assert value("oleotrace_http_request_duration_seconds_count", **labels) == before + 2
    text = client.get("/metrics").content.decode()
    assert 'route="api/samples/<int:pk>/"' in text
    assert "/api/samples/123/" not in text


def test_the_page_reports_the_worker_heartbeat_age(client, metrics_on, settings, tmp_path):
    from labcore.heartbeat import heartbeat_write

    settings.REDIS_URL, settings.VAR_DIR = "", tmp_path
    heartbeat_write()
    assert "oleotrace_worker_heartbeat_age_seconds " in client.get("/metrics").content.decode()


@pytest.mark.django_db(transaction=True)
def test_a_count_waits_for_the_commit_and_a_rollback_drops_it():
    before = value("oleotrace_results_entered_total")
    with transaction.atomic():
        count_on_commit(RESULTS_ENTERED)
        assert value("oleotrace_results_entered_total") == before
    assert value("oleotrace_results_entered_total") == before + 1
    try:
        with transaction.atomic():
            count_on_commit(RESULTS_ENTERED)
            raise RuntimeError("rolled back")
    except RuntimeError:
        pass
    assert value("oleotrace_results_entered_total") == before + 1


@pytest.mark.django_db(transaction=True)
def test_results_entered_and_oos_opened_are_counted(users, assigned_tests):
    results, oos = value("oleotrace_results_entered_total"), value("oleotrace_oos_investigations_opened_total")
    test = next(t for t in assigned_tests if t.method_code == "av")
    enter_duplicates(users["analyst"], test, AV_HIGH, AV_HIGH_TWIN)  # above the refined-oil acid value limit
    assert value("oleotrace_results_entered_total") == results + 2
    test_accept(users["analyst2"], Test.objects.get(pk=test.pk))
    assert value("oleotrace_oos_investigations_opened_total") == oos + 1


@pytest.mark.django_db(transaction=True)
def test_alerts_raised_and_delivered_are_counted(settings):
    settings.EMAIL_BACKEND = "django.core.mail.backends.locmem.EmailBackend"
    settings.ALERT_EMAIL_RECIPIENTS, settings.ALERT_WEBHOOK_URL = ["qa@example.invalid"], ""
    raised = value("oleotrace_alerts_raised_total", source="trend")
    delivered = value("oleotrace_alert_deliveries_total", channel="email", outcome="delivered")
    draft = AlertDraft(source="trend", rule="westgard_1_3s", series_key="qc:1:av", episode_key="m-1", message="1-3s")
    alert = alerts_raise([draft])[0]
    assert value("oleotrace_alerts_raised_total", source="trend") == raised + 1
    alert_notify(alert.pk)
    assert len(mail.outbox) == 1
    assert value("oleotrace_alert_deliveries_total", channel="email", outcome="delivered") == delivered + 1


@pytest.mark.django_db
def test_task_runtime_and_failures_are_recorded(monkeypatch):
    from analyses import tasks

    name = "analyses.tasks.alerts_notify_pending_task"
    runs = value("oleotrace_task_duration_seconds_count", task=name, state="SUCCESS")
    tasks.alerts_notify_pending_task.apply()
    assert value("oleotrace_task_duration_seconds_count", task=name, state="SUCCESS") == runs + 1

    def broken(*args, **kwargs):
        raise ValueError("broken on purpose")

    monkeypatch.setattr(tasks, "alerts_pending_notification", broken)
    failures = value("oleotrace_task_failures_total", task=name)
    tasks.alerts_notify_pending_task.apply()
    assert value("oleotrace_task_failures_total", task=name) == failures + 1


def test_queue_depth_where_the_broker_is_redis(redis_url, settings, monkeypatch):
    import redis

    from labcore.celery import app
    from labcore.metrics_http import queue_depths

    settings.REDIS_URL = redis_url
    monkeypatch.setitem(app.conf, "task_default_queue", "oleotrace-test-depth")
    client = redis.Redis.from_url(redis_url)
    client.delete("oleotrace-test-depth")
    client.lpush("oleotrace-test-depth", "a", "b")
    try:
        assert queue_depths() == {"oleotrace-test-depth": 2}
    finally:
        client.delete("oleotrace-test-depth")


def test_no_queue_depth_where_the_broker_cannot_tell(settings):
    from labcore.metrics_http import queue_depths

    settings.REDIS_URL = ""
    assert queue_depths() is None


@pytest.mark.django_db
def test_each_request_writes_one_access_line_with_route_status_and_user_id(client, users, caplog):
    import logging

    client.force_login(users["manager"])  # a session: this test does not depend on the token scheme
    with caplog.at_level(logging.INFO, logger="labcore.access"):
        response = client.get("/api/samples/")
        client.get("/healthz")  # probes are measured, not logged
    [line] = [r for r in caplog.records if r.name == "labcore.access"]
    assert (line.route, line.status, line.user_id) == ("api/samples/", 200, users["manager"].pk)
    assert line.request_id == response["X-Request-ID"]
