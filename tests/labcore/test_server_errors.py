"""An unhandled exception is logged with its traceback and a request id, and the 500 body
names the same id (issue 8, section 3), with DEBUG off as in production."""
from __future__ import annotations

import json
import logging

import pytest
from django.test import Client
from django.urls import include, path
from rest_framework.permissions import AllowAny
from rest_framework.views import APIView

from labcore.urls import handler404, handler500  # noqa: F401  (the error pages of this URLconf)
from labcore.urls import urlpatterns as service_urlpatterns


class BrokenView(APIView):
    permission_classes = [AllowAny]

    def get(self, request):
        raise ZeroDivisionError("the view's own bug")


urlpatterns = [path("api/test-only/broken/", BrokenView.as_view()), path("", include(service_urlpatterns))]

pytestmark = pytest.mark.urls(__name__)


def server_error_records(caplog) -> list[logging.LogRecord]:
    return [r for r in caplog.records if r.name == "django.request" and r.levelno == logging.ERROR]


@pytest.fixture
def client(db) -> Client:
    return Client(raise_request_exception=False)  # answer the 500 as a server would


def test_a_500_names_the_request_id_that_its_logged_traceback_carries(client, settings, caplog):
    assert settings.DEBUG is False
    with caplog.at_level(logging.INFO):
        response = client.get("/api/test-only/broken/")
    assert response.status_code == 500
    body = response.json()
    request_id = body["request_id"]
    assert len(request_id) == 32  # a fresh uuid4, hex
    assert request_id in body["detail"]
    assert response["X-Request-ID"] == request_id
    [record] = server_error_records(caplog)
    assert record.request_id == request_id
    assert record.exc_info and record.exc_info[0] is ZeroDivisionError


def test_the_service_log_format_puts_the_id_and_the_traceback_on_standard_error(client, settings, caplog):
    assert settings.LOGGING["handlers"]["errors"]["stream"] == "ext://sys.stderr"  # (pytest swaps sys.stderr)
    handler = next(h for h in logging.getLogger("django").handlers if h.get_name() == "errors")
    with caplog.at_level(logging.INFO):
        response = client.get("/api/test-only/broken/")
    [record] = server_error_records(caplog)
    line = json.loads(handler.format(record))  # JSON lines by default (LOG_JSON, labcore/log_format.py)
    assert (line["level"], line["logger"]) == ("ERROR", "django.request")
    assert line["request_id"] == response.json()["request_id"]
    assert line["message"] == "Internal Server Error: /api/test-only/broken/"
    assert "Traceback (most recent call last)" in line["exception"]
    assert "ZeroDivisionError: the view's own bug" in line["exception"]


def test_a_sane_incoming_request_id_is_kept(client, caplog):
    with caplog.at_level(logging.INFO):
        response = client.get("/api/test-only/broken/", HTTP_X_REQUEST_ID="proxy-7f3a.42")
    assert response.json()["request_id"] == "proxy-7f3a.42"
    assert response["X-Request-ID"] == "proxy-7f3a.42"
    assert server_error_records(caplog)[0].request_id == "proxy-7f3a.42"


@pytest.mark.parametrize("incoming", ["", "a b", "x" * 65, "<script>", "id\u00e9", "-leading-dash"])
def test_an_unsafe_incoming_request_id_is_replaced(client, incoming):
    response = client.get("/api/methods/", HTTP_X_REQUEST_ID=incoming)
    assert response.status_code == 200
    assert response["X-Request-ID"] != incoming
    assert len(response["X-Request-ID"]) == 32


def test_every_answer_carries_a_request_id_and_each_request_its_own(client):
    first, second = client.get("/api/methods/"), client.get("/api/no-such-thing/")
    assert first["X-Request-ID"] != second["X-Request-ID"]
    assert second.status_code == 404
