"""Who the signed-in user is, for clients deciding what to show."""
from __future__ import annotations

from typing import Any

from analyses.roles import user_roles


def user_summary(user) -> dict[str, Any]:
    """The user's names, role groups and the analyses permissions those grant."""
    permissions = sorted(
        label.split(".", 1)[1] for label in user.get_all_permissions() if label.startswith("analyses.")
    )
    return {
        "id": user.pk,
        "username": user.username,
        "first_name": user.first_name,
        "last_name": user.last_name,
        "email": user.email,
        "roles": user_roles(user),
        "permissions": permissions,
    }
