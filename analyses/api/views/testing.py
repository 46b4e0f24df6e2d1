"""Tests: lists, work queues, assignment, review (accept or send back), result history."""
from __future__ import annotations

from django.shortcuts import get_object_or_404
from drf_spectacular.utils import OpenApiParameter, extend_schema, extend_schema_view
from rest_framework import serializers
from rest_framework.generics import RetrieveAPIView
from rest_framework.permissions import IsAuthenticated
from rest_framework.request import Request
from rest_framework.response import Response
from rest_framework.views import APIView

from analyses.api.filters import TestFilter
from analyses.api.permissions import requires
from analyses.api.schema import errors
from analyses.api.serializers.common import NoteSerializer, ReasonSerializer
from analyses.api.serializers.results import ResultSerializer
from analyses.api.serializers.testing import TestAssignmentSerializer, TestAssignSerializer, TestSerializer
from analyses.api.views.common import PagedListView, validated
from analyses.errors import NotFound
from analyses.models import Result, Test
from analyses.selectors.results import result_history
from analyses.selectors.tests import my_queue, review_queue, review_queue_count, test_list, with_usernames, work_queue
from analyses.selectors.uncertainty import with_mean_expanded_rows, with_mean_uncertainty
from analyses.services.assignments import test_assign_bulk
from analyses.services.review import test_accept, test_send_back
from plugins.registry import get_registry

REVIEW = requires("review_test", "review tests")


def _rows(queryset):
    """Queue rows also show who reviewed and their mean's U (joins and one prefetch, not a query
    per row); the people's names also as columns, for the lists read as rows."""
    return with_usernames(with_mean_uncertainty(queryset.select_related("reviewed_by")))


@extend_schema_view(
    get=extend_schema(
        summary="List tests, filtered by state, method, sample, lot, product, assignee, dates",
        responses={200: TestSerializer(many=True), **errors(400)},
    )
)
class TestListView(PagedListView):
    __test__ = False  # not a pytest test class

    serializer_class = TestSerializer
    rows_loader = with_mean_expanded_rows
    filterset_class = TestFilter

    def get_queryset(self):
        return _rows(test_list())


@extend_schema_view(get=extend_schema(summary="One test", responses={200: TestSerializer, **errors(404)}))
class TestDetailView(RetrieveAPIView):
    __test__ = False

    serializer_class = TestSerializer

    def get_queryset(self):
        return _rows(test_list())


ON_HOLD_PARAMETER = OpenApiParameter(
    "on_hold", str, enum=["true", "false"], required=False,
    description="true: only the tests whose sample is on hold; false: leave them out; not given: both "
    "(each row shows sample_state and hold_reason, and a held test is never overdue)",
)


class WorkQueueQuerySerializer(serializers.Serializer):
    on_hold = serializers.ChoiceField(choices=["true", "false"], required=False)


@extend_schema_view(
    get=extend_schema(
        summary="Work queue of one method: open tests by priority, then due date",
        parameters=[ON_HOLD_PARAMETER],
        responses={200: TestSerializer(many=True), **errors(400, 404)},
    )
)
class WorkQueueView(PagedListView):
    serializer_class = TestSerializer
    rows_loader = with_mean_expanded_rows
    filter_backends: list = []

    def get_queryset(self):
        if self.is_schema_view:
            return Test.objects.none()
        code = self.kwargs["method"]
        if code not in get_registry():
            raise NotFound(f"unknown method {code!r}")
        query = WorkQueueQuerySerializer(data=self.request.query_params)
        query.is_valid(raise_exception=True)
        on_hold = query.validated_data.get("on_hold")
        return _rows(work_queue(code, on_hold=None if on_hold is None else on_hold == "true"))


@extend_schema_view(
    get=extend_schema(
        summary="My queue: tests assigned or sent back to me, awaiting results",
        responses={200: TestSerializer(many=True), **errors()},
    )
)
class MyQueueView(PagedListView):
    serializer_class = TestSerializer
    rows_loader = with_mean_expanded_rows
    filter_backends: list = []

    def get_queryset(self):
        if self.is_schema_view:
            return Test.objects.none()
        return _rows(my_queue(self.request.user))


@extend_schema_view(
    get=extend_schema(
        summary="Review queue: tests with all results entered that I may review (four-eyes)",
        responses={200: TestSerializer(many=True), **errors()},
    )
)
class ReviewQueueView(PagedListView):
    serializer_class = TestSerializer
    rows_loader = with_mean_expanded_rows
    filter_backends: list = []

    def get_queryset(self):
        if self.is_schema_view:
            return Test.objects.none()
        return _rows(review_queue(exclude_entered_by=self.request.user))

    def row_count(self, queryset) -> int:
        return review_queue_count(self.request.user)  # the same rows as the queue's queryset, counted faster


class TestAssignView(APIView):
    __test__ = False

    permission_classes = [IsAuthenticated, requires("assign_test", "assign tests")]

    @extend_schema(
        request=TestAssignSerializer,
        responses={200: TestAssignmentSerializer(many=True), **errors(400, 403, 409)},
        summary="Assign or reassign tests to an analyst, all or nothing (lab manager)",
    )
    def post(self, request: Request) -> Response:
        data = validated(TestAssignSerializer, request)
        tests = test_assign_bulk(
            request.user, data["tests"], assignee=data["assignee"], priority=data.get("priority"), due_on=data.get("due_on")
        )
        return Response(TestAssignmentSerializer(tests, many=True).data)


class TestAcceptView(APIView):
    __test__ = False

    permission_classes = [IsAuthenticated, REVIEW]

    @extend_schema(
        request=NoteSerializer,
        responses={200: TestSerializer, **errors(400, 403, 404, 409)},
        summary="Accept a test (not by who entered its results); out of specification opens an investigation",
    )
    def post(self, request: Request, pk: int) -> Response:
        data = validated(NoteSerializer, request)
        return Response(TestSerializer(test_accept(request.user, pk, note=data["note"])).data)


class TestSendBackView(APIView):
    __test__ = False

    permission_classes = [IsAuthenticated, REVIEW]

    @extend_schema(
        request=ReasonSerializer,
        responses={200: TestSerializer, **errors(400, 403, 404, 409)},
        summary="Send a test back for retest, with a reason; its results are invalidated",
    )
    def post(self, request: Request, pk: int) -> Response:
        data = validated(ReasonSerializer, request)
        return Response(TestSerializer(test_send_back(request.user, pk, reason=data["reason"])).data)


@extend_schema_view(
    get=extend_schema(
        summary="Every result of a test, corrected and invalidated ones included",
        responses={200: ResultSerializer(many=True), **errors(404)},
    )
)
class TestResultsView(PagedListView):
    __test__ = False

    serializer_class = ResultSerializer
    filter_backends: list = []

    def get_queryset(self):
        if self.is_schema_view:
            return Result.objects.none()
        test = get_object_or_404(Test.objects.only("pk"), pk=self.kwargs["pk"])
        return result_history(test)
