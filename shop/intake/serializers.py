"""JSON shapes of intake records, and validation of what clients send."""

from __future__ import annotations

from decimal import Decimal

from django.contrib.auth import get_user_model
from drf_spectacular.utils import extend_schema_field
from rest_framework import serializers

from .models import (
    RECORDABLE_METHOD_CHOICES,
    Customer,
    CustomerDecision,
    Evidence,
    HoldReason,
    Job,
    JobMove,
    JobState,
    RepairStep,
    Unit,
)
from .workflow import allowed_targets

MAX_PARTS_PER_STEP = 100


class WarningSerializer(serializers.Serializer):
    """A notice about a write that was kept: e.g. a likely duplicate of an existing record."""

    code = serializers.CharField()
    message = serializers.CharField()
    existing = serializers.DictField(help_text="{type, id} of the record it refers to.")


class WithWarnings(serializers.Serializer):
    """Adds `warnings`: notices a service attached to the record it just wrote."""

    warnings = serializers.SerializerMethodField(
        help_text="Notices about this write (a likely duplicate names the existing record); "
        "empty on reads."
    )

    @extend_schema_field(WarningSerializer(many=True))
    def get_warnings(self, record) -> list[dict]:
        return getattr(record, "warnings", [])


class CustomerSerializer(WithWarnings, serializers.ModelSerializer):
    """A customer; the contact details (phone, email, notes) go to the front desk and leads only."""

    class Meta:
        model = Customer
        fields = [
            "id",
            "name",
            "phone",
            "email",
            "notes",
            "version",
            "created_at",
            "updated_at",
            "warnings",
        ]
        read_only_fields = ["version", "created_at", "updated_at"]


class CustomerNameSerializer(WithWarnings, serializers.ModelSerializer):
    """A customer without contact details (what technicians see)."""

    class Meta:
        model = Customer
        fields = ["id", "name", "version", "created_at", "updated_at", "warnings"]
        read_only_fields = fields


class UnitSerializer(WithWarnings, serializers.ModelSerializer):
    """A unit, its nameplate and construction; `chassis_may_be_live` flags isolation-only units."""

    owner_name = serializers.CharField(source="owner.name", read_only=True)
    chassis_may_be_live = serializers.BooleanField(read_only=True)
    hazard_change_reason = serializers.CharField(
        write_only=True,
        required=False,
        allow_blank=True,
        max_length=2000,
        help_text="A lead's reason for a change that lowers the recorded hazard, or that "
        "changes construction, class or nameplate of a unit already powered up.",
    )
    nameplate_known = serializers.BooleanField(
        read_only=True,
        help_text="False when rated_voltage or rated_power is null (no legible nameplate): "
        "power-up tests then need a load declared by a lead.",
    )

    class Meta:
        model = Unit
        fields = [
            "id",
            "owner",
            "owner_name",
            "category",
            "maker",
            "model_name",
            "serial",
            "year",
            "rated_voltage",
            "rated_power",
            "rated_power_unit",
            "rated_frequency",
            "fuse_rating",
            "fuse_type",
            "voltage_selector_as_found",
            "voltage_selector_setting",
            "construction",
            "protection_class",
            "cord",
            "chassis_may_be_live",
            "hazard_change_reason",
            "nameplate_known",
            "version",
            "created_at",
            "updated_at",
            "warnings",
        ]
        read_only_fields = ["version", "created_at", "updated_at"]
        # Sent always, null when the nameplate is not legible: a forgotten figure is refused.
        extra_kwargs = {
            "rated_voltage": {"required": True, "allow_null": True},
            "rated_power": {"required": True, "allow_null": True},
        }


class UnitBriefSerializer(serializers.ModelSerializer):
    """The few facts about a unit that every job view shows."""

    chassis_may_be_live = serializers.BooleanField(read_only=True)

    class Meta:
        model = Unit
        fields = ["id", "maker", "model_name", "serial", "construction", "chassis_may_be_live"]
        read_only_fields = fields


def technician_queryset():
    return get_user_model().objects.filter(is_active=True)


