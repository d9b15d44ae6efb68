"""Bench records: rigs, lamps and banks, instruments and their calibration, power-up tests."""

from __future__ import annotations

from decimal import Decimal

from django.conf import settings
from django.core.exceptions import ValidationError
from django.core.validators import MaxValueValidator, MinValueValidator
from django.db import models
from django.utils import timezone

from shop.core.immutability import AppendOnly
from shop.core.versioning import Versioned
from shop.intake.models import Job

MIN_MAINS_VOLTAGE = Decimal("90")
MAX_MAINS_VOLTAGE = Decimal("260")
# The lamp model's own range (shop.physics refuses rated voltages outside 6-300 V).
MIN_LAMP_VOLTAGE = Decimal("6")
MAX_LAMP_VOLTAGE = Decimal("300")
MIN_LAMP_POWER = Decimal("1")
MAX_LAMP_POWER = Decimal("2000")
MAX_INTERNAL_RESISTANCE = Decimal("50")
# A rig's typical winding resistance when nobody has measured it [ohm]: a variable
# autotransformer plus an isolation transformer of a few hundred VA (common practice, no source).
DEFAULT_INTERNAL_RESISTANCE = Decimal("2.0")


def _range(low, high):
    return [MinValueValidator(low), MaxValueValidator(high)]


class InstrumentKind(models.TextChoices):
    VOLTMETER = "voltmeter", "Voltmeter"
    AMMETER = "ammeter", "Ammeter"
    MULTIMETER = "multimeter", "Multimeter"
    CLAMP_METER = "clamp_meter", "Clamp meter"


class MeterResponse(models.TextChoices):
    TRUE_RMS = "true_rms", "True RMS"
    AVERAGE_RESPONDING = "average_responding", "Average-responding, RMS-calibrated"


class Instrument(Versioned):
    """A meter used on the bench, with its stated accuracy and calibration history."""

    kind = models.CharField(max_length=20, choices=InstrumentKind.choices)
    response = models.CharField(max_length=20, choices=MeterResponse.choices)
    maker = models.CharField(max_length=200)
    model_name = models.CharField(max_length=200, blank=True)
    serial = models.CharField(max_length=100, blank=True)
    accuracy_percent = models.DecimalField(
        max_digits=5,
        decimal_places=2,
        validators=_range(Decimal("0"), Decimal("20")),
        help_text="Accuracy as a percentage of the reading.",
    )
    accuracy_counts = models.PositiveIntegerField(
        default=0,
        validators=[MaxValueValidator(1000)],
        help_text="Plus this many counts of the last digit.",
    )
    resolution = models.DecimalField(
        max_digits=7,
        decimal_places=4,
        default=Decimal("0.1"),
        validators=_range(Decimal("0.0001"), Decimal("10")),
        help_text="Value of one count of the last digit, in volts or amperes.",
    )
    created_at = models.DateTimeField(auto_now_add=True)
    updated_at = models.DateTimeField(auto_now=True)

    class Meta:
        ordering = ["maker", "model_name", "id"]

    def __str__(self) -> str:
        return " ".join(part for part in (self.maker, self.model_name, self.serial) if part)

    def uncertainty(self, reading: float) -> float:
        """The stated accuracy at `reading`, in the reading's unit."""
        return float(self.accuracy_percent) / 100 * abs(reading) + self.accuracy_counts * float(
            self.resolution
        )


class CalibrationRecord(AppendOnly):
    """A calibration or meter check: dates, the reference, paired readings and the fitted fix."""

    instrument = models.ForeignKey(
        Instrument, on_delete=models.PROTECT, related_name="calibrations"
    )
    calibrated_on = models.DateField()
    due_on = models.DateField()
    reference = models.CharField(max_length=300, help_text="Reference meter or laboratory.")
    paired_readings = models.JSONField(
        default=list,
        blank=True,
        help_text="[{reference, indicated}] pairs, in volts or amperes.",
    )
    correction_gain = models.FloatField(null=True, blank=True)
    correction_offset = models.FloatField(null=True, blank=True)
    largest_residual = models.FloatField(null=True, blank=True)
    recorded_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+"
    )
    created_at = models.DateTimeField(auto_now_add=True)

    class Meta:
        ordering = ["-calibrated_on", "-id"]

    def __str__(self) -> str:
        return f"{self.instrument}: due {self.due_on}"


class SourcePoint(models.TextChoices):
    """Where a reading's source volts were read: the windings' drop lies behind or ahead of it."""

    RIG_OUTPUT = "rig_output", "At the rig's output"
    BEFORE_RIG = "before_rig", "Before the rig's windings"


class SourceKind(models.TextChoices):
    VARIABLE_AUTOTRANSFORMER = "variable_autotransformer", "Variable autotransformer"
    FIXED_MAINS = "fixed_mains", "Fixed mains"


