"""Tokens and the signed-in user."""
from __future__ import annotations

from rest_framework import serializers


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
