"""Users and their roles, changed by an operator at the server (``manage.py user_roles``).

The admin site only shows users and groups; these services are the one way to change them, and
each change is audited. The operator has shell access to the server, which is the authority
here, so there is no role check; the audit trail names the operator.
"""
from __future__ import annotations

from dataclasses import dataclass

from django.contrib.auth import get_user_model
from django.contrib.auth.models import Group
from django.db import IntegrityError, transaction

from analyses.audit import audit_append
from analyses.errors import Conflict, InvalidInput, NotFound
from analyses.models import AuditAction
from analyses.roles import ROLES, roles_ensure
from analyses.services.access import required_text
from analyses.services.tokens import tokens_revoke_all


@dataclass(frozen=True)
class Operator:
    """Whoever ran the command, as the audit trail names them (no user row: ``pk`` is None)."""

    username: str
    pk: None = None


def _role_names(user) -> list[str]:
    return sorted(user.groups.filter(name__in=ROLES).values_list("name", flat=True))


def _role(role: str) -> str:
    if role not in ROLES:
        raise InvalidInput.for_field("role", f"{role!r} is not one of {', '.join(ROLES)}")
    return role


def _user(username: str, *, lock: bool = True):
    queryset = get_user_model().objects.select_for_update() if lock else get_user_model().objects.all()
    user = queryset.filter(username=username).first()
    if user is None:
        raise NotFound(f"user {username!r} not found")
    return user


def user_create(
    operator: Operator, *, username: str, roles: list[str], email: str = "", password: str | None = None, staff: bool = False
):
    """A new active user in ``roles``; no password (``None``) leaves it unusable. ``staff`` lets
    them open the view-only admin site. Never a superuser."""
    username = required_text(username, "username")
    if not roles:
        raise InvalidInput.for_field("role", "give at least one role")
    roles = sorted({_role(role) for role in roles})
    user_model = get_user_model()
    if user_model.objects.filter(username=username).exists():
        raise InvalidInput.for_field("username", f"user {username!r} already exists")
    groups = roles_ensure()
    with transaction.atomic():
        try:
            with transaction.atomic():
                user = user_model.objects.create_user(username=username, email=(email or "").strip(), password=password)
        except IntegrityError:  # created at the same moment by someone else
            raise InvalidInput.for_field("username", f"user {username!r} already exists") from None
        user.is_staff = staff
        user.save(update_fields=["is_staff"])
        user.groups.add(*(groups[role] for role in roles))
        changes = {
            "username": [None, user.username], "email": [None, user.email], "is_active": [None, True],
            "is_staff": [None, staff], "roles": [None, roles], "password_set": [None, password is not None],
        }
        audit_append(operator, AuditAction.CREATE, user, changes, reason="user created with manage.py user_roles")
    return user


def role_grant(operator: Operator, username: str, role: str, *, reason: str = ""):
    role = _role(role)
    groups = roles_ensure()
    with transaction.atomic():
        user = _user(username)
        before = _role_names(user)
        if role in before:
            raise Conflict(f"{username} already holds {role}")
        user.groups.add(groups[role])
        audit_append(operator, AuditAction.CHANGE, user, {"roles": [before, sorted([*before, role])]}, reason=reason)
    return user


def role_revoke(operator: Operator, username: str, role: str, *, reason: str = ""):
    role = _role(role)
    with transaction.atomic():
        user = _user(username)
        before = _role_names(user)
        if role not in before:
            raise Conflict(f"{username} does not hold {role}")
        user.groups.remove(Group.objects.get(name=role))
        audit_append(operator, AuditAction.CHANGE, user, {"roles": [before, [r for r in before if r != role]]}, reason=reason)
    return user


def user_deactivate(operator: Operator, username: str, *, reason: str):
    """The user can no longer log in; their API tokens are revoked with it."""
    reason = required_text(reason, "reason")
    with transaction.atomic():
        user = _user(username)
        if not user.is_active:
            raise Conflict(f"{username} is already inactive")
        user.is_active = False
        user.save(update_fields=["is_active"])
        audit_append(operator, AuditAction.TRANSITION, user, {"is_active": [True, False]}, reason=reason)
        tokens_revoke_all(operator, user, reason=f"user deactivated: {reason}")
    return user


def user_reactivate(operator: Operator, username: str, *, reason: str):
    reason = required_text(reason, "reason")
    with transaction.atomic():
        user = _user(username)
        if user.is_active:
            raise Conflict(f"{username} is already active")
        user.is_active = True
        user.save(update_fields=["is_active"])
        audit_append(operator, AuditAction.TRANSITION, user, {"is_active": [False, True]}, reason=reason)
    return user
