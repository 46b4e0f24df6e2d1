"""Locking out repeated failed logins, per account and per client address.

Every way of logging in calls ``django.contrib.auth.authenticate``: the token endpoint, the
session login form and the admin's login page. So the guard sits there:

- ``LockoutCheckBackend``, the one entry of AUTHENTICATION_BACKENDS (Django's ModelBackend with
  a check first), refuses a locked account or address before any password is hashed (hashing is
  the expensive part) and marks the request;
- ``LoginLockoutMiddleware`` turns the answer to a marked request into 429 with Retry-After;
- the ``user_login_failed`` signal counts failures; ``user_logged_in`` (and the token endpoint,
  which opens no session) clears the account's count.

Counts and locks live in the Django cache (``CACHES``), in fixed windows of
LOGIN_FAILURE_WINDOW_SECONDS. The LOGIN_FAILURES_PER_ACCOUNT-th failure within a window locks
the account for LOGIN_LOCKOUT_SECONDS; LOGIN_FAILURES_PER_ADDRESS does the same for the
client address (higher, since a lab's PCs may share one address). Each lock-out is stored and
audited (``services.logins.lockout_record``). DRF throttles count requests, not failures, and
django-axes has one limit for both and no Retry-After, hence this small module.
"""
from __future__ import annotations

import hashlib
import math
import time

from django.conf import settings
from django.contrib.auth.backends import ModelBackend
from django.contrib.auth.models import Permission
from django.contrib.auth.signals import user_logged_in, user_login_failed
from django.core.cache import cache
from django.core.exceptions import PermissionDenied
from django.db.models import Q
from django.dispatch import receiver
from django.http import JsonResponse
from rest_framework.throttling import BaseThrottle

from analyses.models import LockoutScope
from analyses.services.logins import lockout_record

LOCKED_ATTRIBUTE = "login_locked_for"


def _now() -> float:
    return time.time()


def client_address(request) -> str:
    """The caller's address as DRF's throttles see it (X-Forwarded-For only behind
    TRUSTED_PROXY_COUNT proxies)."""
    return BaseThrottle().get_ident(request) or "unknown"


def _key(kind: str, scope: str, subject: str) -> str:
    # hashed: usernames may hold characters a cache key may not
    digest = hashlib.sha256(subject.encode()).hexdigest()
    return f"login-{kind}:{scope}:{digest}"


def _subjects(username: str, address: str) -> list[tuple[str, str, str, int]]:
    """(scope, subject as recorded, subject as counted, limit); the account case-blind, so
    "QA" and "qa" share one count."""
    pairs = [(LockoutScope.ADDRESS, address, address, settings.LOGIN_FAILURES_PER_ADDRESS)]
    if username:
        pairs.insert(0, (LockoutScope.ACCOUNT, username, username.casefold(), settings.LOGIN_FAILURES_PER_ACCOUNT))
    return pairs


def lockout_remaining(username: str, address: str) -> int:
    """Whole seconds until both the account and the address may try again; 0 when neither is locked."""
    keys = [_key("lock", scope, counted) for scope, _, counted, _ in _subjects(username, address)]
    now = _now()
    remaining = max((until - now for until in cache.get_many(keys).values()), default=0.0)
    return math.ceil(remaining) if remaining > 0 else 0


def login_failed(username: str, address: str) -> None:
    """Count one failed login; the failure that reaches a limit locks and is recorded."""
    window, lockout = settings.LOGIN_FAILURE_WINDOW_SECONDS, settings.LOGIN_LOCKOUT_SECONDS
    for scope, subject, counted, limit in _subjects(username, address):
        key = _key("failures", scope, counted)
        cache.add(key, 0, timeout=window)
        try:
            count = cache.incr(key)
        except ValueError:  # the window ended between add and incr
            cache.set(key, 1, timeout=window)
            count = 1
        # exactly at the limit, so concurrent failures past it lock (and record) once
        if count == limit:
            until = _now() + lockout
            cache.set(_key("lock", scope, counted), until, timeout=lockout)
            cache.delete(key)
            lockout_record(scope, subject, address=address, failures=count, until=until)


def login_succeeded(username: str) -> None:
    """A correct password clears the account's count (not the address's)."""
    cache.delete(_key("failures", LockoutScope.ACCOUNT, username.casefold()))


def _http_request(request):
    """The Django request under a DRF one: the object the middleware sees."""
    return getattr(request, "_request", request)


class LockoutCheckBackend(ModelBackend):
    """Django's username-and-password check, refused (PermissionDenied stops ``authenticate``)
    while the account or the client address is locked; the request is marked for the middleware.
    One backend, not a check before ModelBackend: a second backend would hash a wrong password twice."""

    def authenticate(self, request, username=None, password=None, **kwargs):
        if request is not None:
            wait = lockout_remaining(username or "", client_address(request))
            if wait:
                setattr(_http_request(request), LOCKED_ATTRIBUTE, wait)
                raise PermissionDenied("login locked out")
        return super().authenticate(request, username=username, password=password, **kwargs)

    def get_all_permissions(self, user_obj, obj=None):
        """ModelBackend's set, cached on the user object as it caches it, read in one query (the
        user's own permissions and their groups') instead of two: every API request checks a
        permission (issue 12)."""
        if not user_obj.is_active or user_obj.is_anonymous or obj is not None:
            return set()
        if not hasattr(user_obj, "_perm_cache"):
            # a superuser holds every permission, as ModelBackend gives them
            held = Permission.objects.all() if user_obj.is_superuser else Permission.objects.filter(Q(user=user_obj) | Q(group__user=user_obj))
            user_obj._perm_cache = {f"{app}.{name}" for app, name in held.order_by().values_list("content_type__app_label", "codename")}
        return user_obj._perm_cache


def lockout_response(wait: int) -> JsonResponse:
    response = JsonResponse({"detail": f"Too many failed logins; try again in {wait} seconds."}, status=429)
    response["Retry-After"] = str(wait)
    return response


class LoginLockoutMiddleware:
    """Answers 429 with Retry-After to a login refused because of a lock-out."""

    def __init__(self, get_response):
        self.get_response = get_response

    def __call__(self, request):
        response = self.get_response(request)
        wait = getattr(request, LOCKED_ATTRIBUTE, 0)
        return lockout_response(wait) if wait else response


@receiver(user_login_failed, dispatch_uid="analyses.login_guard.failed")
def _count_failure(sender, credentials, request=None, **kwargs) -> None:
    if request is None or getattr(_http_request(request), LOCKED_ATTRIBUTE, 0):
        return  # no address to count, or refused by the lock itself
    login_failed(str(credentials.get("username") or ""), client_address(request))


@receiver(user_logged_in, dispatch_uid="analyses.login_guard.succeeded")
def _clear_failures(sender, user, request=None, **kwargs) -> None:
    login_succeeded(user.get_username())
