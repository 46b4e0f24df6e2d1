"""token_issue and token_revoke: the token shown once, its hash kept, each step audited."""
from __future__ import annotations

import datetime as dt

import pytest
from django.utils import timezone
from knox.crypto import hash_token

from analyses.audit import audit_chain_verify
from analyses.errors import Conflict, InvalidInput, NotFound
from analyses.models import ApiToken, AuditEntry
from analyses.services.tokens import token_issue, token_revoke, tokens_revoke_all

pytestmark = pytest.mark.django_db


def test_issue_keeps_only_the_hash_and_audits_the_issue(users):
    issued = token_issue(users["analyst"], name="titrator PC")
    token = ApiToken.objects.get()
    assert token.digest == hash_token(issued.secret) and issued.secret not in token.digest
    assert issued.secret.startswith(token.token_key) and len(token.token_key) == 15
    entry = AuditEntry.objects.get()
    assert (entry.action, entry.object_type, entry.object_id, entry.actor_username) == (
        "create", "analyses.apitoken", str(token.pk), "analyst",
    )
    assert entry.changes["name"] == [None, "titrator PC"] and entry.changes["user"] == [None, users["analyst"].pk]
    assert issued.secret not in str(entry.changes) and token.digest not in str(entry.changes)
    assert audit_chain_verify().ok


def test_issue_without_a_name_names_the_token_by_its_time(users):
    first, second = token_issue(users["analyst"]), token_issue(users["analyst"])
    assert first.token.name.startswith("token 20") and first.token.name != second.token.name


@pytest.mark.parametrize("name, reason", [("x" * 81, "at most 80 characters"), (5, "must be text")])
def test_a_bad_name_is_refused(users, name, reason):
    with pytest.raises(InvalidInput) as caught:
        token_issue(users["analyst"], name=name)
    assert caught.value.fields == {"name": [reason]}
    assert not ApiToken.objects.exists() and not AuditEntry.objects.exists()


def test_the_same_name_twice_is_a_conflict_but_another_users_is_not(users):
    token_issue(users["analyst"], name="titrator PC")
    with pytest.raises(Conflict):
        token_issue(users["analyst"], name="titrator PC")
    token_issue(users["analyst2"], name="titrator PC")
    assert ApiToken.objects.count() == 2


def test_an_inactive_user_gets_no_token(users):
    users["analyst"].is_active = False
    with pytest.raises(InvalidInput):
        token_issue(users["analyst"], name="titrator PC")


def test_a_name_of_an_expired_token_can_be_used_again(users):
    old = token_issue(users["analyst"], name="titrator PC")
    ApiToken.objects.filter(pk=old.token.pk).update(expiry=timezone.now() - dt.timedelta(seconds=1))
    new = token_issue(users["analyst"], name="titrator PC")
    assert list(ApiToken.objects.values_list("pk", flat=True)) == [new.token.pk]
    removal = AuditEntry.objects.get(object_id=str(old.token.pk), action="transition")
    assert removal.changes["state"] == ["expired", "removed"]


def test_revoke_removes_the_token_and_audits_it(users):
    issued = token_issue(users["analyst"], name="titrator PC")
    token_revoke(users["analyst"], issued.token.pk, reason="PC replaced")
    assert not ApiToken.objects.exists()
    entry = AuditEntry.objects.get(action="transition")
    assert entry.object_id == str(issued.token.pk) and entry.reason == "PC replaced"
    assert entry.changes["state"] == ["active", "revoked"] and entry.changes["token_key"][0] == issued.token.token_key
    assert audit_chain_verify().ok


@pytest.mark.parametrize("who", ["analyst2", "admin", None])
def test_only_the_owner_revokes(users, who):
    issued = token_issue(users["analyst"], name="titrator PC")
    with pytest.raises(NotFound):
        token_revoke(users[who] if who else None, issued.token.pk)
    assert ApiToken.objects.count() == 1


@pytest.mark.parametrize("ref", [0, -1, 2**63, "abc", None])
def test_revoke_of_no_such_token_is_not_found(users, ref):
    with pytest.raises(NotFound):
        token_revoke(users["analyst"], ref)


def test_revoke_all_takes_every_token_of_a_user(users):
    for name in ("a", "b"):
        token_issue(users["analyst"], name=name)
    token_issue(users["analyst2"], name="a")
    from django.db import transaction

    with transaction.atomic():
        assert tokens_revoke_all(users["admin"], users["analyst"], reason="left the lab") == 2
    assert list(ApiToken.objects.values_list("user__username", flat=True)) == ["analyst2"]
    assert AuditEntry.objects.filter(action="transition", reason="left the lab").count() == 2
