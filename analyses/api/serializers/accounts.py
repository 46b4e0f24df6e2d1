"""Tokens and the signed-in user."""
from __future__ import annotations

from django.utils import timezone
from rest_framework import serializers

from analyses.selectors.users import roles_of


class CredentialsSerializer(serializers.Serializer):
    username = serializers.CharField()
    password = serializers.CharField(style={"input_type": "password"}, trim_whitespace=False)
    name = serializers.CharField(
        required=False, allow_blank=True, max_length=80,
        help_text="What the token is for, e.g. an instrument PC; unique among your tokens (default: the time of issue)",
    )


class TokenSerializer(serializers.Serializer):
    """An API token as listed: never the token itself (only its hash is stored)."""

    id = serializers.IntegerField(help_text="Revoke it with POST /api/auth/tokens/<id>/revoke/")
    name = serializers.CharField()
    prefix = serializers.CharField(source="token_key", help_text="The token's first characters, to tell it apart")
    created = serializers.DateTimeField()
    expires = serializers.DateTimeField(source="expiry")
    expired = serializers.SerializerMethodField()
    last_used = serializers.DateTimeField(source="last_used_at", allow_null=True, help_text="To the minute")

    def get_expired(self, token) -> bool:
        return token.expiry is not None and token.expiry <= timezone.now()


class IssuedTokenSerializer(serializers.Serializer):
    """A new token: the only time the token itself is shown."""

    token = serializers.CharField(
        source="secret", help_text='Send it as the header "Authorization: Token <token>"; it is not shown again'
    )
    id = serializers.IntegerField(source="token.id")
    name = serializers.CharField(source="token.name")
    prefix = serializers.CharField(source="token.token_key")
    expires = serializers.DateTimeField(source="token.expiry")


class RevokedTokenSerializer(serializers.Serializer):
    id = serializers.IntegerField()
    name = serializers.CharField()
    prefix = serializers.CharField(source="token_key")
    revoked_at = serializers.DateTimeField()


class TokenRevokeSerializer(serializers.Serializer):
    reason = serializers.CharField(required=False, allow_blank=True, default="", help_text="Why; kept in the audit trail")


class MeSerializer(serializers.Serializer):
    id = serializers.IntegerField()
    username = serializers.CharField()
    first_name = serializers.CharField()
    last_name = serializers.CharField()
    email = serializers.CharField()
    roles = serializers.ListField(child=serializers.CharField(), help_text="lab_manager, analyst, qa_reviewer, admin")
    permissions = serializers.ListField(child=serializers.CharField(), help_text="The analyses permissions the roles grant")


class UserSerializer(serializers.Serializer):
    """A user as a lab manager picks them, e.g. to assign tests (send ``id`` as ``assignee``)."""

    id = serializers.IntegerField(read_only=True)
    username = serializers.CharField(read_only=True)
    name = serializers.SerializerMethodField(help_text="First and last name; empty when not set")
    roles = serializers.SerializerMethodField(help_text="lab_manager, analyst, qa_reviewer, admin")

    def get_name(self, user) -> str:
        return user.get_full_name()

    def get_roles(self, user) -> list[str]:
        return roles_of(user)
