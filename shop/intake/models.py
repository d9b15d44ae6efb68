"""Intake records: customers, their units, repair jobs, job moves, repair steps and evidence."""

from __future__ import annotations

import uuid
from decimal import Decimal

from django.conf import settings
from django.core.exceptions import ValidationError
from django.core.validators import MaxValueValidator, MinValueValidator
from django.db import models
from django.utils import timezone

from shop.core.immutability import AppendOnly
from shop.core.numbering import YearCounter
from shop.core.versioning import Versioned

# Nameplate limits: anything outside is a typing mistake, not a unit this bench powers up.
MIN_RATED_VOLTAGE = Decimal("1")
MAX_RATED_VOLTAGE = Decimal("480")
MIN_RATED_POWER = Decimal("0.1")
MAX_RATED_POWER = Decimal("10000")
MIN_FUSE_CURRENT = Decimal("0.01")
MAX_FUSE_CURRENT = Decimal("100")
MAX_STEP_MINUTES = 24 * 60


class Customer(Versioned):
    """Someone who brings gear in. Personal data kept to what the shop needs to reach them."""

    name = models.CharField(max_length=200)
    phone = models.CharField(max_length=40, blank=True)
    email = models.EmailField(blank=True)
    notes = models.TextField(blank=True, max_length=4000)
    created_at = models.DateTimeField(auto_now_add=True)
    updated_at = models.DateTimeField(auto_now=True)

    class Meta:
        ordering = ["name", "id"]

    def __str__(self) -> str:
        return self.name


class Category(models.TextChoices):
    RADIO = "radio", "Radio"
    AMPLIFIER = "amplifier", "Amplifier"
    INSTRUMENT_AMPLIFIER = "instrument_amplifier", "Instrument amplifier"
    HIFI = "hifi", "Hi-fi component"
    TELEVISION = "television", "Television"
    TEST_GEAR = "test_gear", "Test gear"
    BENCH_SUPPLY = "bench_supply", "Bench power supply"
    HOME_BUILT = "home_built", "Home-built project"
    OTHER = "other", "Other"


class PowerUnit(models.TextChoices):
    WATT = "W", "W"
    VOLT_AMPERE = "VA", "VA"


class FrequencyRating(models.TextChoices):
    HZ_50 = "50", "50 Hz"
    HZ_60 = "60", "60 Hz"
    HZ_50_60 = "50_60", "50/60 Hz"
    UNKNOWN = "unknown", "Not stated"


class FuseType(models.TextChoices):
    TIME_LAG = "time_lag", "Time-lag (T)"
    FAST = "fast", "Fast-acting (F)"
    UNKNOWN = "unknown", "Not known"
    NONE = "none", "No fuse fitted"


class Construction(models.TextChoices):
    ISOLATING_TRANSFORMER = "isolating_transformer", "Isolating power transformer"
    OWN_AUTOTRANSFORMER = "own_autotransformer", "Own autotransformer (not isolating)"
    TRANSFORMERLESS = "transformerless", "Transformerless (hot chassis)"
    SWITCH_MODE = "switch_mode", "Switch-mode supply"
    UNKNOWN = "unknown", "Unknown"


# Constructions whose chassis may sit at mains potential: test only through isolation.
LIVE_CHASSIS_CONSTRUCTIONS = frozenset(
    {Construction.OWN_AUTOTRANSFORMER, Construction.TRANSFORMERLESS, Construction.UNKNOWN}
)


class ProtectionClass(models.TextChoices):
    CLASS_0 = "0", "Class 0"
    CLASS_0I = "0I", "Class 0I"
    CLASS_I = "I", "Class I (earthed)"
    CLASS_II = "II", "Class II (double insulated)"
    CLASS_III = "III", "Class III (SELV)"
    UNKNOWN = "unknown", "Unknown"


class Cord(models.TextChoices):
    TWO_WIRE = "two_wire", "2-wire"
    THREE_WIRE = "three_wire", "3-wire (with earth)"
    UNKNOWN = "unknown", "Unknown or missing"


