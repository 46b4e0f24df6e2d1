"""Queue Celery work after the current transaction commits.

If the broker is down the work is dropped with a logged warning and the change itself
stays committed: the periodic scans (beat) find and finish what was missed.
"""
from __future__ import annotations

import logging
from typing import Any

from django.db import transaction

logger = logging.getLogger(__name__)


def _reason(exc: BaseException) -> str:
    """What went wrong, never empty: some broker errors carry no message (str() is "")."""
    text = str(exc)
    return f"{type(exc).__name__}: {text}" if text else f"{type(exc).__name__} without a message ({exc!r})"


def _send(task_name: str, args: tuple[Any, ...]) -> None:
    from labcore.celery import app

    try:
        app.send_task(task_name, args=args)
    except Exception as exc:  # broker unreachable: the periodic scan catches up later
        logger.warning("could not queue %s%r: %s; the periodic scan will catch up", task_name, args, _reason(exc))


def enqueue_on_commit(task_name: str, *args: Any) -> None:
    """Send ``task_name`` with ``args`` once the surrounding transaction commits."""
    transaction.on_commit(lambda: _send(task_name, args))
