"""API test set-up: the domain fixtures, and clients signed in with each role's token."""
from __future__ import annotations

import pytest
from rest_framework.test import APIClient

from analyses.services.tokens import token_issue

from tests.analyses.api.support import Lab
from tests.analyses.lab_setup import *  # noqa: F403  (shared fixtures)


@pytest.fixture
def client_for(db):
    """An APIClient sending ``user``'s token (None: anonymous)."""

    def make(user) -> APIClient:
        client = APIClient()
        if user is not None:
            client.credentials(HTTP_AUTHORIZATION=f"Token {token_issue(user).secret}")
        return client

    return make


@pytest.fixture
def clients(users, client_for) -> dict[str, APIClient]:
    """role name ("manager", "analyst", "analyst2", "qa", "admin", "nobody", "anonymous") -> client"""
    signed_in = {name: client_for(user) for name, user in users.items()}
    return {**signed_in, "anonymous": client_for(None)}


@pytest.fixture
def lab(users) -> Lab:
    return Lab(users)
