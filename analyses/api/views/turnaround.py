"""Turnaround per method, for lab managers."""
from __future__ import annotations

from drf_spectacular.utils import extend_schema
from rest_framework.permissions import IsAuthenticated
from rest_framework.request import Request
from rest_framework.response import Response
from rest_framework.views import APIView

from analyses.api.permissions import IsLabManager
from analyses.api.schema import errors
from analyses.api.serializers.turnaround import TurnaroundQuerySerializer, TurnaroundSerializer
from analyses.selectors.turnaround import turnaround_by_method


class TurnaroundView(APIView):
    permission_classes = [IsAuthenticated, IsLabManager]

    @extend_schema(
        parameters=[TurnaroundQuerySerializer],
        responses={200: TurnaroundSerializer(many=True), **errors(400, 403)},
        summary="Hours from sample receipt to test acceptance, per method (lab manager)",
    )
    def get(self, request: Request) -> Response:
        query = TurnaroundQuerySerializer(data=request.query_params)
        query.is_valid(raise_exception=True)
        rows = turnaround_by_method(**query.validated_data)
        return Response(TurnaroundSerializer(rows, many=True).data)
