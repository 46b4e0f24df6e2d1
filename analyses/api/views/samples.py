"""Samples: registration, receipt, hold, resume, cancel, audit trail."""
from __future__ import annotations

from django.shortcuts import get_object_or_404
from drf_spectacular.utils import extend_schema, extend_schema_view
from rest_framework import status
from rest_framework.generics import RetrieveAPIView
from rest_framework.permissions import IsAuthenticated
from rest_framework.request import Request
from rest_framework.response import Response
from rest_framework.views import APIView

from analyses.api.filters import SampleFilter
from analyses.api.permissions import requires
from analyses.api.schema import errors
from analyses.api.serializers.audit import AuditEntrySerializer
from analyses.api.serializers.common import ReasonSerializer
from analyses.api.serializers.samples import SampleReceiveSerializer, SampleRegisterSerializer, SampleSerializer
from analyses.api.views.common import PagedListView, validated
from analyses.models import AuditEntry, Sample
from analyses.selectors.audit import audit_trail_for
from analyses.selectors.lists import sample_list
from analyses.services.samples import sample_cancel, sample_hold, sample_receive, sample_register, sample_resume

HOLD = requires("hold_sample", "put samples on hold or resume them")
STATE_ERRORS = errors(400, 403, 404, 409)


@extend_schema_view(get=extend_schema(summary="List samples", responses={200: SampleSerializer(many=True), **errors(400)}))
class SampleListView(PagedListView):
    input_serializer_classes = {"POST": SampleRegisterSerializer}
    serializer_class = SampleSerializer
    filterset_class = SampleFilter
    permission_classes = [IsAuthenticated, requires("register_sample", "register samples", methods=("POST",))]

    def get_queryset(self):
        return sample_list()

    @extend_schema(
        request=SampleRegisterSerializer,
        responses={201: SampleSerializer, **errors(400, 403, 409)},
        summary="Register a sample taken from an open lot (lab manager)",
    )
    def post(self, request: Request) -> Response:
        data = validated(SampleRegisterSerializer, request)
        sample = sample_register(request.user, data.pop("lot"), **data)
        return Response(SampleSerializer(sample).data, status=status.HTTP_201_CREATED)


@extend_schema_view(get=extend_schema(summary="One sample with its tests", responses={200: SampleSerializer, **errors(404)}))
class SampleDetailView(RetrieveAPIView):
    serializer_class = SampleSerializer

    def get_queryset(self):
        return sample_list()


class SampleReceiveView(APIView):
    permission_classes = [IsAuthenticated, requires("receive_sample", "receive samples")]

    @extend_schema(
        request=SampleReceiveSerializer,
        responses={200: SampleSerializer, **STATE_ERRORS},
        summary="Receive a registered sample; its tests are created from the specification in effect",
    )
    def post(self, request: Request, pk: int) -> Response:
        data = validated(SampleReceiveSerializer, request)
        return Response(SampleSerializer(sample_receive(request.user, pk, **data)).data)


class SampleHoldView(APIView):
    permission_classes = [IsAuthenticated, HOLD]

    @extend_schema(
        request=ReasonSerializer, responses={200: SampleSerializer, **STATE_ERRORS}, summary="Put a sample on hold"
    )
    def post(self, request: Request, pk: int) -> Response:
        data = validated(ReasonSerializer, request)
        return Response(SampleSerializer(sample_hold(request.user, pk, reason=data["reason"])).data)


class SampleResumeView(APIView):
    permission_classes = [IsAuthenticated, HOLD]

    @extend_schema(
        request=ReasonSerializer,
        responses={200: SampleSerializer, **STATE_ERRORS},
        summary="Return a held sample to the state it was held from",
    )
    def post(self, request: Request, pk: int) -> Response:
        data = validated(ReasonSerializer, request)
        return Response(SampleSerializer(sample_resume(request.user, pk, reason=data["reason"])).data)


class SampleCancelView(APIView):
    permission_classes = [IsAuthenticated, requires("cancel_sample", "cancel samples")]

    @extend_schema(
        request=ReasonSerializer,
        responses={200: SampleSerializer, **STATE_ERRORS},
        summary="Cancel a sample; its open tests are cancelled",
    )
    def post(self, request: Request, pk: int) -> Response:
        data = validated(ReasonSerializer, request)
        return Response(SampleSerializer(sample_cancel(request.user, pk, reason=data["reason"])).data)


@extend_schema_view(
    get=extend_schema(
        summary="Audit trail of the sample, its tests and results",
        responses={200: AuditEntrySerializer(many=True), **errors(403, 404)},
    )
)
class SampleAuditTrailView(PagedListView):
    serializer_class = AuditEntrySerializer
    permission_classes = [IsAuthenticated, requires("view_audit_trail", "read the audit trail")]

    def get_queryset(self):
        if self.is_schema_view:
            return AuditEntry.objects.none()
        sample = get_object_or_404(Sample, pk=self.kwargs["pk"])
        return audit_trail_for(self.request.user, sample)
