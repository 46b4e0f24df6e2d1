"""API tokens: named, expiring, several per user; the database holds only a hash.

The token itself is shown once, when it is issued (``analyses.services.tokens``). django-rest-knox
does the cryptography and the look-up (``KNOX_TOKEN_MODEL`` points here); this model adds a
plain numeric id (knox's own key is the 128-character digest, too long to name in the audit
trail), a name per token, and when the token was last used.
"""
from __future__ import annotations

from django.db import models
from knox.models import AbstractAuthToken
from knox.settings import CONSTANTS


class ApiToken(AbstractAuthToken):
    id = models.BigAutoField(primary_key=True)
    # SHA-512 of the whole token; never the token itself
    digest = models.CharField(max_length=CONSTANTS.DIGEST_LENGTH, unique=True)
    name = models.CharField(max_length=80, help_text="what the token is for, e.g. an instrument PC or an integration")
    last_used_at = models.DateTimeField(null=True, blank=True)

    class Meta:
        ordering = ["-created", "-id"]
        constraints = [models.UniqueConstraint(fields=["user", "name"], name="api_token_name_unique_per_user")]

    def __str__(self) -> str:
        return f"{self.name} ({self.token_key}…) of {self.user_id}"