class Rig(Versioned):
    """A limiter set-up on a bench: its source, isolation, windings and built-in meter."""

    name = models.CharField(max_length=100, unique=True)
    mains_voltage = models.DecimalField(
        max_digits=5,
        decimal_places=1,
        validators=_range(MIN_MAINS_VOLTAGE, MAX_MAINS_VOLTAGE),
        help_text="Nominal mains [V RMS].",
    )
    mains_frequency = models.PositiveSmallIntegerField(choices=[(50, "50 Hz"), (60, "60 Hz")])
    source_kind = models.CharField(max_length=30, choices=SourceKind.choices)
    output_at_full_dial = models.DecimalField(
        max_digits=5,
        decimal_places=1,
        null=True,
        blank=True,
        validators=_range(Decimal("1"), Decimal("300")),
        help_text="Source volts at 100 % dial (variable autotransformers often exceed mains).",
    )
    source_current_rating = models.DecimalField(
        max_digits=5,
        decimal_places=2,
        validators=_range(Decimal("0.1"), Decimal("50")),
        help_text="Rated output current of the source [A].",
    )
    isolation_transformer = models.BooleanField(default=False)
    isolation_rating = models.DecimalField(
        max_digits=6,
        decimal_places=0,
        null=True,
        blank=True,
        validators=_range(Decimal("10"), Decimal("10000")),
        help_text="[VA]",
    )
    internal_resistance = models.DecimalField(
        max_digits=5,
        decimal_places=2,
        default=DEFAULT_INTERNAL_RESISTANCE,
        validators=_range(Decimal("0"), MAX_INTERNAL_RESISTANCE),
        help_text="Windings in series with the lamp [ohm].",
    )
    internal_resistance_measured = models.BooleanField(default=False)
    builtin_meter = models.ForeignKey(
        Instrument, on_delete=models.PROTECT, null=True, blank=True, related_name="+"
    )
    builtin_meter_point = models.CharField(
        max_length=12,
        choices=SourcePoint.choices,
        default=SourcePoint.RIG_OUTPUT,
        help_text="Where the rig's built-in meter reads the source; readings that do not "
        "say where their source volts were read are taken as read there.",
    )
    created_at = models.DateTimeField(auto_now_add=True)
    updated_at = models.DateTimeField(auto_now=True)

    class Meta:
        ordering = ["name"]

    def __str__(self) -> str:
        return self.name

    @property
    def full_source_voltage(self) -> float:
        """The highest source voltage this rig gives [V]."""
        return float(self.output_at_full_dial or self.mains_voltage)


class LampTechnology(models.TextChoices):
    TUNGSTEN = "tungsten", "Tungsten general-service"
    HALOGEN = "halogen", "Tungsten halogen (mains)"
    LED = "led", "LED (refused)"
    COMPACT_FLUORESCENT = "compact_fluorescent", "Compact fluorescent (refused)"


# Lamps that do not limit current: electronics inside regulate their own draw.
REFUSED_TECHNOLOGIES = {
    LampTechnology.LED: "LED lamps contain a driver and do not limit current",
    LampTechnology.COMPACT_FLUORESCENT: (
        "compact fluorescent lamps contain an electronic ballast and do not limit current"
    ),
}


class LampFill(models.TextChoices):
    GAS = "gas", "Gas-filled"
    VACUUM = "vacuum", "Vacuum"


class Lamp(Versioned):
    """A series lamp on a rig, with an optional measured calibration."""

    rig = models.ForeignKey(Rig, on_delete=models.PROTECT, related_name="lamps")
    label = models.CharField(max_length=100)
    technology = models.CharField(max_length=25, choices=LampTechnology.choices)
    rated_voltage = models.DecimalField(
        max_digits=5, decimal_places=1, validators=_range(MIN_LAMP_VOLTAGE, MAX_LAMP_VOLTAGE)
    )
    rated_power = models.DecimalField(
        max_digits=6, decimal_places=1, validators=_range(MIN_LAMP_POWER, MAX_LAMP_POWER)
    )
    fill = models.CharField(max_length=10, choices=LampFill.choices, default=LampFill.GAS)
    cold_resistance = models.DecimalField(
        max_digits=7,
        decimal_places=3,
        null=True,
        blank=True,
        validators=_range(Decimal("0.01"), Decimal("10000")),
        help_text="Measured at room temperature [ohm].",
    )
    calibration_points = models.JSONField(
        default=list, blank=True, help_text="Measured [{voltage, current}] pairs."
    )
    fitted_rated_temperature = models.FloatField(null=True, blank=True)
    fitted_conduction_fraction = models.FloatField(null=True, blank=True)
    fit_rms_residual = models.FloatField(null=True, blank=True, help_text="[A]")
    created_at = models.DateTimeField(auto_now_add=True)
    updated_at = models.DateTimeField(auto_now=True)

    class Meta:
        ordering = ["rig", "rated_power", "id"]
        constraints = [models.UniqueConstraint(fields=["rig", "label"], name="lamp_label_per_rig")]

    def __str__(self) -> str:
        return f"{self.label} ({self.rated_power} W, {self.rated_voltage} V)"


