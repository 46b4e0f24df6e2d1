"""The lab's people, for lab managers choosing whom to assign work to."""
from __future__ import annotations

from django.contrib.auth import get_user_model
from django.contrib.auth.models import Group
from django.db.models import Prefetch, Q, QuerySet

from analyses.roles import ADMIN, ROLES


def user_list(*, role: str | None = None) -> QuerySet:
    """Active users by username, each with ``role_groups`` (their role groups, prefetched:
    one query for the page, one for all their groups); with ``role``, only the users in
    that group (superusers count as admin)."""
    queryset = get_user_model().objects.filter(is_active=True)
    if role:
        queryset = users_holding(queryset, role)
    role_groups = Prefetch("groups", queryset=Group.objects.filter(name__in=ROLES).order_by("name"), to_attr="role_groups")
    return queryset.prefetch_related(role_groups).order_by("username", "id")


def roles_of(user) -> list[str]:
    """The role names of a user from ``user_list`` (no query)."""
    names = {group.name for group in user.role_groups}
    if user.is_superuser:
        names.add(ADMIN)
    return sorted(names)


def users_holding(queryset: QuerySet, role: str) -> QuerySet:
    """The users of ``queryset`` in the ``role`` group (superusers count as admin)."""
    holds = Q(groups__name=role)
    if role == ADMIN:
        holds |= Q(is_superuser=True)
    return queryset.filter(holds).distinct()