class Unit(Versioned):
    """A piece of equipment brought in, with its nameplate and how it is built."""

    owner = models.ForeignKey(Customer, on_delete=models.PROTECT, related_name="units")
    category = models.CharField(max_length=30, choices=Category.choices)
    maker = models.CharField(max_length=200)
    model_name = models.CharField(max_length=200, blank=True)
    serial = models.CharField(max_length=100, blank=True)
    year = models.PositiveSmallIntegerField(
        null=True, blank=True, validators=[MinValueValidator(1880), MaxValueValidator(2100)]
    )
    rated_voltage = models.DecimalField(
        max_digits=6,
        decimal_places=1,
        null=True,
        blank=True,
        validators=[MinValueValidator(MIN_RATED_VOLTAGE), MaxValueValidator(MAX_RATED_VOLTAGE)],
        help_text="Nameplate mains voltage [V RMS]; null when the nameplate is not legible "
        "(rated voltage unknown: only a lead may then declare a load to test it).",
    )
    rated_power = models.DecimalField(
        max_digits=7,
        decimal_places=1,
        null=True,
        blank=True,
        validators=[MinValueValidator(MIN_RATED_POWER), MaxValueValidator(MAX_RATED_POWER)],
        help_text="Nameplate power, in the unit given by rated_power_unit; null when not legible.",
    )
    rated_power_unit = models.CharField(
        max_length=2, choices=PowerUnit.choices, default=PowerUnit.WATT
    )
    rated_frequency = models.CharField(
        max_length=10, choices=FrequencyRating.choices, default=FrequencyRating.UNKNOWN
    )
    fuse_rating = models.DecimalField(
        max_digits=6,
        decimal_places=3,
        null=True,
        blank=True,
        validators=[MinValueValidator(MIN_FUSE_CURRENT), MaxValueValidator(MAX_FUSE_CURRENT)],
        help_text="Fuse rating [A].",
    )
    fuse_type = models.CharField(max_length=10, choices=FuseType.choices, default=FuseType.UNKNOWN)
    voltage_selector_as_found = models.CharField(max_length=100, blank=True)
    voltage_selector_setting = models.DecimalField(
        max_digits=6,
        decimal_places=1,
        null=True,
        blank=True,
        validators=[MinValueValidator(MIN_RATED_VOLTAGE), MaxValueValidator(MAX_RATED_VOLTAGE)],
        help_text="The mains voltage the unit's voltage selector is set to [V RMS]; when given, "
        "it decides which rig voltages the unit may be powered up on.",
    )
    construction = models.CharField(
        max_length=30, choices=Construction.choices, default=Construction.UNKNOWN
    )
    protection_class = models.CharField(
        max_length=10, choices=ProtectionClass.choices, default=ProtectionClass.UNKNOWN
    )
    cord = models.CharField(max_length=12, choices=Cord.choices, default=Cord.UNKNOWN)
    created_at = models.DateTimeField(auto_now_add=True)
    updated_at = models.DateTimeField(auto_now=True)

    class Meta:
        ordering = ["maker", "model_name", "id"]
        indexes = [models.Index(fields=["serial"])]

    def __str__(self) -> str:
        return " ".join(part for part in (self.maker, self.model_name, self.serial) if part)

    @property
    def nameplate_known(self) -> bool:
        """True when the nameplate's voltage and power were legible and recorded."""
        return self.rated_voltage is not None and self.rated_power is not None

    @property
    def chassis_may_be_live(self) -> bool:
        """True when the chassis may sit at mains potential: test only through isolation."""
        return self.construction in LIVE_CHASSIS_CONSTRUCTIONS


class JobState(models.TextChoices):
    RECEIVED = "received", "Received"
    DIAGNOSING = "diagnosing", "Diagnosing"
    AWAITING_APPROVAL = "awaiting_approval", "Awaiting customer approval"
    REPAIRING = "repairing", "Repairing"
    TESTING = "testing", "Testing"
    READY = "ready", "Ready for collection"
    RETURNED = "returned", "Returned to customer"
    ON_HOLD = "on_hold", "On hold"
    DECLINED = "declined", "Declined by customer"


