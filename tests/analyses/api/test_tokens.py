"""API tokens over HTTP: obtained with a password and shown once, listed without the secret,
revoked by their owner, refused once expired or revoked."""
from __future__ import annotations

import datetime as dt

import pytest
from django.utils import timezone
from knox.crypto import hash_token
from rest_framework.test import APIClient

from analyses.models import ApiToken, AuditEntry
from analyses.services.tokens import token_issue

pytestmark = pytest.mark.django_db


@pytest.fixture
def qa(users, settings):
    settings.PASSWORD_HASHERS = ["django.contrib.auth.hashers.MD5PasswordHasher"]  # quick to check
    users["qa"].set_password("correct horse")
    users["qa"].save()
    return users["qa"]


def _obtain(name: str | None = None, **extra) -> dict:
    body = {"username": "qa", "password": "correct horse", **({"name": name} if name is not None else {}), **extra}
    response = APIClient().post("/api/auth/token/", body, format="json")
    assert response.status_code == 200, response.content
    return response.json()


def _signed_in(token: str) -> APIClient:
    client = APIClient()
    client.credentials(HTTP_AUTHORIZATION=f"Token {token}")
    return client


def test_several_named_tokens_work_side_by_side_and_expire_after_the_configured_time(qa, settings):
    before = timezone.now()
    first, second = _obtain("balance PC"), _obtain("LIMS bridge")
    assert first["token"].startswith("olt_") and first["token"] != second["token"]
    expires = dt.datetime.fromisoformat(first["expires"])
    ttl = dt.timedelta(days=settings.API_TOKEN_TTL_DAYS)
    assert before + ttl <= expires <= timezone.now() + ttl
    for issued in (first, second):
        assert _signed_in(issued["token"]).get("/api/me/").json()["username"] == "qa"


def test_the_token_is_shown_once_and_the_list_holds_no_secret(qa):
    issued = _obtain("balance PC")
    client = _signed_in(issued["token"])
    client.get("/api/me/")
    response = client.get("/api/auth/tokens/")
    assert response.status_code == 200
    assert issued["token"] not in response.content.decode()
    (row,) = response.json()["results"]
    assert row["name"] == "balance PC" and row["id"] == issued["id"] and row["prefix"] == issued["prefix"]
    assert row["expired"] is False and row["last_used"] is not None and row["created"] and row["expires"]
    assert set(row) == {"id", "name", "prefix", "created", "expires", "expired", "last_used"}
    # nothing in the database holds the token itself
    stored = ApiToken.objects.values().get()
    assert issued["token"] not in {str(value) for value in stored.values()}
    assert stored["digest"] == hash_token(issued["token"])


def test_the_list_shows_only_the_callers_own_tokens(qa, users, client_for):
    _obtain("balance PC")
    response = client_for(users["manager"]).get("/api/auth/tokens/")
    rows = response.json()["results"]
    assert len(rows) == 1 and rows[0]["name"] != "balance PC"  # only the manager's own (the client's)
    assert ApiToken.objects.get(pk=rows[0]["id"]).user == users["manager"]


def test_a_name_already_in_use_is_a_conflict(qa):
    _obtain("balance PC")
    response = APIClient().post(
        "/api/auth/token/", {"username": "qa", "password": "correct horse", "name": "balance PC"}, format="json"
    )
    assert response.status_code == 409 and "balance PC" in response.json()["detail"]
    assert ApiToken.objects.count() == 1


def test_a_too_long_name_is_refused_with_the_field_named(qa):
    response = APIClient().post("/api/auth/token/", {"username": "qa", "password": "correct horse", "name": "x" * 81}, format="json")
    assert response.status_code == 400 and "name" in response.json()["fields"]
    assert not ApiToken.objects.exists()


def test_revoking_a_token_stops_it_at_once_and_is_audited(qa):
    kept, revoked = _obtain("balance PC"), _obtain("old laptop")
    client = _signed_in(kept["token"])
    response = client.post(f"/api/auth/tokens/{revoked['id']}/revoke/", {"reason": "laptop retired"}, format="json")
    assert response.status_code == 200
    assert response.json()["name"] == "old laptop" and response.json()["revoked_at"]
    assert _signed_in(revoked["token"]).get("/api/me/").status_code == 401
    assert client.get("/api/me/").status_code == 200
    entry = AuditEntry.objects.get(object_type="analyses.apitoken", object_id=str(revoked["id"]), action="transition")
    assert entry.changes["state"] == ["active", "revoked"] and entry.reason == "laptop retired"
    assert entry.actor_username == "qa" and entry.changes["name"][1] == "old laptop"
    issued_entry = AuditEntry.objects.get(object_type="analyses.apitoken", object_id=str(revoked["id"]), action="create")
    assert issued_entry.changes["name"] == [None, "old laptop"]
    assert issued_entry.changes["token_key"] == [None, revoked["prefix"]]


def test_a_token_can_revoke_itself(qa):
    issued = _obtain("balance PC")
    client = _signed_in(issued["token"])
    assert client.post(f"/api/auth/tokens/{issued['id']}/revoke/", {}, format="json").status_code == 200
    assert client.get("/api/me/").status_code == 401


def test_another_users_token_is_not_found_and_keeps_working(qa, users, client_for):
    issued = _obtain("balance PC")
    response = client_for(users["admin"]).post(f"/api/auth/tokens/{issued['id']}/revoke/", {}, format="json")
    assert response.status_code == 404
    assert _signed_in(issued["token"]).get("/api/me/").status_code == 200


def test_revoking_needs_a_signed_in_caller(qa):
    issued = _obtain("balance PC")
    assert APIClient().post(f"/api/auth/tokens/{issued['id']}/revoke/", {}, format="json").status_code == 401
    assert APIClient().get("/api/auth/tokens/").status_code == 401
    assert ApiToken.objects.count() == 1


def test_an_expired_token_is_refused_listed_as_expired_and_removed_at_the_next_issue(qa):
    issued = _obtain("balance PC")
    ApiToken.objects.filter(pk=issued["id"]).update(expiry=timezone.now() - dt.timedelta(seconds=1))
    assert _signed_in(issued["token"]).get("/api/me/").status_code == 401
    fresh = _obtain("LIMS bridge")
    client = _signed_in(fresh["token"])
    assert [row["name"] for row in client.get("/api/auth/tokens/").json()["results"]] == ["LIMS bridge"]
    removal = AuditEntry.objects.get(object_type="analyses.apitoken", object_id=str(issued["id"]), action="transition")
    assert removal.changes["state"] == ["expired", "removed"]


def test_an_expired_token_stays_listed_as_expired_until_then(qa):
    old = token_issue(qa, name="old")
    ApiToken.objects.filter(pk=old.token.pk).update(expiry=timezone.now() - dt.timedelta(seconds=1))
    current = _obtain("current")  # removes "old"
    # a token that expires after that is listed as expired
    ApiToken.objects.filter(pk=current["id"]).update(expiry=timezone.now() + dt.timedelta(minutes=5))
    other = token_issue(qa, name="other")
    ApiToken.objects.filter(pk=other.token.pk).update(expiry=timezone.now() - dt.timedelta(seconds=1))
    rows = {row["name"]: row for row in _signed_in(current["token"]).get("/api/auth/tokens/").json()["results"]}
    assert rows["other"]["expired"] is True and rows["current"]["expired"] is False


def test_a_token_header_that_is_not_utf8_is_401_not_500(db):
    client = APIClient()
    client.credentials(HTTP_AUTHORIZATION="Token olt_\xff\xfe")
    response = client.get("/api/me/")
    assert response.status_code == 401
