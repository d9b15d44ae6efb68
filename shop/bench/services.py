"""Writes for the bench: rigs, lamps, instruments, power-up tests, readings and verdicts."""

from __future__ import annotations

from datetime import date
from decimal import Decimal

from django.db import transaction
from django.utils import timezone

from shop.core.audit import audit_record
from shop.core.errors import ApplicationError, Conflict, Forbidden
from shop.core.roles import LEAD, TECHNICIAN, has_role
from shop.core.services import create_validated, only_fields, update_versioned
from shop.core.versioning import check_version, versioned_update
from shop.intake.facts import rated_voltage_range, unit_facts
from shop.intake.models import FrequencyRating, Job, JobState, Unit
from shop.physics.lamp import Lamp as PhysicsLamp
from shop.physics.meters import fit_meter_correction
from shop.physics.nameplate import AMPLIFIER_CATEGORIES, LAST_VALVE_YEAR

from . import judging
from .declared_load import unit_model_document, validated_document
from .models import (
    REFUSED_TECHNOLOGIES,
    CalibrationRecord,
    Instrument,
    Lamp,
    LampBank,
    PowerUpTest,
    Reading,
    Rig,
    SourcePoint,
    TestStatus,
)
from .physics_inputs import lamp_parameters

INSTRUMENT_FIELDS = (
    "kind",
    "response",
    "maker",
    "model_name",
    "serial",
    "accuracy_percent",
    "accuracy_counts",
    "resolution",
)
RIG_FIELDS = (
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
)
LAMP_FIELDS = (
    "label",
    "technology",
    "rated_voltage",
    "rated_power",
    "fill",
    "cold_resistance",
    "calibration_points",
)
TEST_FIELDS = (
    "declared_load",
    "ambient_temperature",
    "source_meter",
    "load_meter",
    "current_meter",
    "notes",
)
# Jobs in these states are not on the bench: no power-up test may be opened for them.
# A ready job has passed the readiness gate on its tests: a new test would change that answer.
CLOSED_JOB_STATES = frozenset({JobState.RETURNED, JobState.DECLINED, JobState.READY})
# A reading's source volts may exceed the rig's full output by this factor (meter spread).
SOURCE_HEADROOM = 1.10
# Unit volts may exceed source volts only by meter spread: this fraction plus this many volts.
LOAD_OVER_SOURCE_FRACTION = 0.05
LOAD_OVER_SOURCE_VOLTS = 2.0
MAX_READING_CURRENT = 50.0  # [A]
MAX_READINGS_PER_TEST = 10_000
READING_AUDIT_FIELDS = (
    "source_voltage",
    "source_point",
    "load_voltage",
    "current",
    "glow_seen",
    "behaviour_seen",
    "lamp_bypassed",
)


# Instruments -------------------------------------------------------------------------------


@transaction.atomic
def instrument_create(*, actor, **fields) -> Instrument:
    return create_validated(
        Instrument,
        only_fields(fields, INSTRUMENT_FIELDS),
        actor=actor,
        action="instrument.create",
    )


@transaction.atomic
def instrument_update(
    *, instrument: Instrument, expected_version: int | None, actor, **changes
) -> Instrument:
    return update_versioned(
        instrument,
        expected=expected_version,
        changes=only_fields(changes, INSTRUMENT_FIELDS),
        actor=actor,
        action="instrument.update",
    )


def calibration_check(*, calibrated_on: date, due_on: date, pairs: list[dict]) -> dict:
    """Refuse impossible dates and unfittable pairs; return the fitted correction's fields."""
    if due_on <= calibrated_on:
        raise ApplicationError("The due date must be after the calibration date.", field="due_on")
    if not pairs:
        return {}
    try:
        correction = fit_meter_correction(
            [p["reference"] for p in pairs], [p["indicated"] for p in pairs]
        )
    except (ValueError, KeyError, TypeError) as exc:
        raise ApplicationError(f"Paired readings: {exc}.", field="paired_readings") from exc
    return {
        "correction_gain": correction.gain,
        "correction_offset": correction.offset,
        "largest_residual": correction.largest_residual,
    }


@transaction.atomic
def calibration_record_add(
    *,
    instrument: Instrument,
    calibrated_on: date,
    due_on: date,
    reference: str,
    recorded_by,
    paired_readings=(),
) -> CalibrationRecord:
    """Record a calibration or meter check; with paired readings, fit and keep a correction."""
    pairs = [dict(pair) for pair in paired_readings]
    fields = calibration_check(calibrated_on=calibrated_on, due_on=due_on, pairs=pairs)
    return create_validated(
        CalibrationRecord,
        {
            "instrument": instrument,
            "calibrated_on": calibrated_on,
            "due_on": due_on,
            "reference": reference,
            "paired_readings": pairs,
            "recorded_by": recorded_by,
            **fields,
        },
        actor=recorded_by,
        action="calibration.add",
    )


