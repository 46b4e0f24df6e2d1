"""Queueing after the commit: a broker failure is logged with a reason that says something."""
from __future__ import annotations

import logging

import pytest
from kombu.exceptions import OperationalError

from analyses.services.background import enqueue_on_commit
from labcore.celery import app


@pytest.mark.parametrize(
    ("error", "expected"),
    [
        (OperationalError("Error 111 connecting to 127.0.0.1:6379. Connection refused."),
         "OperationalError: Error 111 connecting to 127.0.0.1:6379. Connection refused."),
        # what the attack run saw: an error whose str() is "" left "could not queue ...: ;"
        (TimeoutError(), "TimeoutError without a message (TimeoutError())"),
        (OperationalError(), "OperationalError without a message (OperationalError())"),
    ],
)
def test_a_failed_queueing_logs_the_error_type_even_without_a_message(
    db, monkeypatch, django_capture_on_commit_callbacks, caplog, error, expected
):
    def broker_down(*args, **kwargs):
        raise error

    monkeypatch.setattr(app, "send_task", broker_down)
    with caplog.at_level(logging.WARNING, logger="analyses"), django_capture_on_commit_callbacks(execute=True):
        enqueue_on_commit("analyses.tasks.trend_scan_task", ["qc:1:av"])
    [record] = [r for r in caplog.records if r.name == "analyses.services.background"]
    assert record.getMessage() == (
        f"could not queue analyses.tasks.trend_scan_task(['qc:1:av'],): {expected}; the periodic scan will catch up"
    )
