"""Thin API views for the bench: parse, authorise, call one service or selector, serialise."""

from __future__ import annotations

from django.http import HttpResponse
from django.shortcuts import get_object_or_404
from drf_spectacular.types import OpenApiTypes
from drf_spectacular.utils import (
    OpenApiParameter,
    OpenApiResponse,
    extend_schema,
    extend_schema_view,
)
from rest_framework.decorators import action
from rest_framework.generics import GenericAPIView
from rest_framework.parsers import JSONParser, MultiPartParser
from rest_framework.response import Response

from shop.core.errors import ApplicationError, Conflict
from shop.core.roles import ANY_ROLE, LEAD, TECHNICIAN, HasShopRole
from shop.core.schema import ERROR_RESPONSES, WRITE_ERROR_RESPONSES, ErrorSerializer
from shop.core.versioning import expected_version
from shop.core.views import VersionedModelViewSet
from shop.intake.models import Unit

from . import csv_import, selectors, services
from .filters import LampFilter, PowerUpFilter
from .models import Rig
from .prediction_api import AdviceSerializer, PredictionRequestSerializer, PredictionSerializer
from .serializers import (
    CalibrationRecordSerializer,
    CloseSerializer,
    InstrumentSerializer,
    LampBankSerializer,
    LampSerializer,
    PowerUpTestSerializer,
    PowerUpUpdateSerializer,
    ReadingBatchSerializer,
    ReadingCsvSerializer,
    ReadingSerializer,
    RigSerializer,
    VerdictSerializer,
)

LEAD_ONLY = frozenset({LEAD})
BENCH = frozenset({TECHNICIAN, LEAD})


def crud_schema(serializer):
    return extend_schema_view(
        list=extend_schema(responses={200: serializer(many=True), **ERROR_RESPONSES}),
        retrieve=extend_schema(responses={200: serializer, **ERROR_RESPONSES}),
        create=extend_schema(responses={201: serializer, **WRITE_ERROR_RESPONSES}),
        update=extend_schema(responses={200: serializer, **WRITE_ERROR_RESPONSES}),
        partial_update=extend_schema(responses={200: serializer, **WRITE_ERROR_RESPONSES}),
    )


@crud_schema(RigSerializer)
class RigViewSet(VersionedModelViewSet):
    """Limiter rigs; leads manage them, everyone reads them."""

    queryset = selectors.rig_list()
    serializer_class = RigSerializer
    search_fields = ["name"]
    ordering_fields = ["name", "id"]
    role_rules = {"read": ANY_ROLE, "create": LEAD_ONLY, "update": LEAD_ONLY}

    def create_service(self, data, request):
        return services.rig_create(actor=request.user, **data)

    def update_service(self, instance, data, version, request):
        return services.rig_update(
            rig=instance, expected_version=version, actor=request.user, **data
        )


@crud_schema(LampSerializer)
class LampViewSet(VersionedModelViewSet):
    """Series lamps on rigs; calibration points or a cold resistance are fitted on save."""

    queryset = selectors.lamp_list()
    serializer_class = LampSerializer
    filterset_class = LampFilter
    search_fields = ["label"]
    ordering_fields = ["rated_power", "label", "id"]
    role_rules = {"read": ANY_ROLE, "create": LEAD_ONLY, "update": LEAD_ONLY}

    def create_service(self, data, request):
        return services.lamp_create(actor=request.user, **data)

    def update_service(self, instance, data, version, request):
        data.pop("rig", None)  # the serializer refuses a change; the same rig is no change
        return services.lamp_update(
            lamp=instance, expected_version=version, actor=request.user, **data
        )


@crud_schema(LampBankSerializer)
class LampBankViewSet(VersionedModelViewSet):
    """Banks of lamps switched in parallel on one rig."""

    queryset = selectors.bank_list()
    serializer_class = LampBankSerializer
    filterset_fields = ["rig"]
    ordering_fields = ["label", "id"]
    role_rules = {"read": ANY_ROLE, "create": LEAD_ONLY}
    http_method_names = ["get", "post", "head", "options"]

    def create_service(self, data, request):
        return services.bank_create(
            actor=request.user, rig=data["rig"], label=data["label"], lamps=data["lamps"]
        )


