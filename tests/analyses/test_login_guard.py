"""Failed logins lock the account, and the client address, for a while: 429 with Retry-After on
the token endpoint, the session login form and the admin's login page (issue 8). The limits are
the project's settings (defaults: common practice, no source)."""
from __future__ import annotations

import pytest
from django.test import Client
from rest_framework.test import APIClient

from analyses import login_guard
from analyses.audit import audit_chain_verify
from analyses.models import ApiToken, AuditEntry, LoginLockout
from tests.analyses.lab_setup import users  # noqa: F401  (fixture)

pytestmark = pytest.mark.django_db

LOCKOUT_SECONDS = 600


@pytest.fixture(autouse=True)
def limits(settings):
    settings.PASSWORD_HASHERS = ["django.contrib.auth.hashers.MD5PasswordHasher"]  # quick to check
    settings.LOGIN_FAILURES_PER_ACCOUNT = 3
    settings.LOGIN_FAILURES_PER_ADDRESS = 6
    settings.LOGIN_FAILURE_WINDOW_SECONDS = 900
    settings.LOGIN_LOCKOUT_SECONDS = LOCKOUT_SECONDS
    return settings


@pytest.fixture
def passwords(users):
    for user in users.values():
        user.set_password("correct horse")
        user.save()
    return users


def _token(username: str, password: str, address: str = "10.0.0.1", **headers):
    return APIClient(REMOTE_ADDR=address).post(
        "/api/auth/token/", {"username": username, "password": password}, format="json", **headers
    )


def _assert_locked(response) -> None:
    assert response.status_code == 429, response.content
    wait = int(response["Retry-After"])
    assert 0 < wait <= LOCKOUT_SECONDS
    assert str(wait) in response.json()["detail"]


def test_the_account_is_locked_after_n_failures_even_for_the_right_password(passwords):
    for _ in range(3):
        assert _token("qa", "wrong").status_code == 400
    _assert_locked(_token("qa", "correct horse"))
    _assert_locked(_token("qa", "correct horse", address="10.0.0.99"))  # from anywhere
    assert not ApiToken.objects.exists()
    # other accounts from the same address are not affected
    assert _token("manager", "correct horse").status_code == 200


def test_the_account_count_is_case_blind(passwords):
    for name in ("QA", "Qa", "qA"):
        assert _token(name, "wrong").status_code == 400
    _assert_locked(_token("qa", "correct horse"))


def test_the_lock_out_is_recorded_once_in_the_audit_trail(passwords):
    for _ in range(3):
        _token("qa", "wrong", address="10.0.0.7")
    _token("qa", "wrong", address="10.0.0.7")  # refused by the lock: not counted again
    lockout = LoginLockout.objects.get()
    assert (lockout.scope, lockout.subject, lockout.address, lockout.failures) == ("account", "qa", "10.0.0.7", 3)
    entry = AuditEntry.objects.get(object_type="analyses.loginlockout")
    assert entry.action == "create" and entry.object_id == str(lockout.pk) and entry.actor_id is None
    assert entry.changes["subject"] == [None, "qa"] and "3 failed logins" in entry.reason
    assert audit_chain_verify().ok


def test_the_client_address_is_locked_after_n_failures_across_accounts(passwords):
    names = ["manager", "analyst", "analyst2", "qa", "admin", "nobody"]
    for name in names:  # one failure each: no account reaches its limit
        assert _token(name, "wrong").status_code == 400
    _assert_locked(_token("manager", "correct horse"))
    assert LoginLockout.objects.get().scope == "address"
    # the same account from another address still works
    assert _token("manager", "correct horse", address="10.0.0.2").status_code == 200


def test_an_invented_forwarded_for_header_does_not_escape_the_address_lock(passwords):
    for number in range(6):
        _token(f"nobody{number}", "wrong", HTTP_X_FORWARDED_FOR=f"192.0.2.{number}")
    _assert_locked(_token("manager", "correct horse", HTTP_X_FORWARDED_FOR="192.0.2.200"))


