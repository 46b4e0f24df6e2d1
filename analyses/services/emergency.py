"""Emergency accounts: a superuser made on purpose from the command line
(``manage.py emergency_admin``), never by the demo. Its creation, every sign-in and its end
are entries in the audit trail.

A superuser holds every permission an admin holds and opens /admin/, but never makes the
QA decisions nor enters raw data as QA (``analyses.roles.role_permits``).
"""
from __future__ import annotations

import secrets
from dataclasses import dataclass

from django.contrib.auth import get_user_model
from django.core.exceptions import ValidationError
from django.db import transaction
from django.utils import timezone

from analyses.audit import audit_append, created
from analyses.errors import InvalidInput, NotFound
from analyses.models import AuditAction
from analyses.services.access import required_text
from analyses.services.uniqueness import UniqueKey

ACCOUNT_FIELDS = ("username", "email", "is_staff", "is_superuser", "is_active")


@dataclass(frozen=True)
class EmergencyAccount:
    user: object
    password: str  # shown once by the command, stored only as a hash


def emergency_admin_create(*, username: str, reason: str, requested_by: str, email: str = "") -> EmergencyAccount:
    """A new superuser (staff, so it opens /admin/) with a random password. ``reason``
    and ``requested_by`` (who ran the command) go into the audit entry. InvalidInput
    naming ``username`` when the name is taken or not a valid user name."""
    user_model = get_user_model()
    username = required_text(username, "username")
    reason = required_text(reason, "reason")
    try:
        user_model._meta.get_field("username").run_validators(username)
    except ValidationError as exc:
        raise InvalidInput.for_field("username", " ".join(exc.messages)) from None
    key = UniqueKey(user_model, "username", username, f"user {username!r} already exists")
    key.refuse_if_taken()
    password = secrets.token_urlsafe(24)
    with key.insert():  # a concurrent request for the same name gets the same answer
        user = user_model(username=username, email=(email or "").strip(), is_staff=True, is_superuser=True)
        user.set_password(password)
        user.save()
        audit_append(
            None, AuditAction.CREATE, user, created(user, ACCOUNT_FIELDS),
            reason=f"emergency account requested by {requested_by}: {reason}",
        )
    return EmergencyAccount(user, password)


def emergency_admin_end(*, username: str, reason: str, requested_by: str):
    """End an emergency account: it can no longer sign in (inactive, no usable password,
    no longer staff or superuser). The row stays, since audit entries name it."""
    user_model = get_user_model()
    username = required_text(username, "username")
    reason = required_text(reason, "reason")
    with transaction.atomic():
        user = user_model.objects.select_for_update().filter(username=username).first()
        if user is None:
            raise NotFound(f"user {username!r} not found")
        if not user.is_superuser:
            raise InvalidInput.for_field("username", f"{username} is not a superuser")
        before = {name: getattr(user, name) for name in ACCOUNT_FIELDS}
        user.is_active = user.is_staff = user.is_superuser = False
        user.set_unusable_password()
        user.save()
        changes = {name: [before[name], getattr(user, name)] for name in ACCOUNT_FIELDS if before[name] != getattr(user, name)}
        audit_append(None, AuditAction.CHANGE, user, changes, reason=f"emergency account ended by {requested_by}: {reason}")
    return user


def superuser_flags_clear(user, *, reason: str):
    """Take the superuser and staff flags from ``user`` (who keeps their role groups),
    with an audit entry; nothing happens to a user without them."""
    with transaction.atomic():
        user = get_user_model().objects.select_for_update().get(pk=user.pk)
        if not (user.is_superuser or user.is_staff):
            return user
        before = {"is_superuser": user.is_superuser, "is_staff": user.is_staff}
        user.is_superuser = user.is_staff = False
        user.save(update_fields=["is_superuser", "is_staff"])
        changes = {name: [old, False] for name, old in before.items() if old}
        audit_append(None, AuditAction.CHANGE, user, changes, reason=reason)
    return user


def superuser_sign_in_record(user, *, path: str, address: str) -> None:
    """Record that a superuser signed in (session login or API token); every use of an
    emergency account starts with one. Other users' sign-ins are not recorded here."""
    if not getattr(user, "is_superuser", False):
        return
    with transaction.atomic():
        audit_append(
            user, AuditAction.CHANGE, user,
            {"signed_in": [None, timezone.now()]},
            reason=f"superuser signed in at {path or 'an unknown path'} from {address or 'an unknown address'}",
        )
