"""Build the snapshot of everything a certificate states, from the records at issue time."""

from __future__ import annotations

from decimal import Decimal

from django.conf import settings
from django.urls import reverse
from django.utils import timezone

from shop.bench.declared_load import physics_load
from shop.bench.models import Instrument, PowerUpTest
from shop.bench.prediction import running_curve
from shop.bench.selectors import calibration_state, healthy_curves, healthy_switch_on
from shop.core.safety import LIVE_CHASSIS_NOTE, caveats
from shop.intake.facts import changed_rule_fields, unit_facts
from shop.intake.models import Job

from .outcomes import OUTCOME_HEADLINES, OUTCOME_WORDS

SCHEMA = "certificate/1"
CURVE_POINTS = 41
STATEMENT = (
    "This is a power-up test certificate: a functional check of the unit under a series-lamp "
    "current limiter. It is not an electrical safety inspection or approval."
)
AMMETER_ROLE = "Ammeter"
METER_ROLES = (
    ("source_meter", "Source voltmeter"),
    ("load_meter", "Unit voltmeter"),
    ("current_meter", AMMETER_ROLE),
)
ZERO_CELSIUS = 273.15  # [K]


def _person(user) -> str:
    return user.get_full_name() or user.get_username()


def _number(value: Decimal | float | None, unit: str) -> str | None:
    if value is None:
        return None
    return f"{Decimal(str(value)).normalize():f} {unit}"


FACT_WORDS = {
    "construction": "construction",
    "protection_class": "protection class",
    "rated_voltage": "rated voltage",
    "rated_power": "rated power",
    "rated_power_unit": "rated power unit",
    "rated_frequency": "rated frequency",
    "voltage_selector_setting": "voltage selector setting",
}


def _fact_words(facts: dict) -> dict:
    """A test's frozen unit facts in the words the certificate prints."""
    selector = facts.get("voltage_selector_setting")
    return {
        "rated_voltage": f"{facts['rated_voltage']} V",
        "rated_power": f"{facts['rated_power']} {facts['rated_power_unit']}",
        "rated_frequency": facts["rated_frequency_display"],
        "voltage_selector": f"{selector} V" if selector is not None else None,
        "construction": facts["construction_display"],
        "protection_class": facts["protection_class_display"],
        "chassis_may_be_live": facts["chassis_may_be_live"],
    }


def _changed_since(tests: list[PowerUpTest], now: dict) -> list[str]:
    """Sentences naming each rule fact the unit record changed after a test froze it."""
    sentences = []
    for test in tests:
        if not test.unit_facts:
            continue
        for name in changed_rule_fields(test.unit_facts, now):
            sentences.append(
                f"Test {test.pk} was judged with {FACT_WORDS[name]} "
                f"{test.unit_facts.get(name)}; the unit record now says {now.get(name)}."
            )
    return sentences


def _unit(job: Job, tests: list[PowerUpTest]) -> dict:
    """The unit as tested: who it is from the record, its construction, class and nameplate as
    frozen by the latest covered test (the record's own where a test froze none)."""
    unit = job.unit
    fuse = None
    if unit.fuse_rating is not None:
        fuse = f"{_number(unit.fuse_rating, 'A')}, {unit.get_fuse_type_display()}"
    now = unit_facts(unit)
    frozen = next((test.unit_facts for test in reversed(tests) if test.unit_facts), None)
    described = _fact_words(frozen or now)
    return {
        "category": unit.get_category_display(),
        "maker": unit.maker,
        "model_name": unit.model_name,
        "serial": unit.serial,
        "year": unit.year,
        "rated_voltage": described["rated_voltage"],
        "rated_power": described["rated_power"],
        "rated_frequency": described["rated_frequency"],
        "voltage_selector": described["voltage_selector"],
        "fuse": fuse,
        "construction": described["construction"],
        "protection_class": described["protection_class"],
        "cord": unit.get_cord_display(),
        "chassis_may_be_live": described["chassis_may_be_live"],
        "facts_as_tested": frozen is not None,
        "changed_since_tested": _changed_since(tests, now),
    }


def _instrument(role: str, meter: Instrument) -> dict:
    state = calibration_state(meter)
    # The counts are of the meter's resolution in the quantity it measured in this role.
    unit = "A" if role == AMMETER_ROLE else "V"
    counts = f" + {meter.accuracy_counts} counts of {_number(meter.resolution, unit)}"
    return {
        "role": role,
        "label": str(meter),
        "response": meter.get_response_display(),
        "accuracy": f"{_number(meter.accuracy_percent, '%')}"
        + (counts if meter.accuracy_counts else ""),
        "calibration_due": state["due_on"].isoformat() if state["due_on"] else None,
        "in_calibration": not state["past_due"],
    }