def test_a_right_password_clears_the_accounts_count(passwords):
    for _ in range(2):
        _token("qa", "wrong")
    assert _token("qa", "correct horse").status_code == 200
    for _ in range(2):
        assert _token("qa", "wrong").status_code == 400
    assert _token("qa", "correct horse").status_code == 200
    assert not LoginLockout.objects.exists()


def test_the_lock_ends_after_the_lockout_time(passwords, monkeypatch):
    for _ in range(3):
        _token("qa", "wrong")
    _assert_locked(_token("qa", "correct horse"))
    later = login_guard._now() + LOCKOUT_SECONDS + 1
    monkeypatch.setattr(login_guard, "_now", lambda: later)
    assert _token("qa", "correct horse").status_code == 200


def test_the_session_login_form_is_locked_the_same_way(passwords):
    client = Client(REMOTE_ADDR="10.0.0.3")
    for _ in range(3):
        response = client.post("/api/auth/login/", {"username": "manager", "password": "wrong"})
        assert response.status_code == 200  # the form again, with its error
    response = client.post("/api/auth/login/", {"username": "manager", "password": "correct horse"})
    assert response.status_code == 429 and 0 < int(response["Retry-After"]) <= LOCKOUT_SECONDS
    assert "_auth_user_id" not in client.session
    # and the API token endpoint shares the count
    _assert_locked(_token("manager", "correct horse", address="10.0.0.4"))


def test_the_admin_login_page_is_locked_too(passwords):
    passwords["admin"].is_staff = True
    passwords["admin"].save()
    client = Client(REMOTE_ADDR="10.0.0.5")
    for _ in range(3):
        assert client.post("/admin/login/", {"username": "admin", "password": "wrong"}).status_code == 200
    response = client.post("/admin/login/", {"username": "admin", "password": "correct horse"})
    assert response.status_code == 429 and response["Retry-After"]
    assert "_auth_user_id" not in client.session


def test_a_session_login_that_succeeds_still_works(passwords):
    client = Client(REMOTE_ADDR="10.0.0.6")
    response = client.post("/api/auth/login/", {"username": "manager", "password": "correct horse"})
    assert response.status_code == 302
    assert client.session["_auth_user_id"] == str(passwords["manager"].pk)
    assert client.get("/api/me/").json()["username"] == "manager"


def test_permissions_are_django_model_backends_read_in_one_query(django_user_model):
    """The user's own permissions and their groups' are the set ModelBackend gives, for a
    plain user, a superuser and an inactive one, read in one query and cached on the user."""
    from django.contrib.auth.backends import ModelBackend
    from django.contrib.auth.models import Group, Permission
    from django.db import connection
    from django.test.utils import CaptureQueriesContext

    own = Permission.objects.get(codename="view_product")
    shared, overlapping = Permission.objects.get(codename="view_lot"), Permission.objects.get(codename="view_product")
    group = Group.objects.create(name="perm-read-check")
    group.permissions.add(shared, overlapping)
    plain = django_user_model.objects.create_user("perm-plain")
    plain.user_permissions.add(own)
    plain.groups.add(group)
    boss = django_user_model.objects.create_user("perm-boss", is_superuser=True)
    gone = django_user_model.objects.create_user("perm-gone", is_active=False)
    gone.user_permissions.add(own)
    nobody = django_user_model.objects.create_user("perm-nobody")
    backend = login_guard.LockoutCheckBackend()
    for user in (plain, boss, gone, nobody):
        fresh, reference = (django_user_model.objects.get(pk=user.pk) for _ in range(2))
        with CaptureQueriesContext(connection) as captured:
            held = backend.get_all_permissions(fresh)
            again = backend.get_all_permissions(fresh)
        assert again is held or user is gone  # cached on the user object (an inactive one holds none)
        assert held == ModelBackend().get_all_permissions(reference), user.username
        assert len(captured) == (0 if user is gone else 1)
        assert fresh.has_perm("analyses.view_product") == reference.has_perm("analyses.view_product")
    assert backend.get_all_permissions(django_user_model.objects.get(pk=plain.pk)) == {"analyses.view_product", "analyses.view_lot"}