class HoldReason(models.TextChoices):
    WAITING_FOR_PARTS = "waiting_for_parts", "Waiting for parts"
    WAITING_FOR_CUSTOMER = "waiting_for_customer", "Waiting for the customer"
    OTHER = "other", "Other (see the note)"


class Decision(models.TextChoices):
    APPROVED = "approved", "Approved"
    DECLINED = "declined", "Declined"


class DecisionMethod(models.TextChoices):
    IN_PERSON = "in_person", "In person at the desk"
    PHONE = "phone", "By phone"
    EMAIL = "email", "By email"
    MESSAGE = "message", "By text message"
    WRITTEN = "written", "In writing (letter or signed form)"
    # Only for approvals kept from before the method was recorded; the API never offers it.
    NOT_RECORDED = "not_recorded", "Not recorded"


# The ways of answering the desk may record now.
RECORDABLE_METHODS = tuple(m for m in DecisionMethod if m != DecisionMethod.NOT_RECORDED)
RECORDABLE_METHOD_CHOICES = [(m.value, m.label) for m in RECORDABLE_METHODS]


class JobNumberCounter(YearCounter):
    """The last job number handed out in a year."""


class Job(Versioned):
    """One repair of one unit, from intake to return."""

    number = models.CharField(max_length=20, unique=True, editable=False)
    unit = models.ForeignKey(Unit, on_delete=models.PROTECT, related_name="jobs")
    complaint = models.TextField(max_length=4000)
    condition_at_intake = models.TextField(
        blank=True, max_length=4000, help_text="The unit's condition as it came in for this job."
    )
    received_on = models.DateField(default=timezone.localdate)
    promised_on = models.DateField(null=True, blank=True)
    assigned_technician = models.ForeignKey(
        settings.AUTH_USER_MODEL,
        on_delete=models.PROTECT,
        null=True,
        blank=True,
        related_name="assigned_jobs",
    )
    estimate = models.DecimalField(
        max_digits=9,
        decimal_places=2,
        null=True,
        blank=True,
        validators=[MinValueValidator(Decimal("0"))],
        help_text="Estimated price in the shop's currency.",
    )
    approval = models.ForeignKey(
        "CustomerDecision",
        on_delete=models.PROTECT,
        null=True,
        blank=True,
        editable=False,
        related_name="+",
        help_text="The customer's approval the current work rests on; cleared when the "
        "estimate rises above the approved figure.",
    )
    state = models.CharField(
        max_length=20, choices=JobState.choices, default=JobState.RECEIVED, editable=False
    )
    held_from = models.CharField(
        max_length=20,
        choices=JobState.choices,
        blank=True,
        editable=False,
        help_text="The state a job on hold returns to.",
    )
    ready_override = models.TextField(
        blank=True,
        max_length=2000,
        editable=False,
        help_text="A lead's stated reason for moving the job to ready without a passed test.",
    )
    ready_override_by = models.ForeignKey(
        settings.AUTH_USER_MODEL,
        on_delete=models.PROTECT,
        null=True,
        blank=True,
        editable=False,
        related_name="+",
    )
    hold_reason = models.CharField(
        max_length=30, choices=HoldReason.choices, blank=True, editable=False
    )
    hold_note = models.TextField(max_length=2000, blank=True, editable=False)
    created_at = models.DateTimeField(auto_now_add=True)
    updated_at = models.DateTimeField(auto_now=True)

    class Meta:
        ordering = ["-received_on", "-id"]
        indexes = [
            # Both match the default ordering, with and without a state filter, so a page of
            # the newest jobs walks an index instead of sorting the whole table.
            models.Index(fields=["state", "-received_on", "-id"], name="job_state_newest_first"),
            models.Index(fields=["-received_on", "-id"], name="job_newest_first"),
        ]

    def __str__(self) -> str:
        return self.number

    def clean(self) -> None:
        if self.promised_on and self.received_on and self.promised_on < self.received_on:
            raise ValidationError({"promised_on": "The promised date is before the received date."})


