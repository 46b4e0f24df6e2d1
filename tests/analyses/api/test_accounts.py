"""Tokens, sessions, and /api/me/."""
from __future__ import annotations

import pytest
from knox.crypto import hash_token
from rest_framework.test import APIClient

from analyses.models import ApiToken

pytestmark = pytest.mark.django_db


@pytest.fixture(autouse=True)
def fast_hashing(settings):
    # a quick hasher: these tests log in with passwords, and the real one costs ~0.5 s a try
    settings.PASSWORD_HASHERS = ["django.contrib.auth.hashers.MD5PasswordHasher"]


def test_a_token_is_obtained_with_username_and_password_and_then_works(users):
    qa = users["qa"]
    qa.set_password("correct horse")
    qa.save()
    client = APIClient()
    response = client.post("/api/auth/token/", {"username": "qa", "password": "correct horse", "name": "lab PC 3"}, format="json")
    assert response.status_code == 200, response.content
    body = response.json()
    token = body["token"]
    assert body["name"] == "lab PC 3" and token.startswith(body["prefix"]) and body["expires"]
    # the database holds a hash of the token, not the token
    assert ApiToken.objects.get(user=qa).digest == hash_token(token)
    again = client.post("/api/auth/token/", {"username": "qa", "password": "correct horse"}, format="json")
    assert again.status_code == 200 and again.json()["token"] != token  # a new token each time
    client.credentials(HTTP_AUTHORIZATION=f"Token {token}")
    me = client.get("/api/me/").json()
    assert me["username"] == "qa" and me["roles"] == ["qa_reviewer"]
    assert "release_lot" in me["permissions"] and "record_result" not in me["permissions"]


def test_a_wrong_password_gets_no_token(users):
    users["qa"].set_password("correct horse")
    users["qa"].save()
    response = APIClient().post("/api/auth/token/", {"username": "qa", "password": "wrong"}, format="json")
    assert response.status_code == 400
    assert response.json()["fields"]
    assert not ApiToken.objects.exists()


def test_an_inactive_user_gets_no_token(users):
    users["qa"].set_password("correct horse")
    users["qa"].is_active = False
    users["qa"].save()
    response = APIClient().post("/api/auth/token/", {"username": "qa", "password": "correct horse"}, format="json")
    assert response.status_code == 400
    assert not ApiToken.objects.exists()


def test_a_session_works_as_well(users):
    client = APIClient()
    client.force_login(users["manager"])
    me = client.get("/api/me/").json()
    assert me["roles"] == ["lab_manager"] and "assign_test" in me["permissions"]


def test_without_credentials_or_with_a_bad_token_it_is_401(db):
    assert APIClient().get("/api/me/").status_code == 401
    client = APIClient()
    client.credentials(HTTP_AUTHORIZATION="Token not-a-token")
    response = client.get("/api/lots/")
    assert response.status_code == 401 and response.json()["detail"]


def test_me_lists_every_role_of_the_admin(clients):
    me = clients["admin"].get("/api/me/").json()
    assert me["roles"] == ["admin"]
    assert {"record_any_result", "close_investigation"} <= set(me["permissions"])
    # only QA approves specifications and releases or rejects lots (issue 3)
    assert not {"release_lot", "approve_specification"} & set(me["permissions"])


def test_the_session_login_form_leads_to_a_page_that_exists(users):
    """Without ?next= Django would send the user to /accounts/profile/, a 404 here."""
    users["qa"].set_password("correct horse")
    users["qa"].save()
    client = APIClient()
    assert client.get("/api/auth/login/").status_code == 200
    response = client.post("/api/auth/login/", {"username": "qa", "password": "correct horse"})
    assert response.status_code == 302
    assert response["Location"] == "/api/"
    assert client.get(response["Location"]).status_code == 200


def test_a_failed_login_says_so_in_words_and_not_which_was_wrong(users):
    users["qa"].set_password("correct horse")
    users["qa"].save()
    wrong_password = APIClient().post("/api/auth/token/", {"username": "qa", "password": "wrong"}, format="json")
    unknown_user = APIClient().post("/api/auth/token/", {"username": "nosuchuser", "password": "wrong"}, format="json")
    assert wrong_password.status_code == unknown_user.status_code == 400
    assert wrong_password.json() == unknown_user.json()  # the same answer: nothing tells which of the two was wrong
    body = wrong_password.json()
    assert "non_field_errors" not in body["fields"]
    assert body["fields"] == {"password": ["the user name or password is wrong"]}
    assert "user name or password is wrong" in body["detail"]
    # the session login form says it in words too (Django's own message), on the form
    page = APIClient().post("/api/auth/login/", {"username": "qa", "password": "wrong"})
    assert page.status_code == 200 and b"correct username and password" in page.content
    assert b"non_field_errors" not in page.content
