"""Role groups: only QA approves specifications and releases or rejects lots (issue 3)."""
from __future__ import annotations

from importlib import import_module

import pytest
from django.apps import apps
from django.contrib.auth.models import Permission

from analyses.roles import ADMIN, QA_REVIEWER, QA_ONLY, roles_ensure

pytestmark = pytest.mark.django_db


def _codenames(group) -> set[str]:
    return set(group.permissions.values_list("codename", flat=True))


def test_only_qa_holds_the_qa_decisions():
    groups = roles_ensure()
    assert set(QA_ONLY) == {"approve_specification", "release_lot"}
    assert set(QA_ONLY) <= _codenames(groups[QA_REVIEWER])
    for role, group in groups.items():
        if role != QA_REVIEWER:
            assert not set(QA_ONLY) & _codenames(group), role
    assert {"record_any_result", "close_investigation", "assign_test"} <= _codenames(groups[ADMIN])  # the rest stays


def test_the_migration_takes_the_qa_decisions_from_an_existing_admin_group():
    admin = roles_ensure()[ADMIN]
    admin.permissions.add(*Permission.objects.filter(content_type__app_label="analyses", codename__in=QA_ONLY))
    import_module("analyses.migrations.0007_admin_without_qa_decisions").revoke(apps, None)
    assert not set(QA_ONLY) & _codenames(admin)
    assert "record_any_result" in _codenames(admin)


def test_group_names_are_read_once_per_request_and_forgotten_when_they_change(django_assert_num_queries):
    from django.contrib.auth.models import Group

    from analyses.roles import in_role, new_request_generation
    from tests.factories import UserFactory

    roles_ensure()
    user = UserFactory(roles=["analyst"])
    assert not in_role(user, QA_REVIEWER)
    with django_assert_num_queries(0):  # kept on the user object
        assert not in_role(user, QA_REVIEWER)
    user.groups.add(Group.objects.get(name=QA_REVIEWER))  # through the user: forgotten at once
    assert in_role(user, QA_REVIEWER)
    Group.objects.get(name=QA_REVIEWER).user_set.remove(user)  # through the group: every cache dropped
    assert not in_role(user, QA_REVIEWER)
    with django_assert_num_queries(1):  # a new request (request_started) reads them again
        new_request_generation()
        assert not in_role(user, QA_REVIEWER)
