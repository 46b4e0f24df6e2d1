"""Obtaining a token, the signed-in user, and the list of users (for lab managers)."""
from __future__ import annotations

from django.contrib.auth.signals import user_logged_in
from drf_spectacular.utils import extend_schema, extend_schema_view
from rest_framework.authtoken.models import Token
from rest_framework.authtoken.views import ObtainAuthToken
from rest_framework.permissions import IsAuthenticated
from rest_framework.request import Request
from rest_framework.response import Response
from rest_framework.views import APIView

from analyses.api.filters import UserFilter
from analyses.api.permissions import IsLabManager
from analyses.api.schema import errors
from analyses.api.serializers.accounts import CredentialsSerializer, MeSerializer, TokenSerializer, UserSerializer
from analyses.api.views.common import PagedListView
from analyses.selectors.api_accounts import user_summary
from analyses.selectors.users import user_list


class TokenObtainView(ObtainAuthToken):
    """Username and password in, the user's API token out (the same token on every call)."""

    @extend_schema(
        request=CredentialsSerializer,
        responses={200: TokenSerializer, 400: errors(400)[400]},
        summary="Obtain an API token",
        auth=[],
    )
    def post(self, request: Request, *args, **kwargs) -> Response:
        serializer = self.get_serializer(data=request.data)
        serializer.is_valid(raise_exception=True)
        user = serializer.validated_data["user"]
        token, _ = Token.objects.get_or_create(user=user)
        # a sign-in like the session login's: last_login is set, a superuser's is audited
        user_logged_in.send(sender=type(user), request=request, user=user)
        return Response({"token": token.key})


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
