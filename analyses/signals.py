"""Signal receivers; each only calls a service."""
from __future__ import annotations

from django.contrib.auth.signals import user_logged_in
from django.dispatch import receiver

from analyses.services.emergency import superuser_sign_in_record


@receiver(user_logged_in, dispatch_uid="analyses.superuser_sign_in")
def _superuser_signed_in(sender, request, user, **kwargs) -> None:
    meta = getattr(request, "META", {}) if request is not None else {}
    superuser_sign_in_record(user, path=getattr(request, "path", ""), address=meta.get("REMOTE_ADDR", ""))
