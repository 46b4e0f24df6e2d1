"""Reagent kinds, titrant lots and standardisations; instruments, calibrations and checks;
the impact search. Reads are open to every signed-in role (QA reads everything); writes
need the role's permission, checked again by the services."""
from __future__ import annotations

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
from analyses.api.serializers.traceability import (
    CalibrationCreateSerializer,
    CalibrationSerializer,
    ImpactPeriodSerializer,
    InstrumentCheckCreateSerializer,
    InstrumentCheckSerializer,
    InstrumentCreateSerializer,
    InstrumentSerializer,
    ReagentKindChangeSerializer,
    ReagentKindCreateSerializer,
    ReagentKindSerializer,
    ReagentLotCreateSerializer,
    ReagentLotSerializer,
    StandardisationRecordSerializer,
    StandardisationSerializer,
    StandardisationSupersedeSerializer,
)
from analyses.api.views.common import PagedListView, validated
from analyses.models import Instrument, ReagentLot
from analyses.selectors.impact import instrument_impact, reagent_lot_impact
from analyses.selectors.traceability import (
    calibration_list,
    check_list,
    instrument_list,
    reagent_kind_list,
    reagent_lot_list,
    standardisation_list,
)
from analyses.services.access import fetch
from analyses.services.instruments import calibration_record, instrument_check_record, instrument_register
from analyses.services.reagents import (
    reagent_kind_change,
    reagent_kind_create,
    reagent_lot_register,
    standardisation_record,
    standardisation_supersede,
)

PERIOD = [
    OpenApiParameter("from", OpenApiTypes.DATE, description="First day, inclusive"),
    OpenApiParameter("to", OpenApiTypes.DATE, description="Last day, inclusive"),
]


def _created(serializer_class, row) -> Response:
    return Response(serializer_class(row).data, status=status.HTTP_201_CREATED)


def _period(request: Request) -> dict:
    serializer = ImpactPeriodSerializer(data=request.query_params.dict())
    serializer.is_valid(raise_exception=True)
    return {"start": serializer.validated_data.get("from"), "end": serializer.validated_data.get("to")}


# --- reagents ---------------------------------------------------------------------------
@extend_schema_view(get=extend_schema(summary="List reagent kinds", responses={200: ReagentKindSerializer(many=True), **errors()}))
class ReagentKindListView(PagedListView):
    input_serializer_classes = {"POST": ReagentKindCreateSerializer}
    serializer_class = ReagentKindSerializer
    permission_classes = [IsAuthenticated, requires("manage_reagent_kinds", "register reagent kinds", methods=("POST",))]

    def get_queryset(self):
        return reagent_kind_list()

    @extend_schema(request=ReagentKindCreateSerializer, responses={201: ReagentKindSerializer, **errors(400, 403)},
                   summary="Register a reagent kind (lab manager, admin)")
    def post(self, request: Request) -> Response:
        return _created(ReagentKindSerializer, reagent_kind_create(request.user, **validated(ReagentKindCreateSerializer, request)))


@extend_schema_view(get=extend_schema(summary="One reagent kind", responses={200: ReagentKindSerializer, **errors(404)}))
class ReagentKindDetailView(RetrieveAPIView):
    serializer_class = ReagentKindSerializer

    def get_queryset(self):
        return reagent_kind_list()


class ReagentKindChangeView(APIView):
    permission_classes = [IsAuthenticated, requires("manage_reagent_kinds", "change reagent kinds")]

    @extend_schema(request=ReagentKindChangeSerializer, responses={200: ReagentKindSerializer, **errors(400, 403, 404)},
                   summary="Change a kind's validity or replicate limit, with a reason (lab manager, admin)")
    def post(self, request: Request, pk: int) -> Response:
        data = validated(ReagentKindChangeSerializer, request)
        return Response(ReagentKindSerializer(reagent_kind_change(request.user, pk, **data)).data)


@extend_schema_view(get=extend_schema(summary="List titrant lots, with whether each is usable now",
                                      responses={200: ReagentLotSerializer(many=True), **errors()}))
class ReagentLotListView(PagedListView):
    input_serializer_classes = {"POST": ReagentLotCreateSerializer}
    serializer_class = ReagentLotSerializer
    permission_classes = [IsAuthenticated, requires("register_reagent_lot", "register titrant lots", methods=("POST",))]

    def get_queryset(self):
        return reagent_lot_list()

    @extend_schema(request=ReagentLotCreateSerializer, responses={201: ReagentLotSerializer, **errors(400, 403)},
                   summary="Register a titrant lot (analyst, lab manager, admin)")
    def post(self, request: Request) -> Response:
        data = validated(ReagentLotCreateSerializer, request)
        lot = reagent_lot_register(request.user, **{**data, "kind": data["kind"].pk})
        return _created(ReagentLotSerializer, reagent_lot_list().get(pk=lot.pk))


@extend_schema_view(get=extend_schema(summary="One titrant lot", responses={200: ReagentLotSerializer, **errors(404)}))
class ReagentLotDetailView(RetrieveAPIView):
    serializer_class = ReagentLotSerializer

    def get_queryset(self):
        return reagent_lot_list()


@extend_schema_view(get=extend_schema(summary="A titrant lot's standardisations, newest first",
                                      responses={200: StandardisationSerializer(many=True), **errors(404)}))
