"""DRF permission classes from the role groups (``analyses.roles``).

They refuse a request before any work is done; the services check the same permissions
again, and the rules that need the object (four-eyes, the test's assignee, QA never
entering raw data) only the services can check. An anonymous request gets 401, a user
without the permission 403.
"""
from __future__ import annotations

from rest_framework.permissions import BasePermission

from analyses.roles import ADMIN, LAB_MANAGER, ROLE_PERMISSIONS, permission_label


def roles_holding(codename: str) -> list[str]:
    """The role groups that grant ``codename``."""
    return [role for role, codenames in ROLE_PERMISSIONS.items() if codename in codenames]


def requires(codename: str, doing: str, *, methods: tuple[str, ...] | None = None) -> type[BasePermission]:
    """A permission class that admits users holding ``analyses.<codename>``; with
    ``methods``, only requests with those HTTP methods are checked (e.g. POST on a list
    that anyone signed in may read)."""

    class HoldsPermission(BasePermission):
        message = f"You may not {doing}: it needs the {codename} permission (roles: {', '.join(roles_holding(codename))})."

        def has_permission(self, request, view) -> bool:
            if methods is not None and request.method not in methods:
                return True
            user = request.user
            return bool(user and user.is_authenticated and user.has_perm(permission_label(codename)))

    HoldsPermission.__name__ = HoldsPermission.__qualname__ = f"Requires_{codename}"
    return HoldsPermission


class IsLabManager(BasePermission):
    """Lab managers and admins (superusers count as admin)."""

    message = f"Only the {LAB_MANAGER} and {ADMIN} roles may see this."

    def has_permission(self, request, view) -> bool:
        user = request.user
        if not (user and user.is_authenticated):
            return False
        return user.is_superuser or user.groups.filter(name__in=(LAB_MANAGER, ADMIN)).exists()
