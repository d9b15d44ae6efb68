"""Thin API views for intake: parse, authorise, call one service or selector, serialise."""

from __future__ import annotations

from django.http import FileResponse
from drf_spectacular.utils import OpenApiResponse, extend_schema, extend_schema_view
from rest_framework import mixins, viewsets
from rest_framework.decorators import action
from rest_framework.parsers import FormParser, MultiPartParser
from rest_framework.response import Response

from shop.core.roles import ANY_ROLE, FRONT_DESK, LEAD, TECHNICIAN, HasShopRole, has_role
from shop.core.schema import ERROR_RESPONSES, WRITE_ERROR_RESPONSES
from shop.core.versioning import expected_version
from shop.core.views import VersionedModelViewSet

from . import selectors, services
from .filters import EvidenceFilter, JobFilter, RepairStepFilter, UnitFilter
from .serializers import (
    CustomerAnswerSerializer,
    CustomerNameSerializer,
    CustomerSerializer,
    EvidenceSerializer,
    EvidenceUploadSerializer,
    JobApprovalSerializer,
    JobMoveSerializer,
    JobSerializer,
    JobTransitionSerializer,
    RepairStepSerializer,
    UnitSerializer,
)

DESK = frozenset({FRONT_DESK, LEAD})
BENCH = frozenset({TECHNICIAN, LEAD})
LEAD_ONLY = frozenset({LEAD})
# Customer search covers only the fields the caller's role may read.
CUSTOMER_CONTACT_SEARCH = ["name", "email", "phone"]
CUSTOMER_NAME_SEARCH = ["name"]


@extend_schema_view(
    list=extend_schema(responses={200: CustomerSerializer(many=True), **ERROR_RESPONSES}),
    retrieve=extend_schema(responses={200: CustomerSerializer, **ERROR_RESPONSES}),
    create=extend_schema(responses={201: CustomerSerializer, **WRITE_ERROR_RESPONSES}),
    update=extend_schema(responses={200: CustomerSerializer, **WRITE_ERROR_RESPONSES}),
    partial_update=extend_schema(responses={200: CustomerSerializer, **WRITE_ERROR_RESPONSES}),
)
class CustomerViewSet(VersionedModelViewSet):
    """Customers. Technicians see names only; contact details are for the front desk and leads."""

    queryset = selectors.customer_list()
    ordering_fields = ["name", "created_at", "id"]
    role_rules = {"read": ANY_ROLE, "create": DESK, "update": DESK}

    def _sees_contact_details(self) -> bool:
        return getattr(self, "swagger_fake_view", False) or has_role(
            self.request.user, FRONT_DESK, LEAD
        )

    @property
    def search_fields(self) -> list[str]:
        """Search only what the caller may read: a search on a hidden field would answer, one
        match at a time, what the serializer keeps back."""
        if self._sees_contact_details():
            return CUSTOMER_CONTACT_SEARCH
        return CUSTOMER_NAME_SEARCH

    def get_serializer_class(self):
        if self._sees_contact_details():
            return CustomerSerializer
        return CustomerNameSerializer

    def create_service(self, data, request):
        return services.customer_create(actor=request.user, **data)

    def update_service(self, instance, data, version, request):
        return services.customer_update(
            customer=instance, expected_version=version, actor=request.user, **data
        )


@extend_schema_view(
    list=extend_schema(responses={200: UnitSerializer(many=True), **ERROR_RESPONSES}),
    retrieve=extend_schema(responses={200: UnitSerializer, **ERROR_RESPONSES}),
    create=extend_schema(responses={201: UnitSerializer, **WRITE_ERROR_RESPONSES}),
    update=extend_schema(responses={200: UnitSerializer, **WRITE_ERROR_RESPONSES}),
    partial_update=extend_schema(responses={200: UnitSerializer, **WRITE_ERROR_RESPONSES}),
)
class UnitViewSet(VersionedModelViewSet):
    """Units of equipment with nameplate and construction; live-chassis units are flagged."""

    queryset = selectors.unit_list()
    serializer_class = UnitSerializer
    filterset_class = UnitFilter
    search_fields = ["maker", "model_name", "serial", "owner__name"]
    ordering_fields = ["maker", "model_name", "created_at", "id"]
    role_rules = {"read": ANY_ROLE, "create": DESK, "update": ANY_ROLE}

    def create_service(self, data, request):
        data.pop("hazard_change_reason", None)  # a new unit lowers nothing
        return services.unit_create(actor=request.user, **data)

    def update_service(self, instance, data, version, request):
        return services.unit_update(
            unit=instance, expected_version=version, actor=request.user, **data
        )


