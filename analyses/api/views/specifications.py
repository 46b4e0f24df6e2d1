"""Specifications: drafts with lines, approval by QA, revisions."""
from __future__ import annotations

from drf_spectacular.utils import extend_schema, extend_schema_view
from rest_framework import status
from rest_framework.generics import RetrieveAPIView
from rest_framework.permissions import IsAuthenticated
from rest_framework.request import Request
from rest_framework.response import Response
from rest_framework.views import APIView

from analyses.api.filters import SpecificationFilter
from analyses.api.permissions import requires
from analyses.api.schema import errors
from analyses.api.serializers.specifications import (
    SpecificationCreateSerializer,
    SpecificationLinesSerializer,
    SpecificationReviseSerializer,
    SpecificationSerializer,
)
from analyses.api.views.common import PagedListView, validated
from analyses.selectors.specifications import specification_list
from analyses.services.specifications import (
    specification_approve,
    specification_create,
    specification_lines_replace,
    specification_revise,
)

DRAFT = requires("draft_specification", "draft or revise specifications")


@extend_schema_view(
    get=extend_schema(summary="List specifications", responses={200: SpecificationSerializer(many=True), **errors(400)})
)
class SpecificationListView(PagedListView):
    input_serializer_classes = {"POST": SpecificationCreateSerializer}
    serializer_class = SpecificationSerializer
    filterset_class = SpecificationFilter
    permission_classes = [
        IsAuthenticated, requires("draft_specification", "draft specifications", methods=("POST",))
    ]

    def get_queryset(self):
        return specification_list()

    @extend_schema(
        request=SpecificationCreateSerializer,
        responses={201: SpecificationSerializer, **errors(400, 403)},
        summary="Draft a specification (the product's next version) with its lines",
    )
    def post(self, request: Request) -> Response:
        data = validated(SpecificationCreateSerializer, request)
        specification = specification_create(
            request.user, data["product"], effective_from=data["effective_from"], lines=data["lines"], note=data["note"]
        )
        return Response(SpecificationSerializer(specification).data, status=status.HTTP_201_CREATED)


@extend_schema_view(get=extend_schema(summary="One specification", responses={200: SpecificationSerializer, **errors(404)}))
class SpecificationDetailView(RetrieveAPIView):
    serializer_class = SpecificationSerializer

    def get_queryset(self):
        return specification_list()


class SpecificationLinesView(APIView):
    permission_classes = [IsAuthenticated, DRAFT]

    @extend_schema(
        request=SpecificationLinesSerializer,
        responses={200: SpecificationSerializer, **errors(400, 403, 404, 409)},
        summary="Replace all lines of a draft specification",
    )
    def put(self, request: Request, pk: int) -> Response:
        data = validated(SpecificationLinesSerializer, request)
        specification = specification_lines_replace(request.user, pk, lines=data["lines"])
        return Response(SpecificationSerializer(specification).data)


class SpecificationApproveView(APIView):
    permission_classes = [IsAuthenticated, requires("approve_specification", "approve specifications")]

    @extend_schema(
        request=None,
        responses={200: SpecificationSerializer, **errors(403, 404, 409)},
        summary="Approve a draft (QA); it is never edited again",
    )
    def post(self, request: Request, pk: int) -> Response:
        return Response(SpecificationSerializer(specification_approve(request.user, pk)).data)


class SpecificationReviseView(APIView):
    permission_classes = [IsAuthenticated, DRAFT]

    @extend_schema(
        request=SpecificationReviseSerializer,
        responses={201: SpecificationSerializer, **errors(400, 403, 404, 409)},
        summary="Start a new draft version from an approved specification",
    )
    def post(self, request: Request, pk: int) -> Response:
        data = validated(SpecificationReviseSerializer, request)
        revision = specification_revise(
            request.user, pk, effective_from=data["effective_from"], lines=data.get("lines"), note=data["note"]
        )
        return Response(SpecificationSerializer(revision).data, status=status.HTTP_201_CREATED)
