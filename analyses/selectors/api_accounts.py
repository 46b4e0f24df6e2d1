"""Who the signed-in user is, for clients deciding what to show."""
from __future__ import annotations

from typing import Any

from analyses.roles import permitted_codenames, user_roles


def user_summary(user) -> dict[str, Any]:
    """The user's names, role groups and what they may do (``analyses.roles.role_permits``:
    a superuser is not shown the QA-only decisions, nor a QA reviewer raw-data entry)."""
    permissions = permitted_codenames(user)
    return {
        "id": user.pk,
        "username": user.username,
        "first_name": user.first_name,
        "last_name": user.last_name,
        "email": user.email,
        "roles": user_roles(user),
        "permissions": permissions,
    }