class LatestVerdictSerializer(serializers.Serializer):
    """The latest closed power-up test of a job and its verdict."""

    test = serializers.IntegerField()
    outcome = serializers.CharField()


class CustomerDecisionSerializer(serializers.ModelSerializer):
    """The customer's recorded answer to an estimate: who recorded it, how, when, what figure."""

    recorded_by = serializers.CharField(
        source="recorded_by.username", read_only=True, default=None, allow_null=True
    )

    class Meta:
        model = CustomerDecision
        fields = [
            "id",
            "decision",
            "method",
            "customer_name",
            "estimate",
            "recorded_by",
            "decided_at",
            "note",
        ]
        read_only_fields = fields


class JobSerializer(serializers.ModelSerializer):
    """A repair job; its state changes only through the transition endpoint."""

    unit_summary = UnitBriefSerializer(source="unit", read_only=True)
    customer = serializers.IntegerField(source="unit.owner_id", read_only=True)
    customer_name = serializers.CharField(source="unit.owner.name", read_only=True)
    assigned_technician = serializers.PrimaryKeyRelatedField(
        queryset=technician_queryset(), allow_null=True, required=False
    )
    assigned_technician_name = serializers.CharField(
        source="assigned_technician.username", read_only=True, default=None, allow_null=True
    )
    held_from = serializers.ChoiceField(
        choices=JobState.choices,
        allow_blank=True,
        read_only=True,
        help_text="The state a job on hold returns to (blank unless on hold).",
    )
    hold_reason = serializers.ChoiceField(
        choices=HoldReason.choices,
        allow_blank=True,
        read_only=True,
        help_text="Why the job is on hold (blank unless on hold); `hold_note` says more.",
    )
    hold_note = serializers.CharField(read_only=True)
    approval = CustomerDecisionSerializer(
        read_only=True,
        allow_null=True,
        help_text="The customer's approval the current work rests on (null until approved, "
        "and again after the estimate is raised above the approved figure).",
    )
    allowed_targets = serializers.SerializerMethodField()
    ready_override_by = serializers.CharField(
        source="ready_override_by.username", read_only=True, default=None, allow_null=True
    )
    latest_verdict = serializers.SerializerMethodField(
        help_text="The latest closed power-up test of the job and its outcome, or null."
    )

    class Meta:
        model = Job
        fields = [
            "id",
            "number",
            "unit",
            "unit_summary",
            "customer",
            "customer_name",
            "complaint",
            "condition_at_intake",
            "received_on",
            "promised_on",
            "assigned_technician",
            "assigned_technician_name",
            "estimate",
            "approval",
            "state",
            "held_from",
            "hold_reason",
            "hold_note",
            "allowed_targets",
            "latest_verdict",
            "ready_override",
            "ready_override_by",
            "version",
            "created_at",
            "updated_at",
        ]
        read_only_fields = [
            "number",
            "state",
            "held_from",
            "version",
            "created_at",
            "updated_at",
        ]

    @extend_schema_field(LatestVerdictSerializer(allow_null=True))
    def get_latest_verdict(self, job: Job) -> dict | None:
        test = getattr(job, "latest_test_id", None)
        if test is None:
            return None
        return {"test": test, "outcome": job.latest_outcome}

    @extend_schema_field(serializers.ListField(child=serializers.ChoiceField(JobState.choices)))
    def get_allowed_targets(self, job: Job) -> list[str]:
        return allowed_targets(job.state, job.held_from)

    def validate_unit(self, unit):
        if self.instance is not None and unit.pk != self.instance.unit_id:
            raise serializers.ValidationError("A job's unit cannot change; open a new job.")
        return unit


class JobTransitionSerializer(serializers.Serializer):
    """A request to move a job to another state."""

    to_state = serializers.ChoiceField(choices=JobState.choices)
    note = serializers.CharField(max_length=2000, required=False, allow_blank=True, default="")
    hold_reason = serializers.ChoiceField(
        choices=HoldReason.choices,
        required=False,
        allow_blank=True,
        default="",
        help_text="Why the job is held (needed to move to on_hold; 'other' needs a note).",
    )
    ready_override = serializers.CharField(
        max_length=2000,
        required=False,
        allow_blank=True,
        default="",
        help_text="A lead's reason to move to ready although the latest closed power-up test "
        "did not pass (kept on the job and printed on its certificate).",
    )