@crud_schema(InstrumentSerializer)
class InstrumentViewSet(VersionedModelViewSet):
    """Bench meters, their accuracy and calibration records."""

    queryset = selectors.instrument_list()
    serializer_class = InstrumentSerializer
    filterset_fields = ["kind", "response"]
    search_fields = ["maker", "model_name", "serial"]
    ordering_fields = ["maker", "id"]
    role_rules = {
        "read": ANY_ROLE,
        "create": LEAD_ONLY,
        "update": LEAD_ONLY,
        "calibrations": ANY_ROLE,
        "add_calibration": LEAD_ONLY,
    }

    def create_service(self, data, request):
        return services.instrument_create(actor=request.user, **data)

    def update_service(self, instance, data, version, request):
        return services.instrument_update(
            instrument=instance, expected_version=version, actor=request.user, **data
        )

    @extend_schema(responses={200: CalibrationRecordSerializer(many=True), **ERROR_RESPONSES})
    @action(detail=True, methods=["get"], pagination_class=None, filter_backends=[])
    def calibrations(self, request, pk=None):
        records = selectors.calibration_list().filter(instrument=self.get_object())
        return Response(CalibrationRecordSerializer(records, many=True).data)

    @extend_schema(
        request=CalibrationRecordSerializer,
        responses={201: CalibrationRecordSerializer, **WRITE_ERROR_RESPONSES},
    )
    @calibrations.mapping.post
    def add_calibration(self, request, pk=None):
        serializer = CalibrationRecordSerializer(data=request.data)
        serializer.is_valid(raise_exception=True)
        record = services.calibration_record_add(
            instrument=self.get_object(), recorded_by=request.user, **serializer.validated_data
        )
        return Response(CalibrationRecordSerializer(record).data, status=201)


@crud_schema(PowerUpTestSerializer)
class PowerUpViewSet(VersionedModelViewSet):
    """Power-up tests of jobs: open, add readings, close for a verdict."""

    queryset = selectors.powerup_list()
    serializer_class = PowerUpTestSerializer
    filterset_class = PowerUpFilter
    ordering_fields = ["started_at", "id"]
    role_rules = {
        "read": ANY_ROLE,
        "create": BENCH,
        "update": BENCH,
        "readings": ANY_ROLE,
        "add_readings": BENCH,
        "import_readings": BENCH,
        "close": BENCH,
        "verdict": ANY_ROLE,
    }

    def get_serializer_class(self):
        if self.action in {"update", "partial_update"}:
            return PowerUpUpdateSerializer
        return PowerUpTestSerializer

    def create_service(self, data, request):
        technician = data.pop("technician", request.user)
        return services.powerup_open(actor=request.user, technician=technician, **data)

    def update_service(self, instance, data, version, request):
        return services.powerup_update(
            test=instance, expected_version=version, actor=request.user, **data
        )

    def versioned_response(self, instance, status=200):
        instance = selectors.powerup_list().get(pk=instance.pk)
        response = super().versioned_response(instance, status)
        response.data = PowerUpTestSerializer(instance, context=self.get_serializer_context()).data
        return response

    @extend_schema(responses={200: ReadingSerializer(many=True), **ERROR_RESPONSES})
    @action(detail=True, methods=["get"], pagination_class=None, filter_backends=[])
    def readings(self, request, pk=None):
        readings = selectors.reading_list(test=self.get_object())
        return Response(ReadingSerializer(readings, many=True).data)

    @extend_schema(
        request=ReadingBatchSerializer,
        responses={201: ReadingSerializer(many=True), **WRITE_ERROR_RESPONSES},
        description="Add one reading (send the reading itself) or several "
        '(`{"readings": [...]}`); all or none are kept.',
    )
    @readings.mapping.post
    def add_readings(self, request, pk=None):
        test = self.get_object()
        if isinstance(request.data, dict) and "readings" in request.data:
            serializer = ReadingBatchSerializer(data=request.data)
            serializer.is_valid(raise_exception=True)
            items, prefix = serializer.validated_data["readings"], "readings.{index}."
        else:
            serializer = ReadingSerializer(data=request.data)
            serializer.is_valid(raise_exception=True)
            items, prefix = [serializer.validated_data], ""
        created = services.readings_add(
            test=test, readings=items, actor=request.user, field_prefix=prefix
        )
        return Response(ReadingSerializer(created, many=True).data, status=201)

    @extend_schema(
        request={"multipart/form-data": ReadingCsvSerializer},
        responses={201: ReadingSerializer(many=True), **WRITE_ERROR_RESPONSES},
        description="Import readings from CSV (UTF-8, header row). Columns: "
        + ", ".join(csv_import.COLUMNS)
        + ". A bad row is named by row and column and nothing "
        "of the file is kept.",
    )
    @action(
        detail=True,
        methods=["post"],
        url_path="readings/import",
        parser_classes=[MultiPartParser],
        pagination_class=None,
        filter_backends=[],
    )
    def import_readings(self, request, pk=None):
        test = self.get_object()
        serializer = ReadingCsvSerializer(data=request.data)
        serializer.is_valid(raise_exception=True)
        upload = serializer.validated_data["file"]
        if upload.size > csv_import.max_bytes():
            raise ApplicationError(
                f"The file is larger than {csv_import.max_bytes()} bytes.",
                field="file",
                code="file_too_large",
            )
        items = csv_import.parse_readings(upload)
        created = services.readings_add(
            test=test, readings=items, actor=request.user, field_prefix="row {index}."
        )
        return Response(ReadingSerializer(created, many=True).data, status=201)

    @extend_schema(
        request=CloseSerializer, responses={200: VerdictSerializer, **WRITE_ERROR_RESPONSES}
    )
    @action(detail=True, methods=["post"], parser_classes=[JSONParser])
    def close(self, request, pk=None):
        verdict = services.powerup_close(
            test=self.get_object(), actor=request.user, expected_version=expected_version(request)
        )
        return Response(VerdictSerializer(verdict).data)

    @extend_schema(
        responses={
            200: VerdictSerializer,
            **ERROR_RESPONSES,
            409: OpenApiResponse(ErrorSerializer, description="The test is still open."),
        }
    )
    @action(detail=True, methods=["get"])
    def verdict(self, request, pk=None):
        test = self.get_object()
        if not hasattr(test, "verdict"):
            raise Conflict("The test is still open: close it to get a verdict.", code="no_verdict")
        return Response(VerdictSerializer(test.verdict).data)


