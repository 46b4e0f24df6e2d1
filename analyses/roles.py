"""Roles as Django groups, and the permissions each holds.

Services and the API ask ``role_permits(user, codename)``: ``user.has_perm`` for most
permissions, but membership of the QA group for the decisions that are QA's alone
(``QA_ONLY``), so that no superuser flag grants them. The segregation-of-duties rule that
a QA reviewer never enters or corrects raw data is membership too (``in_role``).
``roles_ensure()`` creates or repairs the groups; migration 0002 does the same at
install time.

The user's group names are read once and kept on the user object (``role_names``) until the
next request starts (``request_started`` moves a generation on) or the user's groups change
through ``user.groups`` (``forget_roles``, called by a signal receiver): a bulk entry of 500
results reads the groups once, not once per result.
"""
from __future__ import annotations

import itertools

from django.contrib.auth.models import Group, Permission
from django.contrib.contenttypes.models import ContentType
from django.db import transaction

LAB_MANAGER = "lab_manager"
ANALYST = "analyst"
QA_REVIEWER = "qa_reviewer"
ADMIN = "admin"
ROLES: tuple[str, ...] = (LAB_MANAGER, ANALYST, QA_REVIEWER, ADMIN)

# permission codename -> model that declares it (all in the "analyses" app)
PERMISSION_MODELS: dict[str, str] = {
    "add_product": "product",
    "draft_specification": "specification",
    "approve_specification": "specification",
    "create_lot": "lot",
    "release_lot": "lot",
    "register_sample": "sample",
    "receive_sample": "sample",
    "hold_sample": "sample",
    "cancel_sample": "sample",
    "assign_test": "test",
    "review_test": "test",
    "record_result": "test",
    "record_any_result": "test",
    "close_investigation": "investigation",
    "view_audit_trail": "auditentry",
    "manage_stability_study": "stabilitystudy",
    "set_control_baseline": "controlbaseline",
    "acknowledge_alert": "alert",
    # traceable measurements (issue 9)
    "manage_reagent_kinds": "reagentkind",
    "register_reagent_lot": "reagentlot",
    "record_standardisation": "standardisation",
    "manage_instruments": "instrument",
    "record_instrument_check": "instrumentcheck",
}

# "Only QA approves specifications and releases or rejects lots" (issue 3): not even admins,
# and not superusers (issue 8): these are checked by membership of the QA group.
QA_ONLY: tuple[str, ...] = ("approve_specification", "release_lot")
# Raw data that QA never enters or corrects, whatever other groups (or flags) they hold.
RAW_DATA_ENTRY: tuple[str, ...] = ("record_result", "record_any_result")

ROLE_PERMISSIONS: dict[str, tuple[str, ...]] = {
    LAB_MANAGER: (
        "add_product",
        "draft_specification",
        "create_lot",
        "register_sample",
        "receive_sample",
        "hold_sample",
        "cancel_sample",
        "assign_test",
        "review_test",
        "view_audit_trail",
        "manage_stability_study",
        "manage_reagent_kinds",
        "manage_instruments",
        "register_reagent_lot",
    ),
    ANALYST: ("record_result", "review_test", "register_reagent_lot", "record_standardisation", "record_instrument_check"),
    QA_REVIEWER: (
        "draft_specification",
        "approve_specification",
        "release_lot",
        "hold_sample",
        "review_test",
        "close_investigation",
        "view_audit_trail",
        "manage_stability_study",
        "set_control_baseline",
        "acknowledge_alert",
    ),
    ADMIN: tuple(codename for codename in PERMISSION_MODELS if codename not in QA_ONLY),
}


def permission_label(codename: str) -> str:
    """The form ``user.has_perm`` takes: "analyses.<codename>"."""
    return f"analyses.{codename}"


@transaction.atomic
def roles_ensure() -> dict[str, Group]:
    """Create the four role groups with exactly their permissions; safe to run again."""
    groups: dict[str, Group] = {}
    for role, codenames in ROLE_PERMISSIONS.items():
        group, _ = Group.objects.get_or_create(name=role)
        permissions = []
        for codename in codenames:
            content_type = ContentType.objects.get_by_natural_key("analyses", PERMISSION_MODELS[codename])
            permission, _ = Permission.objects.get_or_create(
                content_type=content_type, codename=codename, defaults={"name": codename.replace("_", " ")}
            )
            permissions.append(permission)
        group.permissions.set(permissions)
        groups[role] = group
    return groups


# moved on at the start of every request, so that no cached group names outlive a request
_generations = itertools.count(1)
_generation = 0
ROLE_CACHE_ATTRIBUTE = "_oleotrace_role_names"


def new_request_generation() -> None:
    """Start a new generation of cached group names (at the start of every request)."""
    global _generation
    _generation = next(_generations)


def forget_roles(user) -> None:
    """Drop the group names cached on ``user`` (its groups changed)."""
    if user is not None and hasattr(user, ROLE_CACHE_ATTRIBUTE):
        delattr(user, ROLE_CACHE_ATTRIBUTE)


def role_names(user) -> frozenset[str]:
    """The names of the groups ``user`` (signed in) belongs to: one query per user object and request."""
    cached = getattr(user, ROLE_CACHE_ATTRIBUTE, None)
    if cached is not None and cached[0] == _generation:
        return cached[1]
    names = frozenset(user.groups.values_list("name", flat=True)) if user.pk is not None else frozenset()
    setattr(user, ROLE_CACHE_ATTRIBUTE, (_generation, names))
    return names


def in_role(user, role: str) -> bool:
    """Whether ``user`` is an active, signed-in member of the ``role`` group. The superuser
    flag counts for nothing here."""
    if user is None or not getattr(user, "is_authenticated", False) or not user.is_active:
        return False
    return role in role_names(user)


def role_permits(user, codename: str) -> bool:
    """Whether ``user`` may do what ``analyses.<codename>`` stands for: a QA-only decision
    needs membership of the QA group (``has_perm`` is true for every superuser); entering
    raw data is refused to every member of the QA group; anything else needs the
    permission, which superusers hold as admins do."""
    if user is None or not getattr(user, "is_authenticated", False):
        return False
    if codename not in QA_ONLY and codename not in RAW_DATA_ENTRY:
        return user.has_perm(permission_label(codename))
    return _permits(user, codename, qa=in_role(user, QA_REVIEWER))


def permitted_codenames(user) -> list[str]:
    """Every codename ``role_permits`` grants ``user`` (one query for the QA group)."""
    if user is None or not getattr(user, "is_authenticated", False):
        return []
    qa = in_role(user, QA_REVIEWER)
    return sorted(codename for codename in PERMISSION_MODELS if _permits(user, codename, qa=qa))


def _permits(user, codename: str, *, qa: bool) -> bool:
    if codename in QA_ONLY:
        return qa
    if codename in RAW_DATA_ENTRY and qa:
        return False
    return user.has_perm(permission_label(codename))


def user_roles(user) -> list[str]:
    """The role names of ``user`` (superusers count as admin)."""
    names = set(user.groups.filter(name__in=ROLES).values_list("name", flat=True))
    if user.is_superuser:
        names.add(ADMIN)
    return sorted(names)
