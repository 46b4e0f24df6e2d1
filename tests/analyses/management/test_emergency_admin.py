"""emergency_admin: a superuser made on purpose, its creation, sign-ins and end in the audit
trail (issue 8). The rules are the project's own; no outside source."""
from __future__ import annotations

from io import StringIO

import pytest
from django.contrib.auth import get_user_model
from django.core.management import call_command
from django.core.management.base import CommandError
from rest_framework.test import APIClient

from analyses.audit import audit_chain_verify
from analyses.models import AuditEntry
from tests.factories import UserFactory

pytestmark = pytest.mark.django_db


def _run(*args: str) -> str:
    out = StringIO()
    call_command("emergency_admin", *args, stdout=out)
    return out.getvalue()


def _entries(username: str) -> list[AuditEntry]:
    user = get_user_model().objects.get(username=username)
    return list(AuditEntry.objects.filter(object_type="auth.user", object_id=str(user.pk)).order_by("sequence"))


def _password(out: str) -> str:
    return next(line for line in out.splitlines() if line.startswith("password")).rsplit(" ", 1)[1]


def test_it_creates_a_superuser_on_request_and_records_why_and_who():
    out = _run("rescue", "--reason", "QA lead locked out, ticket 42 (invented)", "--requested-by", "ops-on-call")
    user = get_user_model().objects.get(username="rescue")
    assert user.is_superuser and user.is_staff and user.is_active
    assert not user.groups.exists()  # no role group: never the QA decisions
    password = _password(out)
    assert user.check_password(password) and password not in user.password  # only the hash is kept
    [entry] = _entries("rescue")
    assert entry.action == "create" and entry.actor_id is None
    assert entry.changes["is_superuser"] == [None, True]
    assert "ops-on-call" in entry.reason and "ticket 42" in entry.reason
    assert audit_chain_verify().ok


def test_every_sign_in_of_the_account_is_recorded():
    password = _password(_run("rescue", "--reason", "restore a role group"))
    client = APIClient()
    assert client.login(username="rescue", password=password)  # a session login (admin site, API login page)
    response = APIClient().post("/api/auth/token/", {"username": "rescue", "password": password}, format="json")
    assert response.status_code == 200 and response.json()["token"]
    sign_ins = [entry for entry in _entries("rescue") if "signed_in" in entry.changes]
    assert len(sign_ins) == 2
    assert all(entry.actor.username == "rescue" and "superuser signed in" in entry.reason for entry in sign_ins)
    assert "/api/auth/token/" in sign_ins[1].reason
    assert audit_chain_verify().ok


def test_other_users_sign_ins_are_not_recorded_here():
    manager = UserFactory(username="manager", roles=["lab_manager"])
    manager.set_password("invented-pass-1")
    manager.save()
    before = AuditEntry.objects.count()
    assert APIClient().login(username="manager", password="invented-pass-1")
    assert AuditEntry.objects.count() == before


def test_a_taken_name_or_a_missing_reason_is_refused_and_nothing_is_written():
    UserFactory(username="manager", roles=["lab_manager"])
    before = AuditEntry.objects.count()
    with pytest.raises(CommandError, match="already exists"):
        _run("manager", "--reason", "reuse a name")
    with pytest.raises(CommandError, match="reason"):
        _run("rescue2", "--reason", "   ")
    with pytest.raises(CommandError, match="username"):
        _run("no spaces allowed", "--reason", "bad name")
    assert AuditEntry.objects.count() == before
    assert not get_user_model().objects.filter(is_superuser=True).exists()


def test_end_disables_the_account_and_records_it():
    password = _password(_run("rescue", "--reason", "restore a role group"))
    out = _run("rescue", "--end", "--reason", "group restored")
    assert "ended" in out
    user = get_user_model().objects.get(username="rescue")
    assert not (user.is_active or user.is_superuser or user.is_staff or user.has_usable_password())
    assert not APIClient().login(username="rescue", password=password)
    ended = _entries("rescue")[-1]
    assert ended.action == "change" and ended.changes["is_superuser"] == [True, False]
    assert "group restored" in ended.reason


def test_end_refuses_an_ordinary_user():
    UserFactory(username="manager", roles=["lab_manager"])
    with pytest.raises(CommandError, match="not a superuser"):
        _run("manager", "--end", "--reason", "mistake")
    assert get_user_model().objects.get(username="manager").is_active
