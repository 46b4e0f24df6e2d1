"""Every caller is held to a request rate (DRF throttling, rates from settings): beyond it, 429
with Retry-After, for that caller only."""
from __future__ import annotations

import pytest
from rest_framework.test import APIClient

pytestmark = pytest.mark.django_db


@pytest.fixture
def rates(settings):
    settings.REST_FRAMEWORK = {**settings.REST_FRAMEWORK, "DEFAULT_THROTTLE_RATES": {"user": "3/minute", "anon": "2/minute"}}


def test_a_signed_in_user_beyond_the_rate_gets_429_with_retry_after(rates, clients):
    for _ in range(3):
        assert clients["manager"].get("/api/me/").status_code == 200
    response = clients["manager"].get("/api/lots/")
    assert response.status_code == 429
    assert 0 < int(response["Retry-After"]) <= 60 and response.json()["detail"]
    # counted per user: another user is not held back
    assert clients["qa"].get("/api/me/").status_code == 200


def test_the_user_rate_holds_for_a_session_too(rates, users):
    client = APIClient()
    client.force_login(users["analyst"])
    statuses = [client.get("/api/me/").status_code for _ in range(4)]
    assert statuses == [200, 200, 200, 429]


def test_anonymous_callers_are_held_per_address(rates, db):
    here, there = APIClient(REMOTE_ADDR="10.1.0.1"), APIClient(REMOTE_ADDR="10.1.0.2")
    assert [here.get("/api/methods/").status_code for _ in range(3)] == [200, 200, 429]
    assert there.get("/api/methods/").status_code == 200
