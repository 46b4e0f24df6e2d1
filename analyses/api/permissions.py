"""DRF permission classes from the role groups (``analyses.roles``).

They refuse a request before any work is done, with the same rule the services apply
again (``analyses.roles.role_permits``): QA-only decisions need membership of the QA
group, whatever superuser flag the caller holds. The rules that need the object
(four-eyes, the test's assignee) only the services can check. An anonymous request gets
401, a user without the permission 403.
"""
from __future__ import annotations

from rest_framework.permissions import BasePermission

from analyses.roles import ADMIN, LAB_MANAGER, QA_ONLY, QA_REVIEWER, ROLE_PERMISSIONS, in_role, role_permits


def roles_holding(codename: str) -> list[str]:
    """The role groups that grant ``codename``."""
    return [role for role, codenames in ROLE_PERMISSIONS.items() if codename in codenames]


def requires(codename: str, doing: str, *, methods: tuple[str, ...] | None = None) -> type[BasePermission]:
    """A permission class that admits the users ``role_permits`` to do ``codename``; with
    ``methods``, only requests with those HTTP methods are checked (e.g. POST on a list
    that anyone signed in may read)."""
    who = f"members of the {QA_REVIEWER} group only" if codename in QA_ONLY else f"roles: {', '.join(roles_holding(codename))}"

    class HoldsPermission(BasePermission):
        message = f"You may not {doing}: it needs the {codename} permission ({who})."

        def has_permission(self, request, view) -> bool:
            if methods is not None and request.method not in methods:
                return True
            return role_permits(request.user, codename)

    HoldsPermission.__name__ = HoldsPermission.__qualname__ = f"Requires_{codename}"
    return HoldsPermission


class NotQAReviewer(BasePermission):
    """Segregation of duties: members of the QA group never enter or correct raw data,
    whatever other groups or flags they hold."""

    message = f"A QA reviewer ({QA_REVIEWER} group) never enters or corrects results, whatever other roles they hold."

    def has_permission(self, request, view) -> bool:
        return not in_role(request.user, QA_REVIEWER)


class IsLabManager(BasePermission):
    """Lab managers and admins (superusers count as admin)."""

    message = f"Only the {LAB_MANAGER} and {ADMIN} roles may see this."

    def has_permission(self, request, view) -> bool:
        user = request.user
        if not (user and user.is_authenticated):
            return False
        return user.is_superuser or user.groups.filter(name__in=(LAB_MANAGER, ADMIN)).exists()
