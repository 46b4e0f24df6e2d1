"""A request id for every request: logged with every line written while the request runs,
returned in the ``X-Request-ID`` header and in the body of a 500, so a user's report finds
its traceback in the log.

An incoming ``X-Request-ID`` (from a proxy or the client) is kept when it is a sane token;
anything else is replaced by a fresh one.
"""
from __future__ import annotations

import logging
import re
import uuid
from contextvars import ContextVar

REQUEST_ID_HEADER = "X-Request-ID"
NO_REQUEST = "-"  # what log lines outside a request show
_SANE = re.compile(r"[A-Za-z0-9][A-Za-z0-9._:-]{0,63}")

_current: ContextVar[str] = ContextVar("request_id", default=NO_REQUEST)


def current_request_id() -> str:
    """The id of the request being handled, or "-" outside one."""
    return _current.get()


def request_id_choose(incoming: str | None) -> str:
    """The incoming id when it is a token of at most 64 letters, digits and ``.:_-``; else a new one."""
    if incoming and _SANE.fullmatch(incoming):
        return incoming
    return uuid.uuid4().hex


class RequestIdMiddleware:
    """First in MIDDLEWARE, so that everything below it, the 500 handler included, sees the id."""

    def __init__(self, get_response):
        self.get_response = get_response

    def __call__(self, request):
        request_id = request_id_choose(request.headers.get(REQUEST_ID_HEADER))
        request.request_id = request_id
        token = _current.set(request_id)
        try:
            response = self.get_response(request)
        finally:
            _current.reset(token)
        response[REQUEST_ID_HEADER] = request_id
        return response


class RequestIdFilter(logging.Filter):
    """Puts ``request_id`` on each record (for the ``%(request_id)s`` of the log format)."""

    def filter(self, record: logging.LogRecord) -> bool:
        if not hasattr(record, "request_id"):
            request = getattr(record, "request", None)  # django.request passes the request along
            record.request_id = getattr(request, "request_id", None) or current_request_id()
        return True
