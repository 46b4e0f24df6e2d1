"""Request-rate limits for every caller (DRF throttling), rates from settings.

DRF's own classes copy the rates when the module is imported; these read them on each request,
so a changed setting (or a test's ``override_settings``) takes effect at once.
"""
from __future__ import annotations

from rest_framework.settings import api_settings
from rest_framework.throttling import AnonRateThrottle, UserRateThrottle


class SignedInRateThrottle(UserRateThrottle):
    """Per signed-in user (token or session), scope "user"."""

    def get_rate(self):
        return api_settings.DEFAULT_THROTTLE_RATES.get(self.scope)


class AnonymousRateThrottle(AnonRateThrottle):
    """Per client address for callers without credentials, scope "anon"."""

    def get_rate(self):
        return api_settings.DEFAULT_THROTTLE_RATES.get(self.scope)