# Rigs and lamps ----------------------------------------------------------------------------


@transaction.atomic
def rig_create(*, actor, **fields) -> Rig:
    return create_validated(Rig, only_fields(fields, RIG_FIELDS), actor=actor, action="rig.create")


@transaction.atomic
def rig_update(*, rig: Rig, expected_version: int | None, actor, **changes) -> Rig:
    return update_versioned(
        rig,
        expected=expected_version,
        changes=only_fields(changes, RIG_FIELDS),
        actor=actor,
        action="rig.update",
    )


def _check_technology(technology: str) -> None:
    if technology in REFUSED_TECHNOLOGIES:
        raise ApplicationError(
            f"Refused: {REFUSED_TECHNOLOGIES[technology]}. Use a tungsten or halogen "
            "incandescent lamp as a series limiter.",
            field="technology",
            code="lamp_does_not_limit",
        )


def _calibrate(lamp: Lamp) -> None:
    """Fit the lamp model to its measured points or cold resistance, or check its rating."""
    parameters = lamp_parameters(lamp)
    parameters.pop("label")
    for name in ("rated_temperature", "conduction_fraction"):
        parameters.pop(name, None)
    points = [(p["voltage"], p["current"]) for p in lamp.calibration_points] or None
    field = "calibration_points" if points else "cold_resistance"
    try:
        if points or lamp.cold_resistance is not None:
            fit = PhysicsLamp.fit(
                parameters["rated_voltage"],
                parameters["rated_power"],
                points=points,
                cold_resistance=parameters.get("cold_resistance"),
                fill=parameters["fill"],
            )
            lamp.fitted_rated_temperature = float(fit.rated_temperature)
            lamp.fitted_conduction_fraction = float(fit.conduction_fraction)
            lamp.fit_rms_residual = float(fit.rms_residual)
        else:
            field = "rated_voltage"
            PhysicsLamp(**parameters)
            lamp.fitted_rated_temperature = lamp.fitted_conduction_fraction = None
            lamp.fit_rms_residual = None
    except ValueError as exc:
        raise ApplicationError(f"The lamp model refuses this lamp: {exc}.", field=field) from exc


@transaction.atomic
def lamp_create(*, actor, **fields) -> Lamp:
    _check_technology(fields.get("technology", ""))
    lamp = Lamp(**only_fields(fields, ("rig", *LAMP_FIELDS)))
    lamp.full_clean()
    _calibrate(lamp)
    lamp.save()
    audit_record(actor=actor, action="lamp.create", instance=lamp, changes=fields)
    return lamp


@transaction.atomic
def lamp_update(*, lamp: Lamp, expected_version: int | None, actor, **changes) -> Lamp:
    only_fields(changes, LAMP_FIELDS)
    if "technology" in changes:
        _check_technology(changes["technology"])
    locked = Lamp.objects.select_for_update().get(pk=lamp.pk)
    check_version(locked, expected_version)
    for name, value in changes.items():
        setattr(locked, name, value)
    _calibrate(locked)
    fitted = ("fitted_rated_temperature", "fitted_conduction_fraction", "fit_rms_residual")
    return update_versioned(
        locked,
        expected=None,
        changes={**changes, **{f: getattr(locked, f) for f in fitted}},
        actor=actor,
        action="lamp.update",
    )


@transaction.atomic
def bank_create(*, actor, rig: Rig, label: str, lamps: list[Lamp]) -> LampBank:
    if len(lamps) < 2:
        raise ApplicationError("A bank needs at least two lamps.", field="lamps")
    strangers = [lamp.label for lamp in lamps if lamp.rig_id != rig.pk]
    if strangers:
        raise ApplicationError(f"Not on rig {rig.name}: {', '.join(strangers)}.", field="lamps")
    bank = LampBank(rig=rig, label=label)
    bank.full_clean()
    bank.save()
    bank.lamps.set(lamps)
    audit_record(
        actor=actor,
        action="lamp_bank.create",
        instance=bank,
        changes={"rig": rig, "label": label, "lamps": lamps},
    )
    return bank


# Power-up tests ----------------------------------------------------------------------------


