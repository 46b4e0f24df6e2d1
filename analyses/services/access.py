"""Permission checks and object look-ups shared by the services."""
from __future__ import annotations

from typing import TypeVar

from django.contrib.auth.models import AbstractBaseUser, AnonymousUser
from django.db import models

from analyses.errors import InvalidInput, NotAllowed, NotFound
from analyses.roles import QA_REVIEWER, in_role, role_permits

Actor = AbstractBaseUser | AnonymousUser | None
# the largest id a database row can have (a 64-bit signed integer); larger ones name no row
ID_MAX = 2**63 - 1
ModelT = TypeVar("ModelT", bound=models.Model)


def actor_name(actor: Actor) -> str:
    return getattr(actor, "username", None) or "anonymous"


def require_permission(actor: Actor, codename: str, doing: str) -> None:
    """Raise NotAllowed unless ``analyses.roles.role_permits`` lets ``actor`` do
    ``codename``: QA-only decisions by membership of the QA group, never by a superuser flag."""
    if not role_permits(actor, codename):
        raise NotAllowed(f"{actor_name(actor)} may not {doing}")


def refuse_raw_data_edit_by_qa(actor: Actor) -> None:
    """Segregation of duties: a member of the QA group never enters or corrects raw data,
    whatever other groups they are in, admins and superusers included."""
    if in_role(actor, QA_REVIEWER):
        raise NotAllowed(f"{actor_name(actor)} is a QA reviewer and may not enter or correct results")


def fetch(model: type[ModelT], ref: ModelT | int | str, *, lock: bool = False, label: str | None = None) -> ModelT:
    """The row ``ref`` (an instance or a primary key), fresh from the database; with
    ``lock`` it is locked (SELECT ... FOR UPDATE) until the transaction ends."""
    name = label or model._meta.verbose_name
    pk = ref.pk if isinstance(ref, model) else ref
    queryset = model.objects.select_for_update() if lock else model.objects.all()
    try:
        return queryset.get(pk=pk)
    except (model.DoesNotExist, ValueError, TypeError):
        raise NotFound(f"{name} {pk} not found") from None


def required_text(value: str | None, field: str) -> str:
    """``value`` stripped; InvalidInput naming ``field`` when it is empty."""
    text = (value or "").strip() if isinstance(value, str) or value is None else None
    if text is None:
        raise InvalidInput.for_field(field, "must be text")
    if not text:
        raise InvalidInput.for_field(field, "is required")
    return text
