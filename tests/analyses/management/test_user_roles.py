"""manage.py user_roles: the one way to change users and roles; each change audited, errors in one line."""
from __future__ import annotations

import io
import sys
from io import StringIO

import pytest
from django.contrib.auth import get_user_model
from django.core.management import call_command
from django.core.management.base import CommandError

from analyses.models import AuditEntry
from analyses.roles import user_roles
from tests.analyses.lab_setup import users  # noqa: F401  (fixture)

pytestmark = pytest.mark.django_db


def _run(*args: str) -> str:
    out = StringIO()
    call_command("user_roles", *args, stdout=out)
    return out.getvalue()


@pytest.fixture
def fast_hashing(settings):
    settings.PASSWORD_HASHERS = ["django.contrib.auth.hashers.MD5PasswordHasher"]


def test_create_with_a_password_from_standard_input(monkeypatch, fast_hashing):
    monkeypatch.setattr(sys, "stdin", io.StringIO("long enough secret\n"))
    out = _run("--by", "anna", "create", "carla", "--role", "analyst", "--role", "qa_reviewer", "--password-stdin")
    assert "created carla" in out
    carla = get_user_model().objects.get(username="carla")
    assert carla.check_password("long enough secret") and user_roles(carla) == ["analyst", "qa_reviewer"]
    assert AuditEntry.objects.get().actor_username == "anna (manage.py user_roles)"


def test_create_without_a_terminal_leaves_the_password_unusable(monkeypatch):
    monkeypatch.setattr(sys, "stdin", io.StringIO(""))
    _run("create", "carla", "--role", "analyst")
    assert not get_user_model().objects.get(username="carla").has_usable_password()


def test_grant_revoke_deactivate_and_list(users):
    assert "analyst now holds qa_reviewer" in _run("grant", "analyst", "qa_reviewer", "--reason", "cover for QA")
    assert "no longer holds qa_reviewer" in _run("revoke", "analyst", "qa_reviewer")
    assert "deactivated" in _run("deactivate", "analyst2", "--reason", "left")
    listing = _run("list")
    assert "analyst2" not in listing.split() and any(line.split()[:2] == ["qa", "qa_reviewer"] for line in listing.splitlines())
    assert AuditEntry.objects.filter(object_type="auth.user").count() == 3


def test_a_refused_change_is_one_line_and_changes_nothing(users):
    with pytest.raises(CommandError, match="already holds analyst"):
        _run("grant", "analyst", "analyst")
    with pytest.raises(CommandError, match="not found"):
        _run("deactivate", "ghost", "--reason", "x")
    assert not AuditEntry.objects.exists()
