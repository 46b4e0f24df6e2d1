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
from analyses.selectors.investigations import investigation_list
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
    )
    def post(self, request: Request, pk: int) -> Response:
        data = validated(InvestigationCloseSerializer, request)
        investigation = investigation_close(
            request.user, pk, conclusion=data["conclusion"], findings=data["findings"], hold_reason=data["hold_reason"],
            password=data["password"], request=request,
        )
        return Response(InvestigationSerializer(investigation).data)
