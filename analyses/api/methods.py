"""Method plugins over REST: their metadata, and a stateless calculation."""
from __future__ import annotations

from drf_spectacular.utils import extend_schema
from rest_framework import serializers
from rest_framework.permissions import AllowAny
from rest_framework.request import Request
from rest_framework.response import Response
from rest_framework.views import APIView

from analyses.api.schema import errors
from analyses.selectors.methods import method_detail, method_list
from analyses.services.calculation import calculation_review_warnings, calculation_run


class MethodSerializer(serializers.Serializer):
    code = serializers.CharField()
    title = serializers.CharField()
    version = serializers.CharField()
    standards = serializers.ListField(child=serializers.CharField())
    inputs = serializers.ListField(child=serializers.DictField())
    result_unit = serializers.CharField()
    decimals = serializers.IntegerField()
    replicates = serializers.IntegerField()
    repeatability = serializers.DictField(allow_null=True)
    spec_limits = serializers.ListField(child=serializers.DictField())
    cautions = serializers.CharField()
    scope = serializers.ListField(
        child=serializers.DictField(),
        help_text="Ranges the method's sources validate, each with its source; a result outside one gets a review warning",
    )
    blank = serializers.DictField(allow_null=True, help_text="Whether the method prescribes a blank, with its source and limit")
    basis = serializers.DictField(
        allow_null=True, help_text="The input that says what the result is expressed as, with the conventional choice per oil type"
    )


class CalculationRequestSerializer(serializers.Serializer):
    method = serializers.CharField(help_text="Method code, e.g. sv, iv, av, pv, ffa")
    inputs = serializers.DictField(
        help_text='Input name to value: a number in the default unit, or a quantity string such as "2015 mg"'
    )


class CalculationResultSerializer(serializers.Serializer):
    method = serializers.CharField()
    method_version = serializers.CharField()
    value = serializers.FloatField(help_text="Unrounded result")
    reported = serializers.CharField(help_text="Rounded to the reporting precision, ASTM E29 (half to even)")
    unit = serializers.CharField()
    decimals = serializers.IntegerField()
    inputs = serializers.DictField(help_text="Inputs as used, in each input's default unit")
    review_warnings = serializers.ListField(
        child=serializers.CharField(),
        help_text="What a reviewer would be warned of: outside the method's validated range, a prescribed blank not run",
    )


class MethodListView(APIView):
    permission_classes = [AllowAny]

    @extend_schema(responses=MethodSerializer(many=True), summary="List the registered method plugins")
    def get(self, request: Request) -> Response:
        return Response(method_list())


class MethodDetailView(APIView):
    permission_classes = [AllowAny]

    @extend_schema(responses=MethodSerializer, summary="One method plugin's metadata")
    def get(self, request: Request, code: str) -> Response:
        return Response(method_detail(code))


class CalculationView(APIView):
    permission_classes = [AllowAny]

    @extend_schema(
        request=CalculationRequestSerializer,
        responses={200: CalculationResultSerializer, **errors(400, 404)},
        summary="Compute one determination; nothing is stored",
    )
    def post(self, request: Request) -> Response:
        serializer = CalculationRequestSerializer(data=request.data)
        serializer.is_valid(raise_exception=True)
        result = calculation_run(serializer.validated_data["method"], serializer.validated_data["inputs"])
        return Response({**result.as_dict(), "review_warnings": calculation_review_warnings(result)})