class JobMove(AppendOnly):
    """A record of one change of a job's state: who, when, from, to and why."""

    job = models.ForeignKey(Job, on_delete=models.CASCADE, related_name="moves")
    from_state = models.CharField(max_length=20, choices=JobState.choices)
    to_state = models.CharField(max_length=20, choices=JobState.choices)
    moved_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+"
    )
    moved_at = models.DateTimeField(default=timezone.now)
    note = models.TextField(blank=True, max_length=2000)

    class Meta:
        ordering = ["moved_at", "id"]

    def __str__(self) -> str:
        return f"{self.job_id}: {self.from_state} -> {self.to_state}"


class CustomerDecision(AppendOnly):
    """The customer's answer to an estimate, as the desk recorded it: approved or declined."""

    job = models.ForeignKey(Job, on_delete=models.PROTECT, related_name="decisions")
    decision = models.CharField(max_length=10, choices=Decision.choices)
    method = models.CharField(max_length=20, choices=DecisionMethod.choices)
    customer_name = models.CharField(
        max_length=200, blank=True, help_text="Who answered for the customer, if not the owner."
    )
    estimate = models.DecimalField(
        max_digits=9,
        decimal_places=2,
        null=True,
        blank=True,
        validators=[MinValueValidator(Decimal("0"))],
        help_text="The estimate the customer answered [shop currency].",
    )
    recorded_by = models.ForeignKey(
        settings.AUTH_USER_MODEL,
        on_delete=models.PROTECT,
        null=True,
        blank=True,
        related_name="+",
        help_text="The staff member who recorded the answer (blank only for older records).",
    )
    decided_at = models.DateTimeField(default=timezone.now)
    note = models.TextField(blank=True, max_length=2000)

    class Meta:
        ordering = ["decided_at", "id"]

    def __str__(self) -> str:
        return f"{self.job_id}: {self.decision} ({self.method})"


class RepairStep(AppendOnly):
    """One thing done to a job. A correction is a new step that names the step it corrects."""

    job = models.ForeignKey(Job, on_delete=models.PROTECT, related_name="steps")
    technician = models.ForeignKey(
        settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="repair_steps"
    )
    performed_at = models.DateTimeField(default=timezone.now)
    action = models.TextField(max_length=4000)
    parts = models.JSONField(default=list, blank=True)
    minutes = models.PositiveIntegerField(
        default=0, validators=[MaxValueValidator(MAX_STEP_MINUTES)]
    )
    corrects = models.ForeignKey(
        "self", on_delete=models.PROTECT, null=True, blank=True, related_name="corrections"
    )
    created_at = models.DateTimeField(auto_now_add=True)

    class Meta:
        ordering = ["performed_at", "id"]

    def __str__(self) -> str:
        return f"{self.job_id}: {self.action[:40]}"


def evidence_path(instance: Evidence, filename: str) -> str:
    """A generated storage key: never the client's name or path."""
    return f"evidence/{instance.job_id}/{uuid.uuid4().hex}{instance.extension}"


class Evidence(AppendOnly):
    """A file attached to a job: photo, short video, scope capture, PDF, CSV log or text."""

    job = models.ForeignKey(Job, on_delete=models.PROTECT, related_name="evidence")
    step = models.ForeignKey(
        RepairStep,
        on_delete=models.PROTECT,
        null=True,
        blank=True,
        related_name="evidence",
        help_text="The repair step this file shows, if any (a step of the same job).",
    )
    caption = models.CharField(max_length=500, blank=True, help_text="What the file shows.")
    file = models.FileField(upload_to=evidence_path, max_length=255)
    label = models.CharField(max_length=255, blank=True, help_text="The client's file name.")
    content_type = models.CharField(max_length=100)
    extension = models.CharField(max_length=10)
    size = models.PositiveBigIntegerField()
    sha256 = models.CharField(max_length=64)
    uploaded_by = models.ForeignKey(
        settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="+"
    )
    uploaded_at = models.DateTimeField(default=timezone.now)

    class Meta:
        ordering = ["uploaded_at", "id"]
        verbose_name_plural = "evidence"
        constraints = [
            models.UniqueConstraint(fields=["job", "sha256"], name="evidence_unique_per_job")
        ]

    def __str__(self) -> str:
        return self.label or self.file.name
