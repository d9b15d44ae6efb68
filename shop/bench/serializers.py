"""JSON shapes of bench records and validation of what clients send."""

from __future__ import annotations

from django.contrib.auth import get_user_model
from drf_spectacular.utils import extend_schema_field
from rest_framework import serializers

from shop.intake.models import Job

from .models import (
    BehaviourSeen,
    CalibrationRecord,
    GlowSeen,
    Instrument,
    Lamp,
    LampBank,
    PowerUpTest,
    Reading,
    Rig,
    SourcePoint,
    Verdict,
)
from .selectors import calibration_state

MAX_PAIRS = 50
MAX_CALIBRATION_POINTS = 50
MAX_READINGS_PER_REQUEST = 500


class CalibrationStateSerializer(serializers.Serializer):
    """Whether an instrument is within calibration, and until when."""

    due_on = serializers.DateField(allow_null=True)
    past_due = serializers.BooleanField()


class InstrumentSerializer(serializers.ModelSerializer):
    """A bench meter with its accuracy; `calibration` says whether it is in date."""

    calibration = serializers.SerializerMethodField()

    class Meta:
        model = Instrument
        fields = [
            "id",
            "kind",
            "response",
            "maker",
            "model_name",
            "serial",
            "accuracy_percent",
            "accuracy_counts",
            "resolution",
            "calibration",
            "version",
            "created_at",
            "updated_at",
        ]
        read_only_fields = ["version", "created_at", "updated_at"]

    @extend_schema_field(CalibrationStateSerializer)
    def get_calibration(self, instrument: Instrument) -> dict:
        return calibration_state(instrument)


class PairSerializer(serializers.Serializer):
    """One reading on the reference meter and what the checked meter showed."""

    reference = serializers.FloatField(min_value=0, max_value=1000)
    indicated = serializers.FloatField(min_value=0, max_value=1000)


class CalibrationRecordSerializer(serializers.ModelSerializer):
    """A calibration or meter check; paired readings give a fitted correction."""

    paired_readings = PairSerializer(many=True, required=False, max_length=MAX_PAIRS)
    recorded_by = serializers.CharField(source="recorded_by.username", read_only=True)

    class Meta:
        model = CalibrationRecord
        fields = [
            "id",
            "instrument",
            "calibrated_on",
            "due_on",
            "reference",
            "paired_readings",
            "correction_gain",
            "correction_offset",
            "largest_residual",
            "recorded_by",
            "created_at",
        ]
        read_only_fields = [
            "instrument",
            "correction_gain",
            "correction_offset",
            "largest_residual",
            "recorded_by",
            "created_at",
        ]


class RigSerializer(serializers.ModelSerializer):
    """A limiter rig: source, isolation, windings and built-in meter."""

    class Meta:
        model = Rig
        fields = [
            "id",
            "name",
            "mains_voltage",
            "mains_frequency",
            "source_kind",
            "output_at_full_dial",
            "source_current_rating",
            "isolation_transformer",
            "isolation_rating",
            "internal_resistance",
            "internal_resistance_measured",
            "builtin_meter",
            "builtin_meter_point",
            "version",
            "created_at",
            "updated_at",
        ]
        read_only_fields = ["version", "created_at", "updated_at"]


class CalibrationPointSerializer(serializers.Serializer):
    """A measured steady (volts, amperes) point of a lamp."""

    voltage = serializers.FloatField(min_value=0, max_value=400)
    current = serializers.FloatField(min_value=0, max_value=50)


class LampSerializer(serializers.ModelSerializer):
    """A series lamp; LED and compact fluorescent lamps are refused (they do not limit current)."""

    calibration_points = CalibrationPointSerializer(
        many=True, required=False, max_length=MAX_CALIBRATION_POINTS
    )

    class Meta:
        model = Lamp
        fields = [
            "id",
            "rig",
            "label",
            "technology",
            "rated_voltage",
            "rated_power",
            "fill",
            "cold_resistance",
            "calibration_points",
            "fitted_rated_temperature",
            "fitted_conduction_fraction",
            "fit_rms_residual",
            "version",
            "created_at",
            "updated_at",
        ]
        read_only_fields = [
            "fitted_rated_temperature",
            "fitted_conduction_fraction",
            "fit_rms_residual",
            "version",
            "created_at",
            "updated_at",
        ]

    def validate_rig(self, rig):
        if self.instance is not None and rig.pk != self.instance.rig_id:
            raise serializers.ValidationError("A lamp's rig cannot change; add the lamp anew.")
        return rig


class LampBankSerializer(serializers.ModelSerializer):
    """Lamps of one rig switched in parallel."""

    lamps = serializers.PrimaryKeyRelatedField(many=True, queryset=Lamp.objects.all())

    class Meta:
        model = LampBank
        fields = ["id", "rig", "label", "lamps", "version", "created_at"]
        read_only_fields = ["version", "created_at"]