def instruments_used(test: PowerUpTest) -> list[tuple[str, Instrument]]:
    """The meters a test relied on: its own, or the rig's built-in meter when it named none."""
    used = [
        (words, getattr(test, role))
        for role, words in METER_ROLES
        if getattr(test, role) is not None
    ]
    if (
        not any(
            role in {"source_meter", "load_meter"} and getattr(test, role)
            for role, _ in METER_ROLES
        )
        and test.rig.builtin_meter is not None
    ):
        used.append(("Rig's built-in voltmeter", test.rig.builtin_meter))
    return used


def _rig(test: PowerUpTest) -> dict:
    """The rig as the test used it: nominal mains and isolation as frozen at open."""
    rig = test.rig
    frozen = test.rig_facts or {}
    isolated = frozen.get("isolation_transformer", rig.isolation_transformer)
    source = rig.get_source_kind_display()
    if rig.output_at_full_dial:
        source += f", {_number(rig.output_at_full_dial, 'V')} at full dial"
    isolation = (
        "Isolation transformer"
        + (f", {_number(rig.isolation_rating, 'VA')}" if rig.isolation_rating else "")
        if isolated
        else "No isolation transformer"
    )
    resistance = _number(rig.internal_resistance, "ohm") + (
        " (measured)" if rig.internal_resistance_measured else " (typical value, not measured)"
    )
    return {
        "name": frozen.get("name", rig.name),
        "mains_voltage": _number(frozen.get("mains_voltage", rig.mains_voltage), "V"),
        "mains_frequency": f"{frozen.get('mains_frequency', rig.mains_frequency)} Hz",
        "source": source,
        "isolation": isolation,
        "internal_resistance": resistance,
    }


def _limiter(test: PowerUpTest) -> dict:
    lamps = [test.lamp] if test.lamp else list(test.bank.lamps.all())
    words = [
        f"{_number(lamp.rated_power, 'W')} {_number(lamp.rated_voltage, 'V')} "
        f"{lamp.get_fill_display().lower()} {lamp.get_technology_display().lower()} lamp"
        for lamp in lamps
    ]
    label = test.lamp.label if test.lamp else test.bank.label
    description = words[0] if len(words) == 1 else "in parallel: " + "; ".join(words)
    return {"label": label, "description": description}


def _declared_load(document: dict, unit) -> dict:
    configuration = document.get("configuration") or {}
    said = [
        words
        for key, words in (
            ("valves_pulled", "valves pulled"),
            ("rectifier_pulled", "rectifier pulled"),
            ("dummy_load_on_output", "dummy load on the output"),
        )
        if configuration.get(key)
    ]
    if configuration.get("voltage_selector"):
        said.append(f"voltage selector at {configuration['voltage_selector']}")
    if configuration.get("notes"):
        said.append(configuration["notes"])
    load = physics_load(document)
    described = load.describe()
    return {
        "summary": described["summary"],
        # What the model draws in all, beside what the unit's nameplate declares.
        "model_total_power": f"{float(load.rated_power):.3g} W",
        "nameplate_power": _number(unit.rated_power, unit.rated_power_unit),
        "model": described["model"],
        "assumptions": list(described.get("assumptions", [])),
        "basis": document["basis"].replace("_", " "),
        "configuration": "; ".join(said) or "as received",
    }


def _band_tolerances(settings_used: dict) -> dict | None:
    """The tolerances the healthy band was drawn with, as the judgement recorded them."""
    keys = {
        "load": "load_tolerance",
        "lamp_power": "lamp_power_tolerance",
        "meter_relative": "meter_relative_accuracy",
        "meter_absolute": "meter_absolute_accuracy",
    }
    if not all(key in settings_used for key in keys.values()):
        return None
    return {name: settings_used[key] for name, key in keys.items()}


def _ambient(kelvin: float) -> str:
    """The bench ambient as the shop reads a thermometer, with the kelvin the model used."""
    return f"{kelvin - ZERO_CELSIUS:.1f} \u00b0C ({kelvin:g} K)"


def _switch_on(inputs: dict) -> dict | None:
    """A healthy unit's switch-on at the test's highest source volts, thinned (at most
    ``shop.bench.switch_on.MAX_POINTS`` moments); None where the physics cannot follow it.

    Certificates issued before it was added have no ``switch_on`` key at all.
    """
    try:
        return healthy_switch_on(inputs)
    except ValueError:
        return None


