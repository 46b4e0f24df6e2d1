"""Stability studies: create, list, evaluate, close; pull points; plots as JSON and images."""
from __future__ import annotations

from django.http import HttpResponse
from drf_spectacular.types import OpenApiTypes
from drf_spectacular.utils import OpenApiParameter, extend_schema, extend_schema_view
from rest_framework import status
from rest_framework.generics import RetrieveAPIView
from rest_framework.permissions import IsAuthenticated
from rest_framework.request import Request
from rest_framework.response import Response
from rest_framework.views import APIView

from analyses.api.permissions import requires
from analyses.api.schema import errors
from analyses.api.serializers.common import ReasonSerializer
from analyses.api.serializers.stability import PullPointSerializer, StudyCreateSerializer, StudySerializer
from analyses.api.views.common import PagedListView, validated
from analyses.errors import InvalidInput
from analyses.models import PullPoint
from analyses.selectors.stability import pull_point_list, study_list, study_plot
from analyses.services.stability import stability_study_close, stability_study_create, stability_study_evaluate

MANAGE = requires("manage_stability_study", "manage stability studies")
PLOT_PARAMETERS = [
    OpenApiParameter("method", str, required=True, description="Attribute's method code, e.g. pv"),
    OpenApiParameter("condition", int, required=True, description="Storage condition id"),
]


@extend_schema_view(get=extend_schema(summary="List stability studies", responses={200: StudySerializer(many=True)}))
class StudyListView(PagedListView):
    input_serializer_classes = {"POST": StudyCreateSerializer}
    serializer_class = StudySerializer
    permission_classes = [IsAuthenticated, requires("manage_stability_study", "create stability studies", methods=("POST",))]

    def get_queryset(self):
        return study_list()

    @extend_schema(
        request=StudyCreateSerializer,
        responses={201: StudySerializer, **errors(400, 403)},
        summary="Create a study: product, lots, storage conditions, pull points, attributes with limits, claimed shelf life",
    )
    def post(self, request: Request) -> Response:
        study = stability_study_create(request.user, **validated(StudyCreateSerializer, request))
        return Response(StudySerializer(study_list().get(pk=study.pk)).data, status=status.HTTP_201_CREATED)


@extend_schema_view(get=extend_schema(summary="One study with its latest evaluation", responses={200: StudySerializer, **errors(404)}))
class StudyDetailView(RetrieveAPIView):
    serializer_class = StudySerializer

    def get_queryset(self):
        return study_list()


class StudyEvaluateView(APIView):
    permission_classes = [IsAuthenticated, MANAGE]

    @extend_schema(
        request=None,
        responses={200: StudySerializer, **errors(403, 404)},
        summary="Evaluate now: kinetics, ICH Q1E shelf life and extrapolation branch, Arrhenius; raises alerts",
    )
    def post(self, request: Request, pk: int) -> Response:
        stability_study_evaluate(pk)
        return Response(StudySerializer(study_list().get(pk=pk)).data)


class StudyCloseView(APIView):
    permission_classes = [IsAuthenticated, MANAGE]

    @extend_schema(request=ReasonSerializer, responses={200: StudySerializer, **errors(400, 403, 404)}, summary="Close a study")
    def post(self, request: Request, pk: int) -> Response:
        study = stability_study_close(request.user, pk, **validated(ReasonSerializer, request))
        return Response(StudySerializer(study_list().get(pk=study.pk)).data)


@extend_schema_view(get=extend_schema(summary="Pull points of a study, with their samples", responses={200: PullPointSerializer(many=True)}))
class PullPointListView(PagedListView):
    serializer_class = PullPointSerializer

    def get_queryset(self):
        if self.is_schema_view:
            return PullPoint.objects.none()
        return pull_point_list(self.kwargs["pk"])


def _plot_arguments(request: Request, pk: int) -> dict:
    method = request.query_params.get("method", "")
    condition = request.query_params.get("condition", "")
    if not method:
        raise InvalidInput.for_field("method", "is required")
    if not condition.isdigit():
        raise InvalidInput.for_field("condition", "must be a condition id")
    return {"study_id": pk, "method_code": method, "condition_id": int(condition)}


class StudyPlotView(APIView):
    @extend_schema(
        parameters=PLOT_PARAMETERS,
        responses={200: OpenApiTypes.OBJECT, **errors(400, 404)},
        summary="Stability plot data: points, fitted line, one-sided 95 % bound, limit, shelf life",
    )
    def get(self, request: Request, pk: int) -> Response:
        return Response(study_plot(**_plot_arguments(request, pk)))


class StudyPlotImageView(APIView):
    @extend_schema(
        parameters=PLOT_PARAMETERS,
        responses={(200, "image/png"): OpenApiTypes.BINARY, (200, "image/svg+xml"): OpenApiTypes.BINARY, **errors(400, 404)},
        summary="The stability plot as a PNG or SVG image",
    )
    def get(self, request: Request, pk: int, fmt: str) -> HttpResponse:
        data = study_plot(**_plot_arguments(request, pk))
        if fmt == "svg":
            from analyses.charts.stability_plot import stability_plot_svg  # matplotlib: only when drawing

            return HttpResponse(stability_plot_svg(data), content_type="image/svg+xml")
        from analyses.charts.stability_plot import stability_plot_png

        return HttpResponse(stability_plot_png(data), content_type="image/png")