class LampBank(Versioned):
    """Lamps of one rig switched in parallel, used as one limiter."""

    rig = models.ForeignKey(Rig, on_delete=models.PROTECT, related_name="banks")
    label = models.CharField(max_length=100)
    lamps = models.ManyToManyField(Lamp, related_name="banks")
    created_at = models.DateTimeField(auto_now_add=True)
    updated_at = models.DateTimeField(auto_now=True)

    class Meta:
        ordering = ["rig", "label"]
        constraints = [models.UniqueConstraint(fields=["rig", "label"], name="bank_label_per_rig")]

    def __str__(self) -> str:
        return self.label


class TestStatus(models.TextChoices):
    OPEN = "open", "Open"
    CLOSED = "closed", "Closed"


class PowerUpTestQuerySet(models.QuerySet):
    """Bulk updates and deletes never reach a closed test."""

    def update(self, **kwargs):
        _refuse_if_closed(self.filter(status=TestStatus.CLOSED).exists())
        return super().update(**kwargs)

    def delete(self):
        _refuse_if_closed(self.filter(status=TestStatus.CLOSED).exists())
        return super().delete()


def _refuse_if_closed(closed: bool) -> None:
    if closed:
        raise ValidationError(
            "A closed power-up test and its readings never change; a correction is a new test."
        )


class PowerUpTest(Versioned):
    """One power-up run of a job's unit through a series lamp; closed means never changed."""

    job = models.ForeignKey(Job, on_delete=models.PROTECT, related_name="powerups")
    rig = models.ForeignKey(Rig, on_delete=models.PROTECT, related_name="powerups")
    lamp = models.ForeignKey(
        Lamp, on_delete=models.PROTECT, null=True, blank=True, related_name="powerups"
    )
    bank = models.ForeignKey(
        LampBank, on_delete=models.PROTECT, null=True, blank=True, related_name="powerups"
    )
    technician = models.ForeignKey(
        settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="powerups"
    )
    declared_load = models.JSONField()
    ambient_temperature = models.FloatField(
        default=300.0,
        validators=[MinValueValidator(250.0), MaxValueValidator(330.0)],
        help_text="Bench ambient [K].",
    )
    source_meter = models.ForeignKey(
        Instrument, on_delete=models.PROTECT, null=True, blank=True, related_name="+"
    )
    load_meter = models.ForeignKey(
        Instrument, on_delete=models.PROTECT, null=True, blank=True, related_name="+"
    )
    current_meter = models.ForeignKey(
        Instrument, on_delete=models.PROTECT, null=True, blank=True, related_name="+"
    )
    live_chassis_override = models.TextField(
        blank=True,
        help_text="A lead's stated reason for testing a live-chassis unit without "
        "an isolation transformer.",
    )
    voltage_override = models.TextField(
        blank=True,
        help_text="A lead's stated reason for powering the unit from a rig whose nominal "
        "voltage is outside the unit's rated range.",
    )
    override_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, on_delete=models.PROTECT, null=True, blank=True, related_name="+"
    )
    opened_by = models.ForeignKey(
        settings.AUTH_USER_MODEL,
        on_delete=models.PROTECT,
        null=True,
        blank=True,
        related_name="+",
        help_text="Who opened the test (a lead may open one for the technician who takes the "
        "readings).",
    )
    unit_facts = models.JSONField(
        default=dict,
        blank=True,
        help_text="The unit's construction, class and nameplate as they stood when the test "
        "opened: the facts the isolation rule and the judgement used.",
    )
    rig_facts = models.JSONField(
        default=dict,
        blank=True,
        help_text="The rig's name, nominal mains and isolation when the test opened.",
    )
    warnings = models.JSONField(default=list, blank=True)
    notes = models.TextField(blank=True, max_length=4000)
    status = models.CharField(
        max_length=10, choices=TestStatus.choices, default=TestStatus.OPEN, editable=False
    )
    started_at = models.DateTimeField(default=timezone.now)
    closed_at = models.DateTimeField(null=True, blank=True, editable=False)
    closed_by = models.ForeignKey(
        settings.AUTH_USER_MODEL,
        on_delete=models.PROTECT,
        null=True,
        blank=True,
        related_name="+",
        editable=False,
    )
    created_at = models.DateTimeField(auto_now_add=True)
    updated_at = models.DateTimeField(auto_now=True)

    objects = PowerUpTestQuerySet.as_manager()

    class Meta:
        ordering = ["-started_at", "-id"]
        constraints = [
            models.CheckConstraint(
                condition=(
                    models.Q(lamp__isnull=False, bank__isnull=True)
                    | models.Q(lamp__isnull=True, bank__isnull=False)
                ),
                name="powerup_lamp_or_bank",
            )
        ]

    def __str__(self) -> str:
        return f"Power-up {self.pk} of {self.job}"

    def save(self, *args, **kwargs):
        if not self._state.adding:
            _refuse_if_closed(
                PowerUpTest.objects.filter(pk=self.pk, status=TestStatus.CLOSED).exists()
            )
        super().save(*args, **kwargs)

    def delete(self, *args, **kwargs):
        _refuse_if_closed(self.status == TestStatus.CLOSED)
        return super().delete(*args, **kwargs)