def _rating_warnings(rig: Rig, document: dict) -> list[str]:
    """Warn when the declared draw is beyond what the rig's source or isolation can carry."""
    power = document["parameters"].get("power")
    if power is None:
        return []
    voltage = float(rig.mains_voltage)
    warnings = []
    current = power / voltage
    if current > float(rig.source_current_rating):
        warnings.append(
            f"The declared {power:g} W draws about {current:.2f} A at {voltage:g} V, above the "
            f"source's {float(rig.source_current_rating):g} A rating."
        )
    if rig.isolation_transformer and rig.isolation_rating and power > float(rig.isolation_rating):
        warnings.append(
            f"The declared {power:g} W is above the isolation transformer's "
            f"{float(rig.isolation_rating):g} VA rating."
        )
    return warnings


def _frequency_warnings(facts: dict, rig_facts: dict) -> list[str]:
    """A unit built for 60 Hz only, on a 50 Hz rig: its transformer core may saturate."""
    if facts.get("rated_frequency") == FrequencyRating.HZ_60 and rig_facts["mains_frequency"] == 50:
        return [
            f"The unit is rated for 60 Hz and rig {rig_facts['name']} gives 50 Hz: a power "
            "transformer built for 60 Hz draws more magnetising current at 50 Hz and may run "
            "hot or saturate; expect a brighter lamp than the model of a 50 Hz unit."
        ]
    return []


def _may_be_valve_amplifier(facts: dict, document: dict) -> bool:
    if facts.get("category") not in AMPLIFIER_CATEGORIES:
        return False
    valve = document["parameters"].get("valve") if document["kind"] == "nameplate" else None
    if valve is not None:
        return bool(valve)
    year = facts.get("year")
    last = LAST_VALVE_YEAR.get(facts["category"], LAST_VALVE_YEAR["other"])
    return year is None or int(year) <= last


def _output_load_warnings(facts: dict, document: dict) -> list[str]:
    """A valve amplifier powered without a load on its output can flash over its output
    transformer: warn unless the bench configuration says a speaker or dummy load is on."""
    configuration = document.get("configuration") or {}
    connected = configuration.get("output_load_connected") or configuration.get(
        "dummy_load_on_output"
    )
    if (
        connected
        or configuration.get("valves_pulled")
        or not _may_be_valve_amplifier(facts, document)
    ):
        return []
    return [
        "This may be a valve amplifier and no output load is declared: connect a speaker or "
        "dummy load to the output before power is applied, and say so in the declared load's "
        "configuration (output_load_connected)."
    ]


def _test_warnings(rig: Rig, facts: dict, rig_facts: dict, document: dict) -> list[str]:
    """Every warning a test carries: ratings, frequency and a valve amplifier's output load."""
    return (
        _rating_warnings(rig, document)
        + _frequency_warnings(facts, rig_facts)
        + _output_load_warnings(facts, document)
    )


def _check_limiter(rig: Rig, lamp: Lamp | None, bank: LampBank | None) -> None:
    if (lamp is None) == (bank is None):
        raise ApplicationError("Choose either one lamp or one bank.", field="lamp")
    owner = lamp.rig_id if lamp is not None else bank.rig_id
    if owner != rig.pk:
        raise ApplicationError(
            f"That {'lamp' if lamp else 'bank'} is not on rig {rig.name}.",
            field="lamp" if lamp else "bank",
        )
    if lamp is not None:
        _check_technology(lamp.technology)


def rig_facts(rig: Rig) -> dict:
    """The rig facts a test freezes at open: name, nominal mains and isolation."""
    return {
        "name": rig.name,
        "mains_voltage": float(rig.mains_voltage),
        "mains_frequency": int(rig.mains_frequency),
        "isolation_transformer": bool(rig.isolation_transformer),
    }


def _require_lead_override(actor, field: str) -> None:
    if not has_role(actor, LEAD):
        raise Forbidden(f"Only a lead may override this rule ({field}).", field=field)


def _isolation_check(facts: dict, rig_facts: dict, reason: str, actor) -> bool:
    """Whether the isolation rule needed (and got) a lead's override; refuse otherwise."""
    if not facts["chassis_may_be_live"] or rig_facts["isolation_transformer"]:
        return False
    if not reason.strip():
        raise Conflict(
            f"The unit's chassis may be live ({facts['construction_display']}) and rig "
            f"{rig_facts['name']} has no isolation transformer. Use an isolated rig, or a "
            "lead may override with a stated reason (live_chassis_override).",
            field="rig",
            code="isolation_required",
        )
    _require_lead_override(actor, "live_chassis_override")
    return True


