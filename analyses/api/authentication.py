"""Token authentication: django-rest-knox's check, with this project's two changes.

- An expired token is refused but not deleted on the spot (knox deletes it, unrecorded); it
  stays listed as expired until its owner next obtains a token, which removes it with an
  audit entry.
- Each use is noted in ``last_used_at``, at most once a minute (a write per request would cost
  more than the information is worth).
"""
from __future__ import annotations

from datetime import timedelta

from django.utils import timezone
from drf_spectacular.extensions import OpenApiAuthenticationExtension
from drf_spectacular.plumbing import build_bearer_security_scheme_object
from knox.auth import TokenAuthentication
from rest_framework import exceptions

from analyses.models import ApiToken

LAST_USED_RESOLUTION = timedelta(minutes=1)


class ApiTokenAuthentication(TokenAuthentication):
    """``Authorization: Token <token>``; the token is looked up by its first characters and
    compared by hash in constant time."""

    def authenticate_credentials(self, token: bytes):
        try:
            token.decode("utf-8")
        except UnicodeDecodeError:
            raise exceptions.AuthenticationFailed("Invalid token.") from None
        return super().authenticate_credentials(token)

    def _cleanup_token(self, auth_token) -> bool:
        return auth_token.expiry is not None and auth_token.expiry < timezone.now()

    def validate_user(self, auth_token):
        user, token = super().validate_user(auth_token)
        now = timezone.now()
        if token.last_used_at is None or now - token.last_used_at >= LAST_USED_RESOLUTION:
            ApiToken.objects.filter(pk=token.pk).update(last_used_at=now)
            token.last_used_at = now
        return user, token


class ApiTokenScheme(OpenApiAuthenticationExtension):
    """How the OpenAPI schema describes it: the header ``Authorization: Token <token>``."""

    target_class = "analyses.api.authentication.ApiTokenAuthentication"
    name = "tokenAuth"

    def get_security_definition(self, auto_schema):
        return build_bearer_security_scheme_object(header_name="Authorization", token_prefix="Token")