class GlowSeen(models.TextChoices):
    DARK = "dark", "Dark"
    FAINT = "faint", "Faint (visible in a dim room)"
    DULL = "dull", "Dull"
    MEDIUM = "medium", "Medium"
    BRIGHT = "bright", "Bright"


class BehaviourSeen(models.TextChoices):
    STEADY = "steady", "Steady"
    FLASH_THEN_DIMS = "flash_then_dims", "Flash at switch-on, then dims"
    CYCLING = "cycling", "Glow rises and falls repeatedly"


class ReadingQuerySet(models.QuerySet):
    """Bulk updates and deletes never reach the readings of a closed test."""

    def _touches_closed(self) -> bool:
        return self.filter(test__status=TestStatus.CLOSED).exists()

    def update(self, **kwargs):
        _refuse_if_closed(self._touches_closed())
        return super().update(**kwargs)

    def delete(self):
        _refuse_if_closed(self._touches_closed())
        return super().delete()

    def bulk_create(self, objs, *args, **kwargs):
        tests = {obj.test_id for obj in objs}
        _refuse_if_closed(
            PowerUpTest.objects.filter(pk__in=tests, status=TestStatus.CLOSED).exists()
        )
        return super().bulk_create(objs, *args, **kwargs)


class Reading(models.Model):
    """One step of a power-up: what the meters and the lamp showed."""

    test = models.ForeignKey(PowerUpTest, on_delete=models.CASCADE, related_name="readings")
    sequence = models.PositiveIntegerField()
    source_voltage = models.FloatField(help_text="[V RMS]")
    source_point = models.CharField(
        max_length=12,
        choices=SourcePoint.choices,
        default=SourcePoint.RIG_OUTPUT,
        help_text="Where the source volts were read: at the rig's output, or before its windings.",
    )
    dial_percent = models.FloatField(null=True, blank=True)
    load_voltage = models.FloatField(help_text="[V RMS]")
    current = models.FloatField(null=True, blank=True, help_text="[A RMS]")
    glow_seen = models.CharField(max_length=10, choices=GlowSeen.choices)
    behaviour_seen = models.CharField(
        max_length=20, choices=BehaviourSeen.choices, default=BehaviourSeen.STEADY
    )
    seconds_held = models.FloatField(null=True, blank=True)
    lamp_bypassed = models.BooleanField(default=False)
    seconds_since_switch_on = models.FloatField(null=True, blank=True)
    taken_at = models.DateTimeField(default=timezone.now)

    objects = ReadingQuerySet.as_manager()

    class Meta:
        ordering = ["test", "sequence"]
        constraints = [
            models.UniqueConstraint(fields=["test", "sequence"], name="reading_sequence_per_test")
        ]

    def __str__(self) -> str:
        return f"{self.test_id}#{self.sequence}: {self.source_voltage} V -> {self.load_voltage} V"

    def save(self, *args, **kwargs):
        _refuse_if_closed(
            PowerUpTest.objects.filter(pk=self.test_id, status=TestStatus.CLOSED).exists()
        )
        super().save(*args, **kwargs)

    def delete(self, *args, **kwargs):
        _refuse_if_closed(self.test.status == TestStatus.CLOSED)
        return super().delete(*args, **kwargs)


class Verdict(AppendOnly):
    """The judgement stored when a test closes; never changed afterwards."""

    test = models.OneToOneField(PowerUpTest, on_delete=models.PROTECT, related_name="verdict")
    outcome = models.CharField(max_length=15)
    reasons = models.JSONField()
    per_reading = models.JSONField()
    inputs = models.JSONField()
    physics_version = models.CharField(max_length=20)
    data_fingerprint = models.CharField(max_length=64)
    created_at = models.DateTimeField(auto_now_add=True)

    def __str__(self) -> str:
        return f"{self.test_id}: {self.outcome}"
