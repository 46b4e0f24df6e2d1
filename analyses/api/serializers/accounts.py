"""Tokens and the signed-in user."""
from __future__ import annotations

from rest_framework import serializers

from analyses.selectors.users import roles_of


class CredentialsSerializer(serializers.Serializer):
    username = serializers.CharField()
    password = serializers.CharField(style={"input_type": "password"}, trim_whitespace=False)


class TokenSerializer(serializers.Serializer):
    token = serializers.CharField(help_text='Send it as the header "Authorization: Token <token>"')


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