class PowerUpPlotView(GenericAPIView):
    """The power-up plot as SVG: prediction band, readings by status, the fault cap."""

    permission_classes = [HasShopRole]
    role_rules = {"read": ANY_ROLE}
    queryset = selectors.powerup_list()

    @extend_schema(
        responses={
            (200, "image/svg+xml"): OpenApiResponse(
                response=OpenApiTypes.STR, description="The plot."
            ),
            **ERROR_RESPONSES,
        }
    )
    def get(self, request, pk: int):
        test = self.get_object()
        return HttpResponse(selectors.powerup_plot(test), content_type="image/svg+xml")


class PredictView(GenericAPIView):
    """Stateless: what a healthy unit of a declared load shows through a lamp on a rig."""

    permission_classes = [HasShopRole]
    action = "predict"
    role_rules = {"predict": ANY_ROLE}
    serializer_class = PredictionRequestSerializer

    @extend_schema(
        request=PredictionRequestSerializer,
        responses={200: PredictionSerializer, **WRITE_ERROR_RESPONSES},
    )
    def post(self, request):
        serializer = PredictionRequestSerializer(data=request.data)
        serializer.is_valid(raise_exception=True)
        return Response(selectors.prediction_for_request(serializer.validated_data))


class LampAdviceView(GenericAPIView):
    """Rank a rig's lamps and banks for a unit's declared load, and say why."""

    permission_classes = [HasShopRole]
    role_rules = {"read": ANY_ROLE}
    queryset = Unit.objects.all()

    @extend_schema(
        parameters=[OpenApiParameter("rig", int, required=True, description="Rig id.")],
        responses={
            200: AdviceSerializer,
            **ERROR_RESPONSES,
            400: WRITE_ERROR_RESPONSES[400],
            409: WRITE_ERROR_RESPONSES[409],
        },
    )
    def get(self, request, pk: int):
        unit = self.get_object()
        rig_id = request.query_params.get("rig", "")
        if not rig_id.isdigit():
            raise ApplicationError("Name the rig: ?rig=<id>.", field="rig")
        rig = get_object_or_404(Rig, pk=int(rig_id))
        return Response(selectors.lamp_advice(unit, rig))
