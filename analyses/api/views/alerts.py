"""Alerts (list, filter, acknowledge), control baselines, series and control charts."""
from __future__ import annotations

import django_filters as filters
from django.http import HttpResponse
from drf_spectacular.types import OpenApiTypes
from drf_spectacular.utils import OpenApiParameter, extend_schema, extend_schema_view
from rest_framework import status
from rest_framework.generics import GenericAPIView, RetrieveAPIView
from rest_framework.permissions import IsAuthenticated
from rest_framework.request import Request
from rest_framework.response import Response
from rest_framework.views import APIView

from analyses.api.permissions import requires
from analyses.api.schema import errors
from analyses.api.serializers.alerts import (
    AcknowledgeSerializer,
    AlertSerializer,
    BaselineInSerializer,
    BaselineSerializer,
    SeriesSerializer,
)
from analyses.api.pagination import PageWithSize
from analyses.api.views.common import PagedListView, validated
from analyses.models import Alert, AlertSeverity, AlertSource, AlertState, ControlBaseline, Product, StabilityStudy
from analyses.selectors.alerts import alert_list
from analyses.selectors.trend_charts import series_chart, series_overview
from analyses.services.alerts import alert_acknowledge
from analyses.services.trend_scan import control_baseline_set

CHART_PARAMETERS = [
    OpenApiParameter("chart", str, enum=["shewhart", "ewma"], description="Shewhart with the series' rules (default) or EWMA"),
]


class AlertFilter(filters.FilterSet):
    state = filters.ChoiceFilter(choices=AlertState.choices)
    severity = filters.ChoiceFilter(choices=AlertSeverity.choices)
    source = filters.ChoiceFilter(choices=AlertSource.choices)
    rule = filters.CharFilter()
    series_key = filters.CharFilter()
    method = filters.CharFilter(field_name="method_code")
    product = filters.ModelChoiceFilter(queryset=Product.objects.all())
    study = filters.ModelChoiceFilter(queryset=StabilityStudy.objects.all())
    raised_after = filters.IsoDateTimeFilter(field_name="raised_at", lookup_expr="gte")
    raised_before = filters.IsoDateTimeFilter(field_name="raised_at", lookup_expr="lt")

    class Meta:
        model = Alert
        fields = ["state", "severity", "source", "rule", "series_key", "method", "product", "study", "raised_after", "raised_before"]


@extend_schema_view(get=extend_schema(summary="List alerts, newest first", responses={200: AlertSerializer(many=True), **errors(400)}))
class AlertListView(PagedListView):
    serializer_class = AlertSerializer
    filterset_class = AlertFilter

    def get_queryset(self):
        return alert_list()


@extend_schema_view(get=extend_schema(summary="One alert", responses={200: AlertSerializer, **errors(404)}))
class AlertDetailView(RetrieveAPIView):
    serializer_class = AlertSerializer

    def get_queryset(self):
        return alert_list()


class AlertAcknowledgeView(APIView):
    permission_classes = [IsAuthenticated, requires("acknowledge_alert", "acknowledge alerts")]

    @extend_schema(request=AcknowledgeSerializer, responses={200: AlertSerializer, **errors(400, 403, 404, 409)}, summary="Acknowledge an alert with a comment (QA)")
    def post(self, request: Request, pk: int) -> Response:
        alert = alert_acknowledge(request.user, pk, **validated(AcknowledgeSerializer, request))
        return Response(AlertSerializer(alert_list().get(pk=alert.pk)).data)


@extend_schema_view(get=extend_schema(summary="Control baselines (mean and SD per series)", responses={200: BaselineSerializer(many=True)}))
class BaselineListView(PagedListView):
    input_serializer_classes = {"POST": BaselineInSerializer}
    serializer_class = BaselineSerializer
    permission_classes = [IsAuthenticated, requires("set_control_baseline", "enter control baselines", methods=("POST",))]

    def get_queryset(self):
        return ControlBaseline.objects.select_related("set_by")

    @extend_schema(request=BaselineInSerializer, responses={201: BaselineSerializer, **errors(400, 403)}, summary="Enter or replace a series' mean and SD (QA)")
    def post(self, request: Request) -> Response:
        baseline = control_baseline_set(request.user, **validated(BaselineInSerializer, request))
        return Response(BaselineSerializer(baseline).data, status=status.HTTP_201_CREATED)


class SeriesListView(GenericAPIView):
    pagination_class = PageWithSize
    serializer_class = SeriesSerializer
    filter_backends = ()  # the series are computed, not a table to filter

    @extend_schema(responses={200: SeriesSerializer(many=True)}, summary="Every trend series with its result count and baseline")
    def get(self, request: Request) -> Response:
        # paged like every other list; the series are few and computed together, so the page is cut from the whole list
        page = self.paginate_queryset(series_overview())
        return self.get_paginated_response(SeriesSerializer(page, many=True).data)


class SeriesChartView(APIView):
    @extend_schema(parameters=CHART_PARAMETERS, responses={200: OpenApiTypes.OBJECT, **errors(400, 404)},
                   summary="Control-chart data: points, centre line, limits, flagged points and rule episodes")
    def get(self, request: Request, key: str) -> Response:
        return Response(series_chart(key, request.query_params.get("chart", "shewhart")))


class SeriesChartImageView(APIView):
    @extend_schema(
        parameters=CHART_PARAMETERS,
        responses={(200, "image/png"): OpenApiTypes.BINARY, (200, "image/svg+xml"): OpenApiTypes.BINARY, **errors(400, 404)},
        summary="The control chart as a PNG or SVG image",
    )
    def get(self, request: Request, key: str, fmt: str) -> HttpResponse:
        data = series_chart(key, request.query_params.get("chart", "shewhart"))
        if fmt == "svg":
            from analyses.charts.control_chart import control_chart_svg  # matplotlib: only when drawing

            return HttpResponse(control_chart_svg(data), content_type="image/svg+xml")
        from analyses.charts.control_chart import control_chart_png

        return HttpResponse(control_chart_png(data), content_type="image/png")
