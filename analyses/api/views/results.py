"""Result entry (one, or many all-or-nothing), corrections, and one result."""
from __future__ import annotations

from django.db.models import prefetch_related_objects
from drf_spectacular.utils import OpenApiResponse, extend_schema, extend_schema_view
from rest_framework import status
from rest_framework.generics import RetrieveAPIView
from rest_framework.permissions import IsAuthenticated
from rest_framework.request import Request
from rest_framework.response import Response
from rest_framework.views import APIView

from analyses.api.permissions import NotQAReviewer, requires
from analyses.api.schema import IDEMPOTENCY_KEY, REPLAYED, REPLAYED_HEADER, errors
from analyses.api.serializers.common import idempotency_key
from analyses.api.serializers.results import (
    ResultCorrectSerializer,
    ResultRecordBulkSerializer,
    ResultRecordSerializer,
    ResultSerializer,
    ResultUncertaintySerializer,
)
from analyses.api.views.common import validated
from analyses.row_writes import cached_relations_drop
from analyses.selectors.api_results import result_rows
from analyses.selectors.uncertainty import result_uncertainty
from analyses.services.results import result_correct_once, result_record_bulk_once, result_record_once

RECORD = requires("record_result", "enter results")
REPLAY_NOTE = (
    f"A repeat with the same Idempotency-Key returns the first result with the same status; the response then "
    f"carries the header `{REPLAYED_HEADER}: true`."
)


def _created(body, replayed: bool) -> Response:
    """201 with ``body``; flagged when the service replayed an earlier request."""
    return Response(body, status=status.HTTP_201_CREATED, headers={REPLAYED_HEADER: "true"} if replayed else None)


class ResultRecordView(APIView):
    permission_classes = [IsAuthenticated, NotQAReviewer, RECORD]

    @extend_schema(
        request=ResultRecordSerializer,
        parameters=[IDEMPOTENCY_KEY, REPLAYED],
        responses={201: OpenApiResponse(ResultSerializer, description=REPLAY_NOTE), **errors(400, 403, 409)},
        summary="Enter one replicate of a test assigned to me",
    )
    def post(self, request: Request) -> Response:
        data = validated(ResultRecordSerializer, request)
        recorded = result_record_once(
            request.user, data["test"], inputs=data["inputs"], replicate=data.get("replicate"),
            idempotency_key=idempotency_key(request), titrant_lot=data.get("titrant_lot"), instruments=data.get("instruments"),
        )
        return _created(_shown([recorded.result])[0], recorded.replayed)


def _shown(results) -> list:
    """The results as the API shows them, their instruments read in one go. Then the results and
    their tests let go of the rows kept on them (``row_writes.cached_relations_drop``), so that
    what a batch read and wrote is freed as soon as the answer is sent, not by the cyclic
    collector later (issue 12)."""
    items = list(results)
    prefetch_related_objects(items, "instrument_uses__instrument")
    shown = list(ResultSerializer(items, many=True).data)
    tests = {id(test): test for test in (result._state.fields_cache.get("test") for result in items) if test is not None}
    cached_relations_drop([*tests.values(), *items])
    # the serializer, which refers to itself through its child (freed only by the collector),
    # holds this list: emptied, it holds no result
    items.clear()
    return shown


class ResultRecordBulkView(APIView):
    permission_classes = [IsAuthenticated, NotQAReviewer, RECORD]

    @extend_schema(
        request=ResultRecordBulkSerializer,
        parameters=[IDEMPOTENCY_KEY, REPLAYED],
        responses={
            201: OpenApiResponse(ResultSerializer(many=True), description=REPLAY_NOTE),
            **errors(400, 403, 409),
        },
        summary="Enter many results, all or nothing",
    )
    def post(self, request: Request) -> Response:
        data = validated(ResultRecordBulkSerializer, request)
        batch = result_record_bulk_once(
            request.user, [dict(item) for item in data["results"]], idempotency_key=idempotency_key(request)
        )
        return _created(_shown(batch.results), batch.replayed)


@extend_schema_view(get=extend_schema(summary="One result", responses={200: ResultSerializer, **errors(404)}))
class ResultDetailView(RetrieveAPIView):
    serializer_class = ResultSerializer

    def get_queryset(self):
        return result_rows()


class ResultUncertaintyView(APIView):
    @extend_schema(
        summary="A result's uncertainty budget, and its test mean's",
        responses={200: ResultUncertaintySerializer, **errors(404)},
    )
    def get(self, request: Request, pk: int) -> Response:
        return Response(ResultUncertaintySerializer(result_uncertainty(pk)).data)


class ResultCorrectView(APIView):
    permission_classes = [IsAuthenticated, NotQAReviewer, requires("record_result", "correct results")]

    @extend_schema(
        request=ResultCorrectSerializer,
        parameters=[IDEMPOTENCY_KEY, REPLAYED],
        responses={201: OpenApiResponse(ResultSerializer, description=REPLAY_NOTE), **errors(400, 403, 404, 409)},
        summary="Correct a result before acceptance: a new version with the reason; the old one is kept, superseded",
    )
    def post(self, request: Request, pk: int) -> Response:
        data = validated(ResultCorrectSerializer, request)
        recorded = result_correct_once(
            request.user, pk, inputs=data["inputs"], reason=data["reason"], idempotency_key=idempotency_key(request),
            titrant_lot=data.get("titrant_lot"), instruments=data.get("instruments"),
        )
        return _created(ResultSerializer(recorded.result).data, recorded.replayed)
