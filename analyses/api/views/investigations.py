"""Out-of-specification investigations: list, read, close (QA)."""
from __future__ import annotations

from drf_spectacular.utils import extend_schema, extend_schema_view
from rest_framework.generics import RetrieveAPIView
from rest_framework.permissions import IsAuthenticated
from rest_framework.request import Request
from rest_framework.response import Response
from rest_framework.views import APIView

from analyses.api.filters import InvestigationFilter
from analyses.api.permissions import requires
from analyses.api.schema import errors
from analyses.api.serializers.investigations import InvestigationCloseSerializer, InvestigationSerializer
from analyses.api.views.common import PagedListView, validated
from analyses.selectors.lists import investigation_list
from analyses.services.investigations import investigation_close


@extend_schema_view(
    get=extend_schema(summary="List OOS investigations", responses={200: InvestigationSerializer(many=True), **errors(400)})
)
class InvestigationListView(PagedListView):
    serializer_class = InvestigationSerializer
    filterset_class = InvestigationFilter

    def get_queryset(self):
        return investigation_list()


@extend_schema_view(get=extend_schema(summary="One OOS investigation", responses={200: InvestigationSerializer, **errors(404)}))
class InvestigationDetailView(RetrieveAPIView):
    serializer_class = InvestigationSerializer

    def get_queryset(self):
        return investigation_list()


class InvestigationCloseView(APIView):
    permission_classes = [IsAuthenticated, requires("close_investigation", "close OOS investigations")]

    @extend_schema(
        request=InvestigationCloseSerializer,
        responses={200: InvestigationSerializer, **errors(400, 403, 404, 409)},
        summary="Close an investigation (QA), and see what it changed",
        description=(
            "QA (or an admin) closes an open investigation with a conclusion and findings; the answer's `effect` "
            "says in words what the close changed. On an open lot: `confirmed` rejects the lot, and is an electronic "
            "signature as a rejection is (`password`, the user's own, re-entered: 400 naming `password` when missing "
            "or wrong, nothing written; wrong ones count towards the login lock-out); `lab_error` invalidates the "
            "result and creates a retest. On a released lot (a post-release investigation): "
            "`no_action` leaves the lot as it is and says so; `hold_notice`, with `hold_reason`, marks the lot "
            "\"released, under investigation\" and alerts QA (QA group only); `lab_error` where the sample can still "
            "be retested. Refused with 409: `confirmed` on a released lot (it would change nothing), the post-release "
            "outcomes on a lot that is not released, a second hold notice on a lot already under one, and an "
            "investigation already closed. 400 names the field: an unknown conclusion, missing findings, "
            "`hold_reason` missing for a hold notice or given with another conclusion."
        ),
    )
    def post(self, request: Request, pk: int) -> Response:
        data = validated(InvestigationCloseSerializer, request)
        investigation = investigation_close(
            request.user, pk, conclusion=data["conclusion"], findings=data["findings"], hold_reason=data["hold_reason"],
            password=data["password"], request=request,
        )
        return Response(InvestigationSerializer(investigation).data)
