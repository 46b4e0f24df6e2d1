"""Users and roles changed by an operator (the services behind manage.py user_roles), audited."""
from __future__ import annotations

import pytest
from django.contrib.auth import get_user_model

from analyses.audit import audit_chain_verify
from analyses.errors import Conflict, InvalidInput, NotFound
from analyses.models import ApiToken, AuditEntry
from analyses.roles import user_roles
from analyses.services.tokens import token_issue
from analyses.services.users import Operator, role_grant, role_revoke, user_create, user_deactivate, user_reactivate

pytestmark = pytest.mark.django_db

OPERATOR = Operator("ops-anna (manage.py user_roles)")


def test_create_makes_an_active_user_with_roles_and_never_a_superuser(db):
    user = user_create(OPERATOR, username="carla", roles=["analyst", "lab_manager"], email="c@example.invalid", password="s3cret pass")
    assert user.is_active and not user.is_superuser and not user.is_staff and user.check_password("s3cret pass")
    assert user_roles(user) == ["analyst", "lab_manager"]
    entry = AuditEntry.objects.get()
    assert (entry.action, entry.object_type, entry.object_id) == ("create", "auth.user", str(user.pk))
    assert entry.actor_id is None and entry.actor_username == OPERATOR.username
    assert entry.changes["roles"] == [None, ["analyst", "lab_manager"]] and entry.changes["password_set"] == [None, True]
    assert "s3cret" not in str(entry.changes)


def test_create_without_a_password_leaves_it_unusable(db):
    user = user_create(OPERATOR, username="carla", roles=["analyst"], staff=True)
    assert not user.has_usable_password() and user.is_staff


@pytest.mark.parametrize("kwargs, field", [
    ({"username": "", "roles": ["analyst"]}, "username"),
    ({"username": "carla", "roles": []}, "role"),
    ({"username": "carla", "roles": ["superuser"]}, "role"),
    ({"username": "analyst", "roles": ["analyst"]}, "username"),  # exists
])
def test_create_refuses_bad_input(users, kwargs, field):
    before = get_user_model().objects.count()
    with pytest.raises(InvalidInput) as caught:
        user_create(OPERATOR, **kwargs)
    assert field in caught.value.fields
    assert get_user_model().objects.count() == before and not AuditEntry.objects.exists()


def test_grant_and_revoke_a_role(users):
    role_grant(OPERATOR, "analyst", "qa_reviewer", reason="moved to QA")
    assert user_roles(users["analyst"]) == ["analyst", "qa_reviewer"]
    role_revoke(OPERATOR, "analyst", "analyst", reason="moved to QA")
    assert user_roles(users["analyst"]) == ["qa_reviewer"]
    changes = [entry.changes["roles"] for entry in AuditEntry.objects.order_by("sequence")]
    assert changes == [[["analyst"], ["analyst", "qa_reviewer"]], [["analyst", "qa_reviewer"], ["qa_reviewer"]]]
    with pytest.raises(Conflict):
        role_grant(OPERATOR, "analyst", "qa_reviewer")
    with pytest.raises(Conflict):
        role_revoke(OPERATOR, "analyst", "analyst")
    with pytest.raises(NotFound):
        role_grant(OPERATOR, "ghost", "analyst")
    with pytest.raises(InvalidInput):
        role_grant(OPERATOR, "analyst", "root")
    assert audit_chain_verify().ok


def test_deactivate_stops_logins_and_revokes_tokens_then_reactivate(users):
    token_issue(users["analyst"], name="titrator PC")
    user_deactivate(OPERATOR, "analyst", reason="left the company")
    users["analyst"].refresh_from_db()
    assert not users["analyst"].is_active and not ApiToken.objects.exists()
    actions = list(AuditEntry.objects.order_by("sequence").values_list("object_type", "changes"))
    assert actions[1] == ("auth.user", {"is_active": [True, False]})
    assert actions[2][0] == "analyses.apitoken" and actions[2][1]["state"] == ["active", "revoked"]
    with pytest.raises(Conflict):
        user_deactivate(OPERATOR, "analyst", reason="again")
    with pytest.raises(InvalidInput):
        user_reactivate(OPERATOR, "analyst", reason="  ")
    user_reactivate(OPERATOR, "analyst", reason="came back")
    users["analyst"].refresh_from_db()
    assert users["analyst"].is_active
    with pytest.raises(Conflict):
        user_reactivate(OPERATOR, "analyst", reason="again")
