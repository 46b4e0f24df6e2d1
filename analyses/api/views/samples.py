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
from analyses.api.serializers.samples import (
    RetainTestsSerializer,
    SampleReceiveSerializer,
    SampleRegisterSerializer,
    SampleSerializer,
    SampleTestSerializer,
)
from analyses.api.views.common import PagedListView, validated
from analyses.models import AuditEntry, Sample
from analyses.selectors.audit import audit_trail_for
from analyses.selectors.samples import sample_list, with_test_rows
from analyses.services.post_release import retain_tests_add
from analyses.services.samples import sample_cancel, sample_hold, sample_receive, sample_register, sample_resume

HOLD = requires("hold_sample", "put samples on hold or resume them")
STATE_ERRORS = errors(400, 403, 404, 409)


@extend_schema_view(get=extend_schema(summary="List samples", responses={200: SampleSerializer(many=True), **errors(400)}))
class SampleListView(PagedListView):
    input_serializer_classes = {"POST": SampleRegisterSerializer}
    serializer_class = SampleSerializer
    filterset_class = SampleFilter
    permission_classes = [IsAuthenticated, requires("register_sample", "register samples", methods=("POST",))]

    rows_loader = staticmethod(lambda rows: with_test_rows(rows, SampleTestSerializer.row_lookups()))

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


class RetainTestsView(APIView):
    permission_classes = [IsAuthenticated, requires("receive_sample", "order tests on retained samples")]

    @extend_schema(
        request=RetainTestsSerializer,
        responses={201: SampleSerializer, **STATE_ERRORS},
        summary="Test a retained sample of a released lot (lab manager)",
        description=(
            "Orders one test per method on a retained sample after its lot's release (a customer complaint, a "
            "periodic check), on the lines of the specification the lot was released against; the answer is the "
            "sample with its tests. The tests follow the usual walk (assign, enter, review). An out-of-specification "
            "result accepted on them opens a post-release investigation and alerts QA; the lot stays released until "
            "QA decides. Lab manager or admin. 409 when the sample is not a received retained sample of a released lot, "
            "a method has no line in that specification, or a test of it is still open; 400 naming `methods` or "
            "`reason`."
        ),
    )
    def post(self, request: Request, pk: int) -> Response:
        data = validated(RetainTestsSerializer, request)
        retain_tests_add(request.user, pk, methods=data["methods"], reason=data["reason"])
        return Response(SampleSerializer(sample_list().get(pk=pk)).data, status=status.HTTP_201_CREATED)


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
