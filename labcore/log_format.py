"""Log lines as JSON objects, one per line, for a log shipper to read without parsing.

Each line has time, level, logger and message, the request id (of the web request, or of
the request that queued the Celery task writing it), the user id where known, the
exception when there is one, and the structured fields a caller passed in ``extra``.
Values that look like credentials (``Token …``/``Bearer …`` headers, ``password=…``) are
masked wherever they appear, so a careless log call cannot leak them.
"""
from __future__ import annotations

import datetime as dt
import json
import logging
import re

# The attributes every LogRecord has; anything else on a record came from ``extra``.
_STANDARD = set(vars(logging.LogRecord("", 0, "", 0, "", (), None))) | {"message", "asctime", "request"}
_SCHEME_SECRET = re.compile(r"(?i)\b(token|bearer|basic)(\s+)[A-Za-z0-9._~+/=-]{6,}")
_KEY_SECRET = re.compile(
    r"(?i)\b(password|passwd|secret|api[_-]?key|authorization)(\"?\s*[:=]\s*\"?)"
    r"(?!(?:token|bearer|basic)\b)(?!\*\*\*)[^\s\",;&}]+"
)
_MASKED_KEYS = re.compile(r"(?i)password|passwd|secret|token|authorization|api[_-]?key")


def mask(text: str) -> str:
    text = _SCHEME_SECRET.sub(lambda m: f"{m.group(1)}{m.group(2)}***", text)
    return _KEY_SECRET.sub(lambda m: f"{m.group(1)}{m.group(2)}***", text)


def _request_id(record: logging.LogRecord) -> str | None:
    given = getattr(record, "request_id", None)
    if given and given != "-":
        return given
    from labcore.task_signals import task_request_id

    return task_request_id.get() or given


class JsonLinesFormatter(logging.Formatter):
    def format(self, record: logging.LogRecord) -> str:
        line = {
            "time": dt.datetime.fromtimestamp(record.created, dt.timezone.utc).isoformat(timespec="milliseconds"),
            "level": record.levelname,
            "logger": record.name,
            "message": mask(record.getMessage()),
            "request_id": _request_id(record),
        }
        for key, value in vars(record).items():
            if key in _STANDARD or key in line:
                continue
            line[key] = "***" if _MASKED_KEYS.search(key) else value
        if record.exc_info:
            line["exception"] = mask(self.formatException(record.exc_info))
        return json.dumps(line, default=str)
