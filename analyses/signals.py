"""Signal receivers; each only calls a service."""
from __future__ import annotations

from django.contrib.auth import get_user_model
from django.contrib.auth.signals import user_logged_in
from django.core.signals import request_started
from django.db.models.signals import m2m_changed
from django.dispatch import receiver

from analyses.roles import forget_roles, new_request_generation

from analyses.services.emergency import superuser_sign_in_record


@receiver(user_logged_in, dispatch_uid="analyses.superuser_sign_in")
def _superuser_signed_in(sender, request, user, **kwargs) -> None:
    meta = getattr(request, "META", {}) if request is not None else {}
    superuser_sign_in_record(user, path=getattr(request, "path", ""), address=meta.get("REMOTE_ADDR", ""))


@receiver(request_started, dispatch_uid="analyses.role_cache_generation")
def _request_started(sender, **kwargs) -> None:
    new_request_generation()


@receiver(m2m_changed, sender=get_user_model().groups.through, dispatch_uid="analyses.role_cache_forget")
def _groups_changed(sender, instance, action, reverse, **kwargs) -> None:
    if not action.startswith("post_"):
        return
    if reverse:  # group.user_set changed: the users' objects are out of reach, so drop every cache
        new_request_generation()
    else:
        forget_roles(instance)
