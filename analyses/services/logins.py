"""Recording a login lock-out (the counting itself is in ``analyses.login_guard``)."""
from __future__ import annotations

from datetime import UTC, datetime

from django.db import transaction
from django.utils import timezone

from analyses.audit import audit_append, created
from analyses.models import LockoutScope, LoginLockout


def lockout_record(scope: LockoutScope | str, subject: str, *, address: str, failures: int, until: float) -> LoginLockout:
    """Store one lock-out (``until``: a Unix time) with its audit entry. No actor: nobody is
    signed in; the entry names the account or address and the address that tripped it."""
    with transaction.atomic():
        lockout = LoginLockout.objects.create(
            scope=scope,
            subject=subject[:150],
            address=address[:64],
            failures=failures,
            locked_at=timezone.now(),
            locked_until=datetime.fromtimestamp(until, UTC),
        )
        audit_append(
            None, "create", lockout, created(lockout, ["scope", "subject", "address", "failures", "locked_until"]),
            reason=f"{failures} failed logins for this {LockoutScope(scope).label.lower()}",
        )
    return lockout
