"""JSON log lines: one object per line, request id and user id, credentials masked."""
from __future__ import annotations

import json
import logging
import sys

from labcore.log_format import JsonLinesFormatter, mask
from labcore.task_signals import task_request_id


def line(message: str, *args, exc_info=None, **extra) -> dict:
    record = logging.LogRecord("analyses.test", logging.INFO, __file__, 1, message, args, exc_info)
    for key, val in extra.items():
        setattr(record, key, val)
    text = JsonLinesFormatter().format(record)
    assert "\n" not in text  # one line, even with a traceback
    return json.loads(text)


def test_a_line_is_a_json_object_with_the_standard_fields_and_extras():
    got = line("result %s entered", 42, request_id="abc123", user_id=7, route="api/results/")
    assert got["message"] == "result 42 entered"
    assert got["level"] == "INFO" and got["logger"] == "analyses.test"
    assert got["request_id"] == "abc123" and got["user_id"] == 7 and got["route"] == "api/results/"
    assert got["time"].endswith("+00:00")


def test_a_task_line_carries_the_request_id_of_the_request_that_queued_it():
    token = task_request_id.set("req-from-web")
    try:
        assert line("scan done")["request_id"] == "req-from-web"
        assert line("scan done", request_id="-")["request_id"] == "req-from-web"  # "-": outside a web request
    finally:
        task_request_id.reset(token)
    assert line("no request")["request_id"] is None


def test_tokens_and_passwords_never_reach_the_log():
    got = line("login with password=hunter2 and header Token 9944b09199c62bcf9418ad846dd0e4bbdfc6ee4b",
               authorization="Token 9944b09199c62bcf", password="hunter2")
    text = json.dumps(got)
    assert "hunter2" not in text and "9944b09199c62bcf" not in text
    assert got["password"] == "***" and got["authorization"] == "***"
    assert mask('{"password": "x1y2z3"}') == '{"password": "***"}'
    assert mask("Authorization: Bearer abcdef123456") == "Authorization: Bearer ***"


def test_an_exception_is_one_field():
    try:
        raise ValueError("bad thing")
    except ValueError:
        got = line("failed", exc_info=sys.exc_info())
    assert "ValueError: bad thing" in got["exception"]
