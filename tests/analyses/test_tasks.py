"""Celery tasks against a real worker on the machine's Redis.

The worker runs in this process (celery.contrib.testing), consumes from Redis, and
writes to the same test database, so what a service queued is seen done in the rows.
"""
import time

import pytest
from celery.contrib.testing.worker import start_worker
from django.core import mail

from analyses.models import Alert, SampleKind, Test
from analyses.services.assignments import test_assign_bulk
from analyses.services.review import test_accept
from analyses.services.samples import sample_receive, sample_register
from analyses.services.trend_scan import control_baseline_set
from labcore.celery import app
from tests.analyses.lab_setup import *  # noqa: F403  (shared fixtures: users, lot, ...)
from tests.analyses.lab_setup import AV_HIGH, AV_HIGH_TWIN, enter_duplicates
from tests.analyses.series_setup import accepted_series

pytestmark = pytest.mark.services


@pytest.fixture
def redis_worker(redis_url, settings):
    """A real worker consuming from Redis; the broker URL is the app's own (REDIS_URL)."""
    assert app.conf.broker_url.startswith("redis://"), app.conf.broker_url
    app.control.purge()  # nothing left over from an earlier run
    with start_worker(app, pool="solo", perform_ping_check=False, shutdown_timeout=30):
        yield


def wait_for(condition, seconds: float = 60.0) -> bool:
    """Poll until ``condition()`` holds; a guard against hanging, not a timing assertion."""
    deadline = time.monotonic() + seconds
    while time.monotonic() < deadline:
        if condition():
            return True
        time.sleep(0.25)
    return False


@pytest.mark.django_db(transaction=True)
def test_the_worker_runs_the_scan_an_accepted_test_queued_and_the_alert_is_mailed(redis_worker, users, lot, settings):
    settings.ALERT_EMAIL_RECIPIENTS = ["qa@example.invalid"]
    settings.ALERT_WEBHOOK_URL = ""
    control_baseline_set(users["qa"], series_key=f"qc:{lot.pk}:av", mean=0.35, sd=0.01)
    accepted_series(lot, [0.347, 0.353] * 5)
    sample = sample_register(users["manager"], lot, kind=SampleKind.QC_CHECK, label="QC-REF-W")
    sample_receive(users["manager"], sample, condition="sealed", storage_place="QC shelf")
    test = Test.objects.get(sample=sample, method_code="av")
    test_assign_bulk(users["manager"], [test], assignee=users["analyst"])
    enter_duplicates(users["analyst"], test, AV_HIGH, AV_HIGH_TWIN)
    test_accept(users["analyst2"], test)  # commits, then queues trend_scan_task on Redis

    # worker: trend_scan_task raises the 1-3s alert (0.687 vs 0.35 ± 3 x 0.01, Westgard), then alert_notify_task mails it
    assert wait_for(lambda: Alert.objects.filter(rule="westgard_1_3s", emailed_at__isnull=False).exists()), \
        "the worker did not raise and mail the alert"
    alert = Alert.objects.get(rule="westgard_1_3s")
    assert [p["test_id"] for p in alert.points] == [test.pk]
    assert any("westgard_1_3s" in message.subject for message in mail.outbox)


@pytest.mark.django_db(transaction=True)
def test_running_a_task_twice_changes_nothing_twice(redis_worker, users, lot):
    control_baseline_set(users["qa"], series_key=f"qc:{lot.pk}:av", mean=0.35, sd=0.01)
    accepted_series(lot, [0.347, 0.353] * 5 + [0.45])
    # results are ignored by default (CELERY_TASK_IGNORE_RESULT); ask for these two
    first = app.send_task("analyses.tasks.trend_scan_task", args=[[f"qc:{lot.pk}:av"]], ignore_result=False)
    second = app.send_task("analyses.tasks.trend_scan_task", args=[[f"qc:{lot.pk}:av"]], ignore_result=False)
    assert first.get(timeout=60)["alerts_raised"] >= 1
    assert second.get(timeout=60)["alerts_raised"] == 0
    assert Alert.objects.filter(rule="westgard_1_3s").count() == 1