class LotStandardisationListView(PagedListView):
    input_serializer_classes = {"POST": StandardisationRecordSerializer}
    serializer_class = StandardisationSerializer
    permission_classes = [IsAuthenticated, requires("record_standardisation", "record standardisations", methods=("POST",))]

    def get_queryset(self):
        if self.is_schema_view:
            return standardisation_list()
        return standardisation_list(fetch(ReagentLot, self.kwargs["pk"], label="titrant lot").pk)

    @extend_schema(request=StandardisationRecordSerializer, responses={201: StandardisationSerializer, **errors(400, 403, 404, 409)},
                   summary="Standardise a titrant lot (analyst, admin)")
    def post(self, request: Request, pk: int) -> Response:
        data = validated(StandardisationRecordSerializer, request)
        return _created(StandardisationSerializer, standardisation_record(request.user, pk, **data))


@extend_schema_view(get=extend_schema(summary="One standardisation", responses={200: StandardisationSerializer, **errors(404)}))
class StandardisationDetailView(RetrieveAPIView):
    serializer_class = StandardisationSerializer

    def get_queryset(self):
        return standardisation_list()


class StandardisationSupersedeView(APIView):
    permission_classes = [IsAuthenticated, requires("record_standardisation", "supersede standardisations")]

    @extend_schema(request=StandardisationSupersedeSerializer, responses={201: StandardisationSerializer, **errors(400, 403, 404, 409)},
                   summary="Replace a wrong standardisation by a new one with a reason (analyst, admin)")
    def post(self, request: Request, pk: int) -> Response:
        data = validated(StandardisationSupersedeSerializer, request)
        return _created(StandardisationSerializer, standardisation_supersede(request.user, pk, **data))


class ReagentLotImpactView(APIView):
    @extend_schema(parameters=PERIOD, responses={200: OpenApiTypes.OBJECT, **errors(400, 404)},
                   summary="Every result, sample and lot that used this titrant lot (released lots flagged)")
    def get(self, request: Request, pk: int) -> Response:
        period = _period(request)
        lot = fetch(ReagentLot, pk, label="titrant lot")
        return Response(reagent_lot_impact(lot, **period))


# --- instruments ------------------------------------------------------------------------
@extend_schema_view(get=extend_schema(summary="List instruments, with whether each is usable now",
                                      responses={200: InstrumentSerializer(many=True), **errors()}))
class InstrumentListView(PagedListView):
    input_serializer_classes = {"POST": InstrumentCreateSerializer}
    serializer_class = InstrumentSerializer
    permission_classes = [IsAuthenticated, requires("manage_instruments", "register instruments", methods=("POST",))]

    def get_queryset(self):
        return instrument_list()

    @extend_schema(request=InstrumentCreateSerializer, responses={201: InstrumentSerializer, **errors(400, 403)},
                   summary="Register an instrument (lab manager, admin)")
    def post(self, request: Request) -> Response:
        data = validated(InstrumentCreateSerializer, request)
        instrument = instrument_register(request.user, **data)
        return _created(InstrumentSerializer, instrument_list().get(pk=instrument.pk))


@extend_schema_view(get=extend_schema(summary="One instrument", responses={200: InstrumentSerializer, **errors(404)}))
class InstrumentDetailView(RetrieveAPIView):
    serializer_class = InstrumentSerializer

    def get_queryset(self):
        return instrument_list()


@extend_schema_view(get=extend_schema(summary="An instrument's calibrations, newest first",
                                      responses={200: CalibrationSerializer(many=True), **errors(404)}))
class CalibrationListView(PagedListView):
    input_serializer_classes = {"POST": CalibrationCreateSerializer}
    serializer_class = CalibrationSerializer
    permission_classes = [IsAuthenticated, requires("manage_instruments", "record calibrations", methods=("POST",))]

    def get_queryset(self):
        return calibration_list(0 if self.is_schema_view else fetch(Instrument, self.kwargs["pk"], label="instrument").pk)

    @extend_schema(request=CalibrationCreateSerializer, responses={201: CalibrationSerializer, **errors(400, 403, 404)},
                   summary="Record a calibration (lab manager, admin)")
    def post(self, request: Request, pk: int) -> Response:
        return _created(CalibrationSerializer, calibration_record(request.user, pk, **validated(CalibrationCreateSerializer, request)))


@extend_schema_view(get=extend_schema(summary="An instrument's routine checks, newest first",
                                      responses={200: InstrumentCheckSerializer(many=True), **errors(404)}))
class InstrumentCheckListView(PagedListView):
    input_serializer_classes = {"POST": InstrumentCheckCreateSerializer}
    serializer_class = InstrumentCheckSerializer
    permission_classes = [IsAuthenticated, requires("record_instrument_check", "record instrument checks", methods=("POST",))]

    def get_queryset(self):
        return check_list(0 if self.is_schema_view else fetch(Instrument, self.kwargs["pk"], label="instrument").pk)

    @extend_schema(request=InstrumentCheckCreateSerializer, responses={201: InstrumentCheckSerializer, **errors(400, 403, 404)},
                   summary="Record a routine check: check weight or reference filter (analyst, admin)")
    def post(self, request: Request, pk: int) -> Response:
        data = validated(InstrumentCheckCreateSerializer, request)
        return _created(InstrumentCheckSerializer, instrument_check_record(request.user, pk, **data))


class InstrumentImpactView(APIView):
    @extend_schema(parameters=PERIOD, responses={200: OpenApiTypes.OBJECT, **errors(400, 404)},
                   summary="Every result, sample and lot that used this instrument in the period (released lots flagged)")
    def get(self, request: Request, pk: int) -> Response:
        period = _period(request)
        return Response(instrument_impact(fetch(Instrument, pk, label="instrument"), **period))
