"""Method plugins over REST: their metadata, and a stateless calculation."""
from __future__ import annotations

from drf_spectacular.utils import extend_schema
from rest_framework import serializers
from rest_framework.permissions import AllowAny
from rest_framework.request import Request
from rest_framework.response import Response
from rest_framework.views import APIView

from analyses.api.schema import errors
from analyses.api.serializers.common import TextField
from analyses.api.serializers.results import ComponentsField
from analyses.api.serializers.states import VerdictField
from analyses.models import Comparison, Verdict
from analyses.selectors.methods import method_detail, method_list
from analyses.services.calculation import calculation_run


class MethodSerializer(serializers.Serializer):
    code = serializers.CharField()
    title = serializers.CharField()
    version = serializers.CharField()
    standards = serializers.ListField(child=serializers.CharField())
    inputs = serializers.ListField(
        child=serializers.DictField(),
        help_text="Each input: name, kind (quantity or choice), unit, help. A quantity has hard bounds (minimum, "
        "maximum, with bounds_source saying why): a value beyond them is refused with a 400 naming the input. It may "
        "also have a plausible range (plausible_minimum, plausible_maximum, plausible_source, plausible_evidence): a "
        "value outside it is accepted and computed, and the result carries a review warning naming the input",
    )
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
    headline = serializers.CharField(
        allow_null=True,
        help_text="For a method that reports a profile (fatty-acid composition): the component that stands for it where "
        "one number is asked for (the calculated iodine value); null for a single-value method",
    )
    components = serializers.ListField(
        child=serializers.DictField(),
        help_text="For a profile: each component (a fatty acid by its shorthand such as C18:2, or a derived value such as "
        "iv_calc) with its unit, places, kind and default limits per oil type with their sources. A specification line "
        "limits one as <code>:<component>, e.g. fac:C18:2. Empty for a single-value method.",
    )


class CalculationRequestSerializer(serializers.Serializer):
    method = serializers.CharField(
        help_text="Method code, e.g. sv, iv, av, pv, ffa; for a profile, the component to judge, e.g. fac:C18:2 "
        "(fac alone is judged on its calculated iodine value)"
    )
    inputs = serializers.DictField(
        help_text='Input name to value: a number in the default unit, or a quantity string such as "2015 mg"'
    )
    minimum = serializers.CharField(
        required=False, allow_blank=True, help_text="Lower limit to judge the result against, as written (\"187\")"
    )
    maximum = serializers.CharField(
        required=False, allow_blank=True, help_text="Upper limit to judge the result against, as written (\"0.6\")"
    )
    oil_type = TextField(
        required=False, allow_blank=True, help_text="Judge against the method's Codex default limits for this oil type"
    )
    comparison = serializers.ChoiceField(
        choices=Comparison.choices, required=False, help_text="ASTM E29 comparison; absolute by default"
    )


class CalculationLimitsSerializer(serializers.Serializer):
    minimum = serializers.CharField(allow_null=True)
    maximum = serializers.CharField(allow_null=True)
    comparison = serializers.CharField()
    source = serializers.CharField(help_text="Where default limits came from; empty for limits given")


class CalculationResultSerializer(serializers.Serializer):
    method = serializers.CharField()
    method_version = serializers.CharField()
    value = serializers.FloatField(help_text="Unrounded result, as a float (for statistics)")
    exact = serializers.CharField(help_text="Unrounded result in exact decimal arithmetic; verdicts are decided on it")
    reported = serializers.CharField(help_text="Rounded to the reporting precision, ASTM E29 (half to even)")
    unit = serializers.CharField()
    decimals = serializers.IntegerField()
    inputs = serializers.DictField(help_text="Inputs as used, in each input's default unit")
    limits = CalculationLimitsSerializer(allow_null=True, help_text="The limits judged against; null when none given")
    verdict = VerdictField(
        choices=Verdict.choices, allow_null=True, help_text="pass or oos against the limits; null when none given"
    )
    review_warnings = serializers.ListField(
        child=serializers.CharField(),
        help_text="What a reviewer would be warned of: outside the method's validated range, a prescribed blank not run; "
        "for a fatty-acid composition, the identity screen against the Codex ranges of oil_type",
    )
    components = ComponentsField(
        required=False,
        help_text="For a profile: every component, exact and reported; the value above is the judged one. Absent for a "
        "single-value method.",
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
        data = serializer.validated_data
        calculation = calculation_run(
            data["method"],
            data["inputs"],
            minimum=data.get("minimum"),
            maximum=data.get("maximum"),
            oil_type=data.get("oil_type"),
            comparison=data.get("comparison"),
        )
        return Response(calculation.as_dict())