@extend_schema_view(
    list=extend_schema(responses={200: JobSerializer(many=True), **ERROR_RESPONSES}),
    retrieve=extend_schema(responses={200: JobSerializer, **ERROR_RESPONSES}),
    create=extend_schema(responses={201: JobSerializer, **WRITE_ERROR_RESPONSES}),
    update=extend_schema(responses={200: JobSerializer, **WRITE_ERROR_RESPONSES}),
    partial_update=extend_schema(responses={200: JobSerializer, **WRITE_ERROR_RESPONSES}),
)
class JobViewSet(VersionedModelViewSet):
    """Repair jobs. State changes go through `transition`; every move is recorded."""

    queryset = selectors.job_list()
    serializer_class = JobSerializer
    filterset_class = JobFilter
    search_fields = [
        "number",
        "unit__serial",
        "unit__maker",
        "unit__model_name",
        "unit__owner__name",
    ]
    ordering_fields = ["received_on", "promised_on", "number", "state", "updated_at", "id"]
    role_rules = {
        "read": ANY_ROLE,
        "create": DESK,
        "update": DESK,
        "transition": ANY_ROLE,
        "approve": DESK,
        "decline": DESK,
        "moves": ANY_ROLE,
    }

    def versioned_response(self, instance, status=200):
        # A job a write returns is re-read through the list selector, so the answer carries
        # the latest verdict; a job read through it already does.
        if not hasattr(instance, "latest_outcome"):
            instance = selectors.job_list().get(pk=instance.pk)
        return super().versioned_response(instance, status)

    def create_service(self, data, request):
        return services.job_create(actor=request.user, **data)

    def update_service(self, instance, data, version, request):
        data.pop("unit", None)
        return services.job_update(
            job=instance, expected_version=version, actor=request.user, **data
        )

    @extend_schema(
        request=JobTransitionSerializer,
        responses={200: JobSerializer, **WRITE_ERROR_RESPONSES},
        description="Move the job to another state. An illegal move answers 409 with "
        "`allowed_targets`; a stale If-Match answers 412.",
    )
    @action(detail=True, methods=["post"])
    def transition(self, request, pk=None):
        job = self.get_object()
        serializer = JobTransitionSerializer(data=request.data)
        serializer.is_valid(raise_exception=True)
        moved = services.job_transition(
            job=job,
            actor=request.user,
            expected_version=expected_version(request),
            **serializer.validated_data,
        )
        return self.versioned_response(moved)

    @extend_schema(
        request=JobApprovalSerializer,
        responses={200: JobSerializer, **WRITE_ERROR_RESPONSES},
        description="Record the customer's approval of the job's current estimate (who "
        "recorded it, how the customer answered, when, the figure) and move the job from "
        "awaiting_approval to repairing. Front desk and leads.",
    )
    @action(detail=True, methods=["post"])
    def approve(self, request, pk=None):
        return self._answer(request, JobApprovalSerializer, services.job_approve)

    @extend_schema(
        request=CustomerAnswerSerializer,
        responses={200: JobSerializer, **WRITE_ERROR_RESPONSES},
        description="Record that the customer declined the estimate and move the job from "
        "awaiting_approval to declined. Front desk and leads.",
    )
    @action(detail=True, methods=["post"])
    def decline(self, request, pk=None):
        return self._answer(request, CustomerAnswerSerializer, services.job_decline)

    def _answer(self, request, serializer_class, service):
        job = self.get_object()
        serializer = serializer_class(data=request.data)
        serializer.is_valid(raise_exception=True)
        answered = service(
            job=job,
            actor=request.user,
            expected_version=expected_version(request),
            **serializer.validated_data,
        )
        return self.versioned_response(answered)

    @extend_schema(responses={200: JobMoveSerializer(many=True), **ERROR_RESPONSES})
    @action(detail=True, methods=["get"], pagination_class=None, filter_backends=[])
    def moves(self, request, pk=None):
        moves = selectors.job_moves(job=self.get_object())
        return Response(JobMoveSerializer(moves, many=True).data)


