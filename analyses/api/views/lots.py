"""Lots: creation, readiness, release with its certificate, rejection, audit trail."""
from __future__ import annotations

from django.shortcuts import get_object_or_404
from drf_spectacular.utils import extend_schema, extend_schema_view
from rest_framework import status
from rest_framework.generics import RetrieveAPIView
from rest_framework.permissions import IsAuthenticated
from rest_framework.request import Request
from rest_framework.response import Response
from rest_framework.views import APIView

from analyses.api.filters import LotFilter
from analyses.api.permissions import requires
from analyses.api.schema import errors
from analyses.api.serializers.audit import AuditEntrySerializer
from analyses.api.serializers.common import NoteSerializer, ReasonSerializer
from analyses.api.serializers.lots import CertificateSerializer, LotCreateSerializer, LotSerializer, ReadinessSerializer
from analyses.api.views.common import PagedListView, validated
from analyses.models import AuditEntry, Lot
from analyses.selectors.api_lots import certificate_of_lot
from analyses.selectors.audit import audit_trail_for
from analyses.selectors.lists import lot_list, lot_readiness
from analyses.services.lots import lot_create, lot_reject, lot_release

RELEASE = requires("release_lot", "release or reject lots")


@extend_schema_view(get=extend_schema(summary="List lots", responses={200: LotSerializer(many=True), **errors(400)}))
class LotListView(PagedListView):
    serializer_class = LotSerializer
    filterset_class = LotFilter
    permission_classes = [IsAuthenticated, requires("create_lot", "create lots", methods=("POST",))]

    def get_queryset(self):
        return lot_list()

    @extend_schema(
        request=LotCreateSerializer,
        responses={201: LotSerializer, **errors(400, 403)},
        summary="Create a production lot or an incoming delivery (lab manager)",
    )
    def post(self, request: Request) -> Response:
        lot = lot_create(request.user, **validated(LotCreateSerializer, request))
        return Response(LotSerializer(lot).data, status=status.HTTP_201_CREATED)


@extend_schema_view(get=extend_schema(summary="One lot", responses={200: LotSerializer, **errors(404)}))
class LotDetailView(RetrieveAPIView):
    serializer_class = LotSerializer

    def get_queryset(self):
        return lot_list()


class LotReadinessView(APIView):
    @extend_schema(
        responses={200: ReadinessSerializer, **errors(404)},
        summary="Whether the lot could be released now, and what is missing",
    )
    def get(self, request: Request, pk: int) -> Response:
        return Response(ReadinessSerializer(lot_readiness(pk)).data)


class LotReleaseView(APIView):
    permission_classes = [IsAuthenticated, RELEASE]

    @extend_schema(
        request=NoteSerializer,
        responses={201: CertificateSerializer, **errors(400, 403, 404, 409)},
        summary="Release the lot (QA) and issue its certificate of analysis",
        description="409 with `missing` listing every test, sample or investigation that blocks the release.",
    )
    def post(self, request: Request, pk: int) -> Response:
        data = validated(NoteSerializer, request)
        certificate = lot_release(request.user, pk, note=data["note"])
        return Response(CertificateSerializer(certificate).data, status=status.HTTP_201_CREATED)


class LotRejectView(APIView):
    permission_classes = [IsAuthenticated, RELEASE]

    @extend_schema(
        request=ReasonSerializer,
        responses={200: LotSerializer, **errors(400, 403, 404, 409)},
        summary="Reject the lot (QA), with a reason; its open samples are rejected",
    )
    def post(self, request: Request, pk: int) -> Response:
        data = validated(ReasonSerializer, request)
        return Response(LotSerializer(lot_reject(request.user, pk, reason=data["reason"])).data)


class LotCertificateView(APIView):
    @extend_schema(
        responses={200: CertificateSerializer, **errors(404)},
        summary="The certificate of analysis of a released lot, as issued",
    )
    def get(self, request: Request, pk: int) -> Response:
        return Response(CertificateSerializer(certificate_of_lot(pk)).data)


@extend_schema_view(
    get=extend_schema(
        summary="Audit trail of the lot and everything on it",
        responses={200: AuditEntrySerializer(many=True), **errors(403, 404)},
    )
)
class LotAuditTrailView(PagedListView):
    serializer_class = AuditEntrySerializer
    permission_classes = [IsAuthenticated, requires("view_audit_trail", "read the audit trail")]

    def get_queryset(self):
        if self.is_schema_view:
            return AuditEntry.objects.none()
        lot = get_object_or_404(Lot, pk=self.kwargs["pk"])
        return audit_trail_for(self.request.user, lot)
