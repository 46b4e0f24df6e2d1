"""Issuing and revoking API tokens.

A token is shown once, in what ``token_issue`` returns; the database keeps its SHA-512 hash
(django-rest-knox, model ``ApiToken``). Tokens expire after API_TOKEN_TTL_DAYS. Each user may
hold several, one per name (an instrument PC, an integration).
"""
from __future__ import annotations

from dataclasses import dataclass
from datetime import datetime

from django.conf import settings
from django.db import IntegrityError, transaction
from django.utils import timezone
from knox.settings import knox_settings

from analyses.audit import audit_append, created
from analyses.errors import Conflict, InvalidInput, NotFound
from analyses.models import ApiToken, AuditAction
from analyses.services.access import ID_MAX, Actor

TOKEN_FIELDS = ("user", "name", "token_key", "expiry")
NAME_MAX = ApiToken._meta.get_field("name").max_length


@dataclass(frozen=True)
class IssuedToken:
    token: ApiToken
    secret: str  # the token itself: shown to its owner now, never again


@dataclass(frozen=True)
class RevokedToken:
    id: int
    name: str
    token_key: str
    revoked_at: datetime


def _default_name() -> str:
    return f"token {timezone.now():%Y-%m-%d %H:%M:%S.%f}"


def _name(value: str | None) -> str:
    if value is not None and not isinstance(value, str):
        raise InvalidInput.for_field("name", "must be text")
    name = (value or "").strip() or _default_name()
    if len(name) > NAME_MAX:
        raise InvalidInput.for_field("name", f"at most {NAME_MAX} characters")
    return name


def _remove(actor: Actor, token: ApiToken, old_state: str, new_state: str, reason: str) -> None:
    """Delete ``token`` with an audit entry naming it (inside the caller's transaction)."""
    audit_append(
        actor, AuditAction.TRANSITION, token,
        {"state": [old_state, new_state], "name": [token.name, token.name], "token_key": [token.token_key, token.token_key]},
        reason=reason,
    )
    token.delete()


def token_issue(user, *, name: str | None = None) -> IssuedToken:
    """A new token for ``user`` (who has just proved who they are), named ``name`` (default: the
    time of issue). The user's expired tokens are removed first; a live token of the same name
    is a conflict (revoke it first)."""
    if user is None or not user.is_active:
        raise InvalidInput.for_field("username", "no active user")
    name = _name(name)
    now = timezone.now()
    with transaction.atomic():
        for expired in ApiToken.objects.select_for_update().filter(user=user, expiry__lt=now):
            _remove(user, expired, "expired", "removed", "expired; removed when a new token was issued")
        if ApiToken.objects.filter(user=user, name=name).exists():
            raise Conflict(f"{user.get_username()} already has a token named {name!r}; revoke it first or choose another name")
        try:
            with transaction.atomic():
                token, secret = ApiToken.objects.create(
                    user=user, expiry=knox_settings.TOKEN_TTL, prefix=knox_settings.TOKEN_PREFIX, name=name
                )
        except IntegrityError:  # the same name issued at the same moment
            raise Conflict(f"{user.get_username()} already has a token named {name!r}") from None
        audit_append(
            user, AuditAction.CREATE, token, created(token, TOKEN_FIELDS),
            reason=f"API token issued, valid {settings.API_TOKEN_TTL_DAYS:g} days",
        )
    return IssuedToken(token, secret)


def token_revoke(actor: Actor, token_id: int | str, *, reason: str = "") -> RevokedToken:
    """Revoke one of ``actor``'s own tokens at once; it stops working with the next request.
    Another user's token is "not found", as if it did not exist."""
    if actor is None or not actor.is_authenticated:
        raise NotFound(f"token {token_id} not found")
    if not isinstance(reason, str):
        raise InvalidInput.for_field("reason", "must be text")
    try:
        pk = int(token_id)
    except (TypeError, ValueError):
        raise NotFound(f"token {token_id} not found") from None
    with transaction.atomic():
        token = ApiToken.objects.select_for_update().filter(pk=pk, user=actor).first() if 0 < pk <= ID_MAX else None
        if token is None:
            raise NotFound(f"token {token_id} not found")
        revoked = RevokedToken(token.pk, token.name, token.token_key, timezone.now())
        _remove(actor, token, "active", "revoked", reason.strip() or "revoked by its owner")
    return revoked


def tokens_revoke_all(actor: Actor, user, *, reason: str) -> int:
    """Revoke every token ``user`` holds (inside the caller's transaction); how many."""
    tokens = list(ApiToken.objects.select_for_update().filter(user=user))
    for token in tokens:
        _remove(actor, token, "active", "revoked", reason)
    return len(tokens)