@extend_schema_view(
    list=extend_schema(responses={200: RepairStepSerializer(many=True), **ERROR_RESPONSES}),
    retrieve=extend_schema(responses={200: RepairStepSerializer, **ERROR_RESPONSES}),
    create=extend_schema(responses={201: RepairStepSerializer, **WRITE_ERROR_RESPONSES}),
)
class RepairStepViewSet(mixins.ListModelMixin, mixins.RetrieveModelMixin, viewsets.GenericViewSet):
    """Repair steps: append-only; correct a step by adding one that names it in `corrects`."""

    queryset = selectors.repair_step_list()
    serializer_class = RepairStepSerializer
    permission_classes = [HasShopRole]
    filterset_class = RepairStepFilter
    search_fields = ["action", "job__number"]
    ordering_fields = ["performed_at", "id"]
    role_rules = {"read": ANY_ROLE, "create": BENCH}

    def create(self, request, *args, **kwargs):
        serializer = self.get_serializer(data=request.data)
        serializer.is_valid(raise_exception=True)
        step = services.repair_step_add(technician=request.user, **serializer.validated_data)
        return Response(self.get_serializer(step).data, status=201)


@extend_schema_view(
    list=extend_schema(responses={200: EvidenceSerializer(many=True), **ERROR_RESPONSES}),
    retrieve=extend_schema(responses={200: EvidenceSerializer, **ERROR_RESPONSES}),
)
class EvidenceViewSet(mixins.ListModelMixin, mixins.RetrieveModelMixin, viewsets.GenericViewSet):
    """Evidence files on jobs, fingerprinted by SHA-256; the same file twice answers the first."""

    queryset = selectors.evidence_list()
    serializer_class = EvidenceSerializer
    permission_classes = [HasShopRole]
    filterset_class = EvidenceFilter
    search_fields = ["label", "job__number", "sha256"]
    ordering_fields = ["uploaded_at", "size", "id"]
    role_rules = {"read": ANY_ROLE, "create": ANY_ROLE, "download": ANY_ROLE}

    def get_parsers(self):
        # DRF asks before it sets `self.action`, so find the action from the method.
        if self.request is None or self.action_map.get(self.request.method.lower()) == "create":
            return [MultiPartParser(), FormParser()]
        return super().get_parsers()

    @extend_schema(
        request={"multipart/form-data": EvidenceUploadSerializer},
        responses={
            201: EvidenceSerializer,
            200: OpenApiResponse(
                EvidenceSerializer, description="The same file was already there."
            ),
            **WRITE_ERROR_RESPONSES,
        },
    )
    def create(self, request, *args, **kwargs):
        serializer = EvidenceUploadSerializer(data=request.data)
        serializer.is_valid(raise_exception=True)
        data = serializer.validated_data
        evidence, created = services.evidence_attach(
            job=data["job"],
            upload=data["file"],
            uploaded_by=request.user,
            step=data["step"],
            caption=data["caption"],
        )
        return Response(self.get_serializer(evidence).data, status=201 if created else 200)

    @extend_schema(
        responses={
            (200, "application/octet-stream"): OpenApiResponse(description="The file."),
            **ERROR_RESPONSES,
        },
    )
    @action(detail=True, methods=["get"])
    def download(self, request, pk=None):
        evidence = self.get_object()
        return FileResponse(
            evidence.file.open("rb"),
            as_attachment=True,
            # A name made from the record and the type found in the content, never the
            # uploader's: theirs may carry a path, markup or a misleading extension.
            filename=f"{evidence.job.number}-evidence-{evidence.pk}{evidence.extension}",
            content_type=evidence.content_type,
        )
