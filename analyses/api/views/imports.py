"""Instrument file import: mappings, and files imported through them."""
from __future__ import annotations

from drf_spectacular.utils import OpenApiResponse, extend_schema, extend_schema_view
from rest_framework import status
from rest_framework.generics import RetrieveAPIView
from rest_framework.parsers import FormParser, MultiPartParser
from rest_framework.permissions import IsAuthenticated
from rest_framework.request import Request
from rest_framework.response import Response

from analyses.api.permissions import IsLabManager, NotQAReviewer, requires
from analyses.api.schema import REPLAYED, REPLAYED_HEADER, errors
from analyses.api.serializers.imports import (
    ImportMappingCreateSerializer,
    ImportMappingSerializer,
    ResultImportUploadSerializer,
    ResultImportSerializer,
)
from analyses.api.views.common import PagedListView, validated
from analyses.selectors.imports import import_mapping_list, result_import_list
from analyses.services.imports import import_mapping_create, results_import


class ManagerWrites(IsLabManager):
    """Reads for everyone signed in; creating a mapping for lab managers and admins."""

    def has_permission(self, request, view) -> bool:
        return request.method not in ("POST",) or super().has_permission(request, view)


@extend_schema_view(get=extend_schema(summary="List import mappings", responses={200: ImportMappingSerializer(many=True), **errors()}))
class ImportMappingListView(PagedListView):
    serializer_class = ImportMappingSerializer
    input_serializer_classes = {"POST": ImportMappingCreateSerializer}
    permission_classes = [IsAuthenticated, ManagerWrites]

    def get_queryset(self):
        return import_mapping_list()

    @extend_schema(request=ImportMappingCreateSerializer, responses={201: ImportMappingSerializer, **errors(400, 403)},
                   summary="Create an import mapping (lab manager, admin)")
    def post(self, request: Request) -> Response:
        mapping = import_mapping_create(request.user, **validated(ImportMappingCreateSerializer, request))
        return Response(ImportMappingSerializer(mapping).data, status=status.HTTP_201_CREATED)


@extend_schema_view(get=extend_schema(summary="One import mapping", responses={200: ImportMappingSerializer, **errors(404)}))
class ImportMappingDetailView(RetrieveAPIView):
    serializer_class = ImportMappingSerializer

    def get_queryset(self):
        return import_mapping_list()


class RawDataWrites(NotQAReviewer):
    """QA reads the imports; it never enters raw data, so it never imports."""

    def has_permission(self, request, view) -> bool:
        return request.method != "POST" or super().has_permission(request, view)


@extend_schema_view(get=extend_schema(summary="List imported files, newest first", responses={200: ResultImportSerializer(many=True), **errors()}))
class ResultImportListView(PagedListView):
    serializer_class = ResultImportSerializer
    parser_classes = [MultiPartParser, FormParser]
    input_serializer_classes = {"POST": ResultImportUploadSerializer}
    permission_classes = [IsAuthenticated, RawDataWrites, requires("record_result", "import results", methods=("POST",))]

    def get_queryset(self):
        return result_import_list()

    @extend_schema(
        request={"multipart/form-data": ResultImportUploadSerializer},
        parameters=[REPLAYED],
        responses={201: OpenApiResponse(ResultImportSerializer), **errors(400, 403, 409)},
        summary="Import results from an instrument file, all or nothing",
    )
    def post(self, request: Request) -> Response:
        data = validated(ResultImportUploadSerializer, request)
        upload = data["file"]
        outcome = results_import(request.user, content=upload.read(), file_name=upload.name, mapping=data["mapping"])
        headers = {REPLAYED_HEADER: "true"} if outcome.replayed else None
        return Response(ResultImportSerializer(outcome.result_import).data, status=status.HTTP_201_CREATED, headers=headers)


@extend_schema_view(get=extend_schema(summary="One imported file", responses={200: ResultImportSerializer, **errors(404)}))
class ResultImportDetailView(RetrieveAPIView):
    serializer_class = ResultImportSerializer

    def get_queryset(self):
        return result_import_list()
