"""The Celery worker's heartbeat: a time stamp the worker writes every few seconds and
``/readyz`` reads back as an age. In Redis when REDIS_URL is set (web and worker may run on
different hosts), else in a file beside the filesystem broker."""
from __future__ import annotations

import logging
import time
from pathlib import Path

from django.conf import settings

logger = logging.getLogger(__name__)
KEY = "oleotrace:worker-heartbeat"
INTERVAL_SECONDS = 10.0


def _redis():
    import redis

    return redis.Redis.from_url(settings.REDIS_URL, socket_connect_timeout=2, socket_timeout=2)


def _file() -> Path:
    return Path(settings.VAR_DIR) / "worker-heartbeat"


def heartbeat_write(now: float | None = None) -> None:
    stamp = f"{time.time() if now is None else now:.3f}"
    if settings.REDIS_URL:
        _redis().set(KEY, stamp, ex=3600)
    else:
        _file().write_text(stamp)


def heartbeat_age(now: float | None = None) -> float | None:
    """Seconds since a worker last wrote its heartbeat; None if none has (or it cannot be read)."""
    try:
        if settings.REDIS_URL:
            raw = _redis().get(KEY)
        else:
            raw = _file().read_text() if _file().exists() else None
        if raw is None:
            return None
        return max(0.0, (time.time() if now is None else now) - float(raw))
    except Exception:  # Redis down, a torn file: readiness reports "no heartbeat", never a 500
        logger.warning("worker heartbeat unreadable", exc_info=True)
        return None