def _voltage_check(facts: dict, rig_facts: dict, reason: str, actor) -> bool:
    """Whether the rig's nominal mains is outside the unit's rated range and a lead overrode
    that with a reason; refuse without one."""
    rated = rated_voltage_range(facts)
    if rated is None:
        # No legible nameplate: a lead declared the load, and the voltage has nothing to check.
        return False
    low, high, basis = rated
    mains = Decimal(str(rig_facts["mains_voltage"]))
    if low <= mains <= high:
        return False
    if not reason.strip():
        raise Conflict(
            f"Rig {rig_facts['name']} gives {float(mains):g} V nominal, outside the unit's "
            f"rated {float(low):g}-{float(high):g} V (from its {basis}). Use a rig of the "
            "unit's mains voltage, set the unit's voltage selector to match (a lead records "
            "that on the unit), or a lead may override with a stated reason (voltage_override).",
            field="rig",
            code="voltage_mismatch",
            extra={"rated_range": [float(low), float(high)], "rig_voltage": float(mains)},
        )
    _require_lead_override(actor, "voltage_override")
    return True


def _check_reader(technician) -> None:
    if not has_role(technician, TECHNICIAN, LEAD):
        raise ApplicationError(
            f"{technician.get_username()} is not a technician or lead and cannot take readings.",
            field="technician",
        )


def _check_who_declares(unit, actor) -> None:
    """With no legible nameplate, only a lead declares the load a unit is judged against."""
    if not unit.nameplate_known and not has_role(actor, LEAD):
        raise Conflict(
            f"Unit {unit} has no legible nameplate (rated voltage unknown); only a lead may "
            "declare its load. Ask a lead to open the test or set its declared_load.",
            field="declared_load",
            code="nameplate_unknown",
        )


@transaction.atomic
def powerup_open(
    *,
    job: Job,
    rig: Rig,
    technician,
    actor=None,
    lamp: Lamp | None = None,
    bank: LampBank | None = None,
    declared_load: dict | None = None,
    live_chassis_override: str = "",
    voltage_override: str = "",
    **fields,
) -> PowerUpTest:
    """Open a power-up test for `technician` (who takes the readings), opened by `actor`
    (default: the technician).

    The unit's construction, class and nameplate and the rig's mains and isolation are read
    under row locks and frozen on the test: the isolation rule, the voltage check and the
    judgement use those frozen facts. A live-chassis unit needs isolation, and a rig outside
    the unit's rated voltage is refused, unless the actor is a lead who states a reason.
    """
    actor = actor or technician
    only_fields(
        fields, ("ambient_temperature", "source_meter", "load_meter", "current_meter", "notes")
    )
    job = Job.objects.select_for_update().get(pk=job.pk)
    if job.state in CLOSED_JOB_STATES:
        raise Conflict(
            f"Job {job.number} is {job.state}; no power-up test can be opened.",
            field="job",
            code="job_closed",
        )
    _check_reader(technician)
    _check_limiter(rig, lamp, bank)
    # Lock the unit and the rig: a change to either waits until this test holds its facts.
    unit = Unit.objects.select_for_update().get(pk=job.unit_id)
    rig = Rig.objects.select_for_update().get(pk=rig.pk)
    if declared_load is not None:
        _check_who_declares(unit, actor)
    facts, at_rig = unit_facts(unit), rig_facts(rig)
    isolation_overridden = _isolation_check(facts, at_rig, live_chassis_override, actor)
    voltage_overridden = _voltage_check(facts, at_rig, voltage_override, actor)
    document = (
        validated_document(declared_load)
        if declared_load is not None
        else unit_model_document(unit)
    )
    overridden = isolation_overridden or voltage_overridden
    test = PowerUpTest(
        job=job,
        rig=rig,
        lamp=lamp,
        bank=bank,
        technician=technician,
        opened_by=actor,
        declared_load=document,
        live_chassis_override=live_chassis_override.strip() if isolation_overridden else "",
        voltage_override=voltage_override.strip() if voltage_overridden else "",
        override_by=actor if overridden else None,
        unit_facts=facts,
        rig_facts=at_rig,
        warnings=_test_warnings(rig, facts, at_rig, document),
        **fields,
    )
    test.full_clean()
    test.save()
    audit_record(
        actor=actor,
        action="powerup.open",
        instance=test,
        changes={
            "job": job,
            "rig": rig,
            "lamp": lamp,
            "bank": bank,
            "technician": technician,
            "declared_load": document,
            "live_chassis_override": test.live_chassis_override,
            "voltage_override": test.voltage_override,
            "unit_facts": facts,
            "rig_facts": at_rig,
            **fields,
        },
    )
    return test


def _lock_open(test: PowerUpTest, expected_version: int | None = None) -> PowerUpTest:
    locked = PowerUpTest.objects.select_for_update().get(pk=test.pk)
    if locked.status != TestStatus.OPEN:
        raise Conflict("This test is closed; a correction is a new test.", code="test_closed")
    check_version(locked, expected_version)
    return locked


