"""The admin site is a window onto the records: no add, change or delete for anyone, superusers
included, and that covers users and groups (issue 8). Plain-text tokens are no longer listed."""
from __future__ import annotations

import pytest
from django.contrib import admin
from django.contrib.auth.models import Group
from django.test import RequestFactory

from analyses.models import ApiToken, AuditEntry
from analyses.services.tokens import token_issue
from tests.analyses.lab_setup import users  # noqa: F401  (fixture)
from tests.factories import UserFactory

pytestmark = pytest.mark.django_db


@pytest.fixture
def superuser(db):
    return UserFactory(username="root", is_staff=True, is_superuser=True)


@pytest.fixture
def superuser_client(client, superuser):
    client.force_login(superuser)
    return client


def test_no_model_in_the_admin_can_be_added_changed_or_deleted_by_a_superuser(superuser):
    request = RequestFactory().get("/admin/")
    request.user = superuser
    assert admin.site._registry, "the admin has models"
    for model, model_admin in admin.site._registry.items():
        label = model._meta.label
        assert model_admin.has_view_permission(request), label
        assert not model_admin.has_add_permission(request), label
        assert not model_admin.has_change_permission(request), label
        assert not model_admin.has_delete_permission(request), label
        assert "delete_selected" not in model_admin.get_actions(request), label
    registered = {model._meta.label for model in admin.site._registry}
    assert {"auth.User", "auth.Group", "analyses.ApiToken", "analyses.LoginLockout"} <= registered


def test_a_superuser_sees_users_but_cannot_make_anyone_a_superuser(superuser_client, users):
    analyst = users["analyst"]
    assert superuser_client.get("/admin/auth/user/").status_code == 200
    page = superuser_client.get(f"/admin/auth/user/{analyst.pk}/change/")
    assert page.status_code == 200 and b'name="_save"' not in page.content  # a view, not a form
    response = superuser_client.post(
        f"/admin/auth/user/{analyst.pk}/change/",
        {"username": "analyst", "is_superuser": "on", "is_staff": "on", "is_active": "on"},
    )
    assert response.status_code == 403
    analyst.refresh_from_db()
    assert not analyst.is_superuser and not analyst.is_staff
    assert superuser_client.get("/admin/auth/user/add/").status_code == 403
    assert superuser_client.post(f"/admin/auth/user/{analyst.pk}/password/", {"password1": "x", "password2": "x"}).status_code == 403
    assert superuser_client.post(f"/admin/auth/user/{analyst.pk}/delete/", {"post": "yes"}).status_code == 403


def test_a_superuser_cannot_change_a_groups_permissions(superuser_client, users):
    group = Group.objects.get(name="analyst")
    before = set(group.permissions.values_list("codename", flat=True))
    response = superuser_client.post(f"/admin/auth/group/{group.pk}/change/", {"name": "analyst", "permissions": []})
    assert response.status_code == 403
    assert set(group.permissions.values_list("codename", flat=True)) == before
    assert superuser_client.get("/admin/auth/group/add/").status_code == 403


def test_tokens_show_in_the_admin_without_their_hash_and_the_plain_text_list_is_gone(superuser_client, users):
    issued = token_issue(users["qa"], name="balance PC")
    page = superuser_client.get(f"/admin/analyses/apitoken/{issued.token.pk}/change/")
    assert page.status_code == 200 and b"balance PC" in page.content
    assert issued.token.digest.encode() not in page.content and issued.secret.encode() not in page.content
    assert superuser_client.post(f"/admin/analyses/apitoken/{issued.token.pk}/delete/", {"post": "yes"}).status_code == 403
    assert ApiToken.objects.count() == 1
    for path in ("/admin/authtoken/tokenproxy/", "/admin/authtoken/token/", "/admin/knox/authtoken/"):
        assert superuser_client.get(path).status_code == 404, path


def test_the_audit_trail_is_read_only_in_the_admin_too(superuser_client, users):
    token_issue(users["qa"], name="balance PC")
    entry = AuditEntry.objects.get(object_type="analyses.apitoken")
    assert superuser_client.get(f"/admin/analyses/auditentry/{entry.pk}/change/").status_code == 200
    before = AuditEntry.objects.count()  # the superuser's sign-in is audited too (issue 8)
    assert superuser_client.post(f"/admin/analyses/auditentry/{entry.pk}/delete/", {"post": "yes"}).status_code == 403
    assert AuditEntry.objects.count() == before
    assert AuditEntry.objects.filter(pk=entry.pk).exists()
