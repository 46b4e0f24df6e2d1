"""Obtaining a token, and the signed-in user."""
from __future__ import annotations

from drf_spectacular.utils import extend_schema
from rest_framework.authtoken.views import ObtainAuthToken
from rest_framework.request import Request
from rest_framework.response import Response
from rest_framework.views import APIView

from analyses.api.schema import errors
from analyses.api.serializers.accounts import MeSerializer, CredentialsSerializer, TokenSerializer
from analyses.selectors.api_accounts import user_summary


class TokenObtainView(ObtainAuthToken):
    """Username and password in, the user's API token out (the same token on every call)."""

    @extend_schema(
        request=CredentialsSerializer,
        responses={200: TokenSerializer, 400: errors(400)[400]},
        summary="Obtain an API token",
        auth=[],
    )
    def post(self, request: Request, *args, **kwargs) -> Response:
        return super().post(request, *args, **kwargs)


class MeView(APIView):
    @extend_schema(responses={200: MeSerializer, **errors()}, summary="The signed-in user, roles and permissions")
    def get(self, request: Request) -> Response:
        return Response(MeSerializer(user_summary(request.user)).data)
