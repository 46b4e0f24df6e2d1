"""What the Celery worker records around each task: run time and failures (Prometheus), the
request id of the request that queued it (on every log line the task writes), and the
worker's heartbeat for /readyz."""
from __future__ import annotations

import logging
import os
import time
from contextvars import ContextVar

from celery import bootsteps, signals

from labcore.metrics import TASK_FAILURES, TASK_RUNTIME

logger = logging.getLogger(__name__)
REQUEST_ID_HEADER = "oleotrace_request_id"
task_request_id: ContextVar[str | None] = ContextVar("task_request_id", default=None)
_started: dict[str, float] = {}


def publishing_request_id() -> str | None:
    """The id of the web request being handled, if the request-id middleware is installed."""
    try:
        from labcore.request_id import NO_REQUEST, current_request_id
    except ImportError:
        return task_request_id.get()
    current = current_request_id()
    return task_request_id.get() if current == NO_REQUEST else current


@signals.before_task_publish.connect
def _stamp_request_id(headers=None, **kwargs):
    request_id = publishing_request_id()
    if headers is not None and request_id:
        headers[REQUEST_ID_HEADER] = request_id


@signals.task_prerun.connect
def _task_started(task_id=None, task=None, **kwargs):
    _started[task_id] = time.perf_counter()
    task_request_id.set(getattr(task.request, REQUEST_ID_HEADER, None) if task is not None else None)


@signals.task_postrun.connect
def _task_finished(task_id=None, task=None, state=None, **kwargs):
    started = _started.pop(task_id, None)
    if started is not None and task is not None:
        TASK_RUNTIME.labels(task.name, state or "UNKNOWN").observe(time.perf_counter() - started)
    task_request_id.set(None)


@signals.task_failure.connect
def _task_failed(sender=None, **kwargs):
    TASK_FAILURES.labels(getattr(sender, "name", "unknown")).inc()


class WorkerHeartbeat(bootsteps.StartStopStep):
    """A consumer step: beats on the worker's own timer, so a worker whose loop is stuck
    stops beating. (A step, not the worker_ready signal, so every kind of worker has it.)"""

    requires = {"celery.worker.consumer.tasks:Tasks"}

    def __init__(self, parent, **kwargs):
        super().__init__(parent, **kwargs)
        self.tref = None

    def start(self, parent):
        from labcore.heartbeat import INTERVAL_SECONDS

        _beat()
        self.tref = parent.timer.call_repeatedly(INTERVAL_SECONDS, _beat)

    def stop(self, parent):
        if self.tref is not None:
            self.tref.cancel()
            self.tref = None


def _beat() -> None:
    from labcore.heartbeat import heartbeat_write

    try:
        heartbeat_write()
    except Exception:  # Redis away for a moment: the next beat tries again
        logger.warning("worker heartbeat not written", exc_info=True)


@signals.worker_process_shutdown.connect
def _forget_process(pid=None, **kwargs):
    if os.environ.get("PROMETHEUS_MULTIPROC_DIR"):
        from prometheus_client import multiprocess

        multiprocess.mark_process_dead(pid or os.getpid())
