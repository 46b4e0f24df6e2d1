"""Lots: creation, readiness, release with its certificate, rejection, audit trail."""
from __future__ import annotations

from django.http import HttpResponse
from django.shortcuts import get_object_or_404
from drf_spectacular.types import OpenApiTypes
from drf_spectacular.utils import OpenApiParameter, extend_schema, extend_schema_view
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
from analyses.api.serializers.common import ReasonSerializer
from analyses.api.serializers.lots import (
    CertificateSerializer,
    LotCreateSerializer,
    LotSerializer,
    ReadinessSerializer,
    ReissueSerializer,
    RejectSerializer,
    ReleaseSerializer,
)
from analyses.api.views.common import PagedListView, validated
from analyses.models import AuditEntry, Lot
from analyses.models import Certificate
from analyses.selectors.api_lots import certificate_of_lot, certificate_version_param, certificate_versions_of_lot
from analyses.selectors.audit import audit_trail_for
from analyses.selectors.lots import lot_list, lot_readiness
from analyses.services.certificates import certificate_reissue
from analyses.services.lots import lot_create, lot_reject, lot_release
from analyses.services.post_release import lot_hold_lift

RELEASE = requires("release_lot", "release or reject lots")


@extend_schema_view(get=extend_schema(summary="List lots", responses={200: LotSerializer(many=True), **errors(400)}))
class LotListView(PagedListView):
    input_serializer_classes = {"POST": LotCreateSerializer}
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
        request=ReleaseSerializer,
        responses={201: CertificateSerializer, **errors(400, 403, 404, 409)},
        summary="Release the lot (QA), signed with the user's password, and issue its certificate of analysis",
    )
    def post(self, request: Request, pk: int) -> Response:
        data = validated(ReleaseSerializer, request)
        certificate = lot_release(request.user, pk, note=data["note"], password=data["password"], request=request)
        return Response(CertificateSerializer(certificate).data, status=status.HTTP_201_CREATED)


class LotRejectView(APIView):
    permission_classes = [IsAuthenticated, RELEASE]

    @extend_schema(
        request=RejectSerializer,
        responses={200: LotSerializer, **errors(400, 403, 404, 409)},
        summary="Reject the lot (QA), with a reason, signed with the user's password; its open samples are rejected",
    )
    def post(self, request: Request, pk: int) -> Response:
        data = validated(RejectSerializer, request)
        lot = lot_reject(request.user, pk, reason=data["reason"], password=data["password"], request=request)
        return Response(LotSerializer(lot).data)


class LotHoldLiftView(APIView):
    permission_classes = [IsAuthenticated, requires("release_lot", "lift a hold notice")]

    @extend_schema(
        request=ReasonSerializer,
        responses={200: LotSerializer, **errors(400, 403, 404, 409)},
        summary="Lift a released lot's hold notice (QA)",
        description=(
            "Ends the hold notice a post-release investigation put on a released lot: the lot is plainly released "
            "again, and the audit trail keeps the notice and its lifting with the reason. QA group only. 409 when the "
            "lot has no hold notice; 400 naming `reason` when it is missing."
        ),
    )
    def post(self, request: Request, pk: int) -> Response:
        data = validated(ReasonSerializer, request)
        lot = lot_hold_lift(request.user, pk, reason=data["reason"])
        return Response(LotSerializer(lot_list().get(pk=lot.pk)).data)


VERSION_PARAMETER = OpenApiParameter(
    "version", int, required=False,
    description="A version of the certificate (1 is the first issue); left out, the current version",
)


def _asked_certificate(request: Request, pk: int) -> Certificate:
    return certificate_of_lot(pk, certificate_version_param(request.query_params.get("version")))


def _replaced_by(certificate: Certificate) -> str | None:
    newer = getattr(certificate, "replaced_by", None)
    return newer.number if newer is not None else None


class LotCertificateView(APIView):
    @extend_schema(
        parameters=[VERSION_PARAMETER],
        responses={200: CertificateSerializer, **errors(400, 404)},
        summary="The certificate of analysis of a released lot, as issued (JSON, for integrations)",
    )
    def get(self, request: Request, pk: int) -> Response:
        return Response(CertificateSerializer(_asked_certificate(request, pk)).data)


class LotCertificatePdfView(APIView):
    @extend_schema(
        parameters=[VERSION_PARAMETER],
        responses={(200, "application/pdf"): OpenApiTypes.BINARY, **errors(400, 404)},
        summary="The certificate of analysis as a PDF, for the customer",
    )
    def get(self, request: Request, pk: int) -> HttpResponse:
        from analyses.documents.certificate_pdf import certificate_pdf  # reportlab: only when rendering

        certificate = _asked_certificate(request, pk)
        response = HttpResponse(certificate_pdf(certificate.content, replaced_by=_replaced_by(certificate)), content_type="application/pdf")
        response["Content-Disposition"] = f'inline; filename="{certificate.number}.pdf"'
        return response


class LotCertificateHtmlView(APIView):
    @extend_schema(
        parameters=[VERSION_PARAMETER],
        responses={(200, "text/html"): OpenApiTypes.STR, **errors(400, 404)},
        summary="The certificate of analysis as an HTML page",
    )
    def get(self, request: Request, pk: int) -> HttpResponse:
        from analyses.documents.certificate_html import certificate_html

        certificate = _asked_certificate(request, pk)
        return HttpResponse(certificate_html(certificate.content, replaced_by=_replaced_by(certificate)), content_type="text/html; charset=utf-8")


class LotCertificateVersionsView(APIView):
    @extend_schema(
        responses={200: CertificateSerializer(many=True), **errors(404)},
        summary="Every version of the lot's certificate, the current one first (empty before release)",
    )
    def get(self, request: Request, pk: int) -> Response:
        return Response(CertificateSerializer(certificate_versions_of_lot(pk), many=True).data)


class LotCertificateReissueView(APIView):
    permission_classes = [IsAuthenticated, RELEASE]

    @extend_schema(
        request=ReissueSerializer,
        responses={201: CertificateSerializer, **errors(400, 403, 404, 409)},
        summary="Reissue the certificate of a released lot (QA), with a reason, signed with the user's password",
    )
    def post(self, request: Request, pk: int) -> Response:
        data = validated(ReissueSerializer, request)
        certificate = certificate_reissue(
            request.user, pk, reason=data["reason"], customer=data["customer"], password=data["password"], request=request,
        )
        return Response(CertificateSerializer(certificate).data, status=status.HTTP_201_CREATED)


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