def _test(test: PowerUpTest, override: dict | None) -> dict:
    verdict = test.verdict
    inputs = verdict.inputs
    readings = []
    for reading, judged in zip(
        test.readings.order_by("sequence"), verdict.per_reading, strict=True
    ):
        readings.append(
            {
                "sequence": reading.sequence,
                "source_voltage": reading.source_voltage,
                "load_voltage": reading.load_voltage,
                "current": reading.current,
                "glow_seen": reading.glow_seen,
                "behaviour_seen": reading.behaviour_seen,
                "lamp_bypassed": reading.lamp_bypassed,
                "band_low": judged["load_voltage_low"],
                "band_high": judged["load_voltage_high"],
                "inferred_draw": judged["inferred_draw"],
                "status": judged["status"],
            }
        )
    curves = healthy_curves(test, inputs, CURVE_POINTS)
    cap = curves["fault_current_cap"]
    live = voltage = None
    if test.live_chassis_override:
        live = {"reason": test.live_chassis_override, "by": _person(test.override_by)}
    if test.voltage_override:
        voltage = {"reason": test.voltage_override, "by": _person(test.override_by)}
    return {
        "id": test.pk,
        "started_at": test.started_at.isoformat(),
        "closed_at": test.closed_at.isoformat(),
        "technician": _person(test.technician),
        "rig": _rig(test),
        "limiter": _limiter(test),
        "declared_load": _declared_load(test.declared_load, test.job.unit),
        "band_tolerances": _band_tolerances(inputs.get("settings") or {}),
        "instruments": [_instrument(role, meter) for role, meter in instruments_used(test)],
        "calibration_override": override,
        "live_chassis_override": live,
        "voltage_override": voltage,
        "unit_as_tested": _fact_words(test.unit_facts) if test.unit_facts else None,
        "warnings": list(test.warnings),
        "ambient_temperature": _ambient(test.ambient_temperature),
        "outcome": verdict.outcome,
        "headline": OUTCOME_HEADLINES[verdict.outcome],
        "outcome_words": OUTCOME_WORDS[verdict.outcome],
        "reasons": [{"code": r["code"], "message": r["message"]} for r in verdict.reasons],
        "readings": readings,
        "curve": running_curve(curves),
        "fault_cap": {
            "current": cap["current"],
            "source_voltage": cap["source_voltage"],
            "glow": cap["glow"],
        },
        "switch_on": _switch_on(inputs),
    }


def _part(part: dict) -> dict:
    """A part as the customer reads it: its note only where it was marked for the customer
    (notes are shop-internal by default: stock bins, quotes, suppliers)."""
    note = part.get("note", "") if part.get("note_for_customer") else ""
    return {"part": part["part"], "quantity": f"{part['quantity']:g}", "note": note}


def verification_url(number: str, code: str) -> str:
    path = reverse("certificate-verify", kwargs={"number": number})
    return f"{settings.SHOP_PUBLIC_URL.rstrip('/')}{path}?code={code}"


def build_certificate_snapshot(
    *,
    job: Job,
    tests: list[PowerUpTest],
    number: str,
    code: str,
    issued_by,
    issued_at,
    supersedes: str | None,
    calibration_override: dict | None,
    left_out: list[dict] = (),
) -> dict:
    """Everything the certificate states, as plain JSON-ready data."""
    unit = _unit(job, tests)
    tested_live = any(test.unit_facts.get("chassis_may_be_live") for test in tests)
    ready_override = None
    if job.ready_override:
        ready_override = {"reason": job.ready_override, "by": _person(job.ready_override_by)}
    steps = job.steps.select_related("technician").order_by("performed_at", "id")
    return {
        "schema": SCHEMA,
        "paper_size": settings.CERTIFICATE_PAPER_SIZE,
        "time_zone": settings.TIME_ZONE,
        "shop": {
            "name": settings.SHOP_NAME,
            "address": settings.SHOP_ADDRESS,
            "phone": settings.SHOP_PHONE,
        },
        "certificate": {
            "number": number,
            "issued_at": issued_at.isoformat(),
            "issued_by": _person(issued_by),
            "supersedes": supersedes,
            "verification_code": code,
            "verification_url": verification_url(number, code),
        },
        "customer": {"name": job.unit.owner.name},
        "job": {
            "number": job.number,
            "received_on": job.received_on.isoformat(),
            "complaint": job.complaint,
            "ready_override": ready_override,
        },
        "unit": unit,
        "left_out_tests": list(left_out),
        "work_done": [
            {
                "performed_at": timezone.localtime(step.performed_at).date().isoformat(),
                "technician": _person(step.technician),
                "action": step.action,
                "minutes": step.minutes,
                "parts": [_part(part) for part in step.parts],
            }
            for step in steps
        ],
        "tests": [_test(test, calibration_override) for test in tests],
        "statement": STATEMENT,
        "caveats": caveats(),
        "live_chassis_note": (
            LIVE_CHASSIS_NOTE
            if tested_live or unit["chassis_may_be_live"] or job.unit.chassis_may_be_live
            else None
        ),
        "signature": {"technician": _person(tests[-1].technician)},
    }
