"""Electronic signatures on QA decisions: the user re-enters their password with the request,
as a second sign of intent beyond the session or token that carries it, and the meaning of the
signature is written to the audit trail (the principles of 21 CFR Part 11 §11.50 and §11.200 and
EU GMP Annex 11 §14; oleotrace claims no compliance with either)."""
from __future__ import annotations

from collections.abc import Iterable

from django.contrib.auth import authenticate

from analyses.errors import InvalidInput
from analyses.services.access import Actor, actor_name


def signature_confirm(actor: Actor, password: object, *, request=None) -> None:
    """InvalidInput naming ``password`` unless it is ``actor``'s own password.

    Through ``authenticate``, so a wrong password counts towards the login lock-out
    (``analyses.login_guard``) when the request is given, and a locked account is refused
    (the API answers 429) before any password is hashed."""
    if not isinstance(password, str) or not password:
        raise InvalidInput.for_field("password", "is required: re-enter your password to sign")
    username = getattr(actor, "get_username", lambda: "")()
    user = authenticate(request, username=username, password=password) if username else None
    if user is None or user.pk != getattr(actor, "pk", None):
        raise InvalidInput.for_field("password", f"is not the password of {actor_name(actor)}; nothing was signed")


def specification_versions_text(versions: Iterable[int]) -> str:
    """"specification v2", or "specifications v1, v2" when samples were tested against several."""
    ordered = sorted(set(versions))
    if not ordered:
        return "its specification"
    words = ", ".join(f"v{v}" for v in ordered)
    return f"specification {words}" if len(ordered) == 1 else f"specifications {words}"


def release_meaning(versions: Iterable[int]) -> str:
    return f"released for shipment against {specification_versions_text(versions)}"


def rejection_meaning(versions: Iterable[int]) -> str:
    return f"rejected: not to be shipped (judged against {specification_versions_text(versions)})"