@transaction.atomic
def powerup_update(
    *, test: PowerUpTest, expected_version: int | None, actor, **changes
) -> PowerUpTest:
    locked = _lock_open(test, expected_version)
    only_fields(changes, TEST_FIELDS)
    if "declared_load" in changes:
        _check_who_declares(locked.job.unit, actor)
        changes["declared_load"] = validated_document(changes["declared_load"])
        changes["warnings"] = _test_warnings(
            locked.rig, locked.unit_facts, locked.rig_facts, changes["declared_load"]
        )
    return update_versioned(
        locked, expected=None, changes=changes, actor=actor, action="powerup.update"
    )


def _reading_from(test: PowerUpTest, sequence: int, data: dict, field_prefix: str) -> Reading:
    rig = test.rig
    data = dict(data)
    dial = data.get("dial_percent")
    if data.get("source_voltage") is None:
        if dial is None:
            raise ApplicationError(
                "Give source_voltage, or dial_percent on a rig with an output-at-100 % figure.",
                field=f"{field_prefix}source_voltage",
            )
        if rig.output_at_full_dial is None:
            raise ApplicationError(
                f"Rig {rig.name} has no output-at-100 % figure; give source_voltage instead.",
                field=f"{field_prefix}dial_percent",
            )
        data["source_voltage"] = float(rig.output_at_full_dial) * dial / 100
        # The dial's figure is the rig's unloaded output: the windings' drop comes after it.
        data.setdefault("source_point", SourcePoint.BEFORE_RIG)
    # A source read without saying where was read where the rig's own meter reads it.
    data.setdefault("source_point", rig.builtin_meter_point)
    limit = rig.full_source_voltage * SOURCE_HEADROOM
    if data["source_voltage"] > limit:
        raise ApplicationError(
            f"{data['source_voltage']:g} V is beyond what rig {rig.name} can give "
            f"({rig.full_source_voltage:g} V at full source).",
            field=f"{field_prefix}source_voltage",
        )
    ceiling = data["source_voltage"] * (1 + LOAD_OVER_SOURCE_FRACTION) + LOAD_OVER_SOURCE_VOLTS
    if data["load_voltage"] > ceiling:
        raise ApplicationError(
            f"The unit cannot read {data['load_voltage']:g} V when the source gives "
            f"{data['source_voltage']:g} V: check which meter is which.",
            field=f"{field_prefix}load_voltage",
        )
    reading = Reading(test=test, sequence=sequence, **data)
    reading.full_clean(exclude=["test"])
    return reading


@transaction.atomic
def readings_add(
    *, test: PowerUpTest, readings: list[dict], actor, field_prefix: str = "readings.{index}."
) -> list[Reading]:
    """Add readings to an open test, all or none; sequences follow the last one taken."""
    locked = _lock_open(test)
    last = locked.readings.order_by("-sequence").values_list("sequence", flat=True).first() or 0
    if last + len(readings) > MAX_READINGS_PER_TEST:
        raise ApplicationError(
            f"A test holds at most {MAX_READINGS_PER_TEST} readings.", field="readings"
        )
    built = [
        _reading_from(locked, last + index + 1, data, field_prefix.format(index=index))
        for index, data in enumerate(readings)
    ]
    Reading.objects.bulk_create(built)
    # New readings are a change of the test: its version (and so its ETag) moves on.
    versioned_update(locked, expected=None, changes={})
    audit_record(
        actor=actor,
        action="readings.add",
        instance=locked,
        changes={
            "sequences": [r.sequence for r in built],
            "readings": [{f: getattr(r, f) for f in READING_AUDIT_FIELDS} for r in built],
        },
    )
    return built


@transaction.atomic
def powerup_close(*, test: PowerUpTest, actor, expected_version: int | None = None):
    """Judge the readings and store the verdict; the test and its readings never change again."""
    locked = _lock_open(test, expected_version)
    readings = list(locked.readings.order_by("sequence"))
    if not readings:
        raise Conflict("A test with no readings cannot be closed.", code="no_readings")
    inputs = judging.verdict_inputs(locked, readings)
    verdict = judging.store_verdict(locked, inputs)
    update_versioned(
        locked,
        expected=None,
        changes={"status": TestStatus.CLOSED, "closed_at": timezone.now(), "closed_by": actor},
        actor=actor,
        action="powerup.close",
    )
    audit_record(
        actor=actor,
        action="verdict.store",
        instance=verdict,
        changes={"outcome": verdict.outcome, "reasons": verdict.reasons},
    )
    return verdict
