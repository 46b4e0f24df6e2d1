"""A user's own API tokens (never the token itself: only its hash is stored)."""
from __future__ import annotations

from django.db.models import QuerySet

from analyses.models import ApiToken


def token_list(user) -> QuerySet:
    """``user``'s tokens, newest first; expired ones too until they are removed (at the next issue)."""
    return ApiToken.objects.filter(user=user).order_by("-created", "-id")
