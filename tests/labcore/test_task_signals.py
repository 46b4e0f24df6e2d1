"""Around each Celery task: the request id travels from the publisher to the task, and a
real worker writes its heartbeat for /readyz."""
from __future__ import annotations

import time

import pytest
from celery import signals
from celery.contrib.testing.worker import start_worker

from labcore.celery import app
from labcore.heartbeat import heartbeat_age
from labcore.task_signals import REQUEST_ID_HEADER, _stamp_request_id, task_request_id

NOTIFY_PENDING = "analyses.tasks.alerts_notify_pending_task"


def wait_for(condition, seconds: float = 60.0) -> bool:
    """Poll until ``condition()`` holds; a guard against hanging, not a timing assertion."""
    deadline = time.monotonic() + seconds
    while time.monotonic() < deadline:
        if condition():
            return True
        time.sleep(0.25)
    return False


def test_publishing_stamps_the_current_request_id_on_the_message():
    headers: dict = {}
    token = task_request_id.set("req-42")
    try:
        _stamp_request_id(headers=headers)
    finally:
        task_request_id.reset(token)
    assert headers == {REQUEST_ID_HEADER: "req-42"}
    untouched: dict = {}
    _stamp_request_id(headers=untouched)
    assert untouched == {}  # outside a request nothing is added


@pytest.mark.services
@pytest.mark.django_db(transaction=True)
def test_a_real_worker_beats_and_runs_a_task_under_the_request_id_that_queued_it(redis_url, settings):
    assert app.conf.broker_url.startswith("redis://"), app.conf.broker_url
    settings.REDIS_URL = redis_url
    seen: list[str | None] = []

    def remember(task=None, **kwargs):  # connected after ours: the id is already set
        if task is not None and task.name == NOTIFY_PENDING:
            seen.append(task_request_id.get())

    signals.task_prerun.connect(remember)
    app.control.purge()
    try:
        with start_worker(app, pool="solo", perform_ping_check=False, shutdown_timeout=30):
            assert wait_for(lambda: heartbeat_age() is not None), "the worker wrote no heartbeat"
            assert heartbeat_age() < 30
            token = task_request_id.set("req-from-web-7")
            try:
                app.send_task(NOTIFY_PENDING)
            finally:
                task_request_id.reset(token)
            assert wait_for(lambda: bool(seen)), "the worker did not run the task"
    finally:
        signals.task_prerun.disconnect(remember)
    assert seen == ["req-from-web-7"]
