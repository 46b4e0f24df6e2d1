"""Obtaining, listing and revoking tokens, the signed-in user, and the list of users (for lab managers)."""
from __future__ import annotations

from django.contrib.auth.signals import user_logged_in
from django.contrib.auth import authenticate
from drf_spectacular.utils import OpenApiResponse, extend_schema, extend_schema_view
from rest_framework.permissions import AllowAny, IsAuthenticated
from rest_framework.request import Request
from rest_framework.response import Response
from rest_framework.views import APIView

from analyses.api.filters import UserFilter
from analyses.api.permissions import IsLabManager
from analyses.api.schema import ErrorSerializer, errors
from analyses.api.serializers.accounts import (
    CredentialsSerializer,
    IssuedTokenSerializer,
    MeSerializer,
    RevokedTokenSerializer,
    TokenRevokeSerializer,
    TokenSerializer,
    UserSerializer,
)
from analyses.api.views.common import PagedListView, validated
from analyses.errors import InvalidInput
from analyses.login_guard import login_succeeded
from analyses.selectors.api_accounts import user_summary
from analyses.selectors.tokens import token_list
from analyses.selectors.users import user_list
from analyses.services.tokens import token_issue, token_revoke

WRONG_CREDENTIALS = "the user name or password is wrong"
LOCKED_OUT = OpenApiResponse(
    ErrorSerializer,
    description="Too many failed logins for this account or from this address; the Retry-After header "
    "says after how many seconds to try again"
)


class TokenObtainView(APIView):
    """Username and password in, a new named API token out, shown this once."""

    authentication_classes: list = []
    permission_classes = [AllowAny]

    @extend_schema(
        request=CredentialsSerializer,
        responses={200: IssuedTokenSerializer, 400: errors(400)[400], 409: errors(409)[409], 429: LOCKED_OUT},
        summary="Obtain a new API token (shown once; expires after API_TOKEN_TTL_DAYS)",
        auth=[],
    )
    def post(self, request: Request) -> Response:
        data = validated(CredentialsSerializer, request)
        # a locked account or address is refused inside authenticate(), before any hashing,
        # and answered with 429 by analyses.login_guard.LoginLockoutMiddleware
        user = authenticate(request, username=data["username"], password=data["password"])
        if user is None:
            # in words, naming the password (the field to type again), never saying which of the two was wrong
            raise InvalidInput.for_field("password", WRONG_CREDENTIALS)
        login_succeeded(user.get_username())
        # a sign-in like the session login's: last_login is set, a superuser's is audited
        user_logged_in.send(sender=type(user), request=request, user=user)
        return Response(IssuedTokenSerializer(token_issue(user, name=data.get("name"))).data)


@extend_schema_view(
    get=extend_schema(
        summary="Your own API tokens: name, prefix, when created, expires and last used (never the token itself)",
        responses={200: TokenSerializer(many=True), **errors(400)},
    )
)
class TokenListView(PagedListView):
    serializer_class = TokenSerializer

    def get_queryset(self):
        return token_list(None if self.is_schema_view else self.request.user)


class TokenRevokeView(APIView):
    @extend_schema(
        request=TokenRevokeSerializer,
        responses={200: RevokedTokenSerializer, **errors(400, 404)},
        summary="Revoke one of your own API tokens at once",
    )
    def post(self, request: Request, pk: int) -> Response:
        data = validated(TokenRevokeSerializer, request)
        return Response(RevokedTokenSerializer(token_revoke(request.user, pk, reason=data["reason"])).data)


class MeView(APIView):
    @extend_schema(responses={200: MeSerializer, **errors()}, summary="The signed-in user, roles and permissions")
    def get(self, request: Request) -> Response:
        return Response(MeSerializer(user_summary(request.user)).data)


@extend_schema_view(
    get=extend_schema(
        summary="Active users with their roles, e.g. ?role=analyst to find whom to assign tests to (lab manager)",
        responses={200: UserSerializer(many=True), **errors(400, 403)},
    )
)
class UserListView(PagedListView):
    permission_classes = [IsAuthenticated, IsLabManager]
    serializer_class = UserSerializer
    filterset_class = UserFilter

    def get_queryset(self):
        return user_list()