class CustomerAnswerSerializer(serializers.Serializer):
    """The customer's answer to the estimate, as the desk heard it."""

    method = serializers.ChoiceField(
        choices=RECORDABLE_METHOD_CHOICES,
        help_text="How the customer answered.",
    )
    customer_name = serializers.CharField(
        max_length=200,
        required=False,
        allow_blank=True,
        default="",
        help_text="Who answered for the customer, if not the owner.",
    )
    note = serializers.CharField(max_length=2000, required=False, allow_blank=True, default="")


class JobApprovalSerializer(CustomerAnswerSerializer):
    """The customer's approval; `estimate`, if sent, must be the job's current estimate."""

    estimate = serializers.DecimalField(
        max_digits=9,
        decimal_places=2,
        min_value=Decimal("0"),
        required=False,
        allow_null=True,
        default=None,
        help_text="The figure the customer approved; refused (409) unless it is the job's.",
    )


class JobMoveSerializer(serializers.ModelSerializer):
    """One recorded change of a job's state."""

    moved_by = serializers.CharField(source="moved_by.username", read_only=True)

    class Meta:
        model = JobMove
        fields = ["id", "from_state", "to_state", "moved_by", "moved_at", "note"]
        read_only_fields = fields


class PartSerializer(serializers.Serializer):
    """One part used in a repair step."""

    part = serializers.CharField(max_length=200)
    quantity = serializers.DecimalField(
        max_digits=10,
        decimal_places=3,
        min_value=Decimal("0.001"),
        max_value=Decimal("100000"),
        coerce_to_string=False,
    )
    note = serializers.CharField(max_length=500, required=False, allow_blank=True, default="")
    note_for_customer = serializers.BooleanField(
        required=False,
        default=False,
        help_text="Print the note on the customer's certificate; otherwise it stays in the "
        "shop (stock bins, quotes, suppliers).",
    )

    def to_internal_value(self, data):
        value = super().to_internal_value(data)
        value["quantity"] = float(value["quantity"])
        return value


class RepairStepSerializer(serializers.ModelSerializer):
    """A repair step (append-only); a correction names the step it corrects."""

    parts = PartSerializer(many=True, required=False, max_length=MAX_PARTS_PER_STEP)
    technician = serializers.CharField(source="technician.username", read_only=True)

    class Meta:
        model = RepairStep
        fields = [
            "id",
            "job",
            "technician",
            "performed_at",
            "action",
            "parts",
            "minutes",
            "corrects",
            "created_at",
        ]
        read_only_fields = ["technician", "created_at"]
        extra_kwargs = {"performed_at": {"required": False}}


class EvidenceSerializer(serializers.ModelSerializer):
    """A stored evidence file's record (the bytes come from its download link)."""

    uploaded_by = serializers.CharField(source="uploaded_by.username", read_only=True)
    download = serializers.SerializerMethodField()

    class Meta:
        model = Evidence
        fields = [
            "id",
            "job",
            "step",
            "caption",
            "label",
            "content_type",
            "size",
            "sha256",
            "uploaded_by",
            "uploaded_at",
            "download",
        ]
        read_only_fields = fields

    def get_download(self, evidence: Evidence) -> str:
        request = self.context.get("request")
        path = f"/api/evidence/{evidence.pk}/download/"
        return request.build_absolute_uri(path) if request else path


class EvidenceUploadSerializer(serializers.Serializer):
    """A file to attach to a job (multipart form: `job`, `file`, optional `step` and `caption`)."""

    job = serializers.PrimaryKeyRelatedField(queryset=Job.objects.all())
    file = serializers.FileField(allow_empty_file=False, max_length=255)
    step = serializers.PrimaryKeyRelatedField(
        queryset=RepairStep.objects.all(),
        required=False,
        allow_null=True,
        default=None,
        help_text="A repair step of the same job that this file shows.",
    )
    caption = serializers.CharField(
        max_length=500, required=False, allow_blank=True, default="", help_text="What it shows."
    )