class PowerUpTestSerializer(serializers.ModelSerializer):
    """A power-up test; `declared_load` defaults to one built from the unit's nameplate."""

    job = serializers.PrimaryKeyRelatedField(queryset=Job.objects.all())
    declared_load = serializers.JSONField(required=False)
    technician = serializers.SlugRelatedField(
        slug_field="username",
        queryset=get_user_model().objects.filter(is_active=True),
        required=False,
        help_text="Who takes the readings (username); defaults to whoever opens the test. "
        "A lead overriding a rule names the technician here and is recorded as override_by.",
    )
    chassis_may_be_live = serializers.SerializerMethodField(
        help_text="From the unit facts frozen when the test opened."
    )
    live_chassis_override = serializers.CharField(
        required=False,
        allow_blank=True,
        max_length=2000,
        help_text="A lead's stated reason to test a live-chassis unit without isolation.",
    )
    voltage_override = serializers.CharField(
        required=False,
        allow_blank=True,
        max_length=2000,
        help_text="A lead's stated reason to use a rig outside the unit's rated voltage.",
    )
    calibration_flags = serializers.SerializerMethodField()
    verdict_outcome = serializers.SerializerMethodField(
        help_text="The verdict of a closed test (pass, marginal, fail, inconclusive); null "
        "while open."
    )

    class Meta:
        model = PowerUpTest
        fields = [
            "id",
            "job",
            "rig",
            "lamp",
            "bank",
            "technician",
            "opened_by",
            "declared_load",
            "ambient_temperature",
            "source_meter",
            "load_meter",
            "current_meter",
            "unit_facts",
            "rig_facts",
            "chassis_may_be_live",
            "live_chassis_override",
            "voltage_override",
            "override_by",
            "warnings",
            "calibration_flags",
            "notes",
            "status",
            "verdict_outcome",
            "started_at",
            "closed_at",
            "version",
            "created_at",
            "updated_at",
        ]
        read_only_fields = [
            "opened_by",
            "override_by",
            "unit_facts",
            "rig_facts",
            "warnings",
            "status",
            "started_at",
            "closed_at",
            "version",
            "created_at",
            "updated_at",
        ]

    @extend_schema_field(serializers.BooleanField(allow_null=True))
    def get_chassis_may_be_live(self, test: PowerUpTest) -> bool | None:
        return test.unit_facts.get("chassis_may_be_live")

    @extend_schema_field(serializers.CharField(allow_null=True))
    def get_verdict_outcome(self, test: PowerUpTest) -> str | None:
        verdict = getattr(test, "verdict", None) if test.status == "closed" else None
        return verdict.outcome if verdict is not None else None

    @extend_schema_field(serializers.ListField(child=serializers.CharField()))
    def get_calibration_flags(self, test: PowerUpTest) -> list[str]:
        flags = []
        for role in ("source_meter", "load_meter", "current_meter"):
            meter = getattr(test, role)
            if meter is not None and calibration_state(meter)["past_due"]:
                flags.append(f"{role}: {meter} is past its calibration due date")
        return flags


class PowerUpUpdateSerializer(serializers.ModelSerializer):
    """What may change on an open test."""

    declared_load = serializers.JSONField(required=False)

    class Meta:
        model = PowerUpTest
        fields = [
            "declared_load",
            "ambient_temperature",
            "source_meter",
            "load_meter",
            "current_meter",
            "notes",
        ]


class ReadingSerializer(serializers.ModelSerializer):
    """One power-up step; give source volts, or dial percent on a rig with its 100 % figure."""

    source_voltage = serializers.FloatField(required=False, min_value=0, max_value=1000)
    source_point = serializers.ChoiceField(
        choices=SourcePoint.choices,
        required=False,
        help_text="Where the source volts were read. Default: where the rig's built-in meter "
        "reads (rig_output unless the rig says otherwise), or before_rig for a source given "
        "as dial_percent (the dial's figure is the rig's unloaded output).",
    )
    dial_percent = serializers.FloatField(
        required=False, min_value=0, max_value=100, allow_null=True
    )
    load_voltage = serializers.FloatField(min_value=0, max_value=1000)
    current = serializers.FloatField(required=False, allow_null=True, min_value=0, max_value=50)
    glow_seen = serializers.ChoiceField(choices=GlowSeen.choices)
    behaviour_seen = serializers.ChoiceField(
        choices=BehaviourSeen.choices, required=False, default=BehaviourSeen.STEADY
    )
    seconds_held = serializers.FloatField(
        required=False, allow_null=True, min_value=0, max_value=86400
    )
    seconds_since_switch_on = serializers.FloatField(
        required=False, allow_null=True, min_value=0, max_value=86400
    )

    class Meta:
        model = Reading
        fields = [
            "id",
            "sequence",
            "source_voltage",
            "source_point",
            "dial_percent",
            "load_voltage",
            "current",
            "glow_seen",
            "behaviour_seen",
            "seconds_held",
            "lamp_bypassed",
            "seconds_since_switch_on",
            "taken_at",
        ]
        read_only_fields = ["id", "sequence"]
        extra_kwargs = {"taken_at": {"required": False}}


class ReadingBatchSerializer(serializers.Serializer):
    """Several readings at once (all or none are kept)."""

    readings = ReadingSerializer(many=True, allow_empty=False, max_length=MAX_READINGS_PER_REQUEST)


class ReadingCsvSerializer(serializers.Serializer):
    """A CSV file of readings (multipart field `file`)."""

    file = serializers.FileField(allow_empty_file=False)


class VerdictSerializer(serializers.ModelSerializer):
    """The stored judgement of a closed test."""

    class Meta:
        model = Verdict
        fields = [
            "outcome",
            "reasons",
            "per_reading",
            "inputs",
            "physics_version",
            "data_fingerprint",
            "created_at",
        ]
        read_only_fields = fields


class CloseSerializer(serializers.Serializer):
    """Closing takes no input; the verdict is computed from the stored readings."""
