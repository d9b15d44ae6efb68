"""Build the snapshot of everything a certificate states, from the records at issue time."""

from __future__ import annotations

from decimal import Decimal

from django.conf import settings
from django.urls import reverse

from shop.bench.declared_load import physics_load
from shop.bench.models import Instrument, PowerUpTest
from shop.bench.prediction import running_curve
from shop.bench.selectors import calibration_state, healthy_curves, healthy_switch_on
from shop.core.safety import LIVE_CHASSIS_NOTE, caveats
from shop.intake.models import Job

from .outcomes import OUTCOME_HEADLINES, OUTCOME_WORDS

SCHEMA = "certificate/1"
CURVE_POINTS = 41
STATEMENT = (
    "This is a power-up test certificate: a functional check of the unit under a series-lamp "
    "current limiter. It is not an electrical safety inspection or approval."
)
METER_ROLES = (
    ("source_meter", "Source voltmeter"),
    ("load_meter", "Unit voltmeter"),
    ("current_meter", "Ammeter"),
)


def _person(user) -> str:
    return user.get_full_name() or user.get_username()


def _number(value: Decimal | float | None, unit: str) -> str | None:
    if value is None:
        return None
    return f"{Decimal(str(value)).normalize():f} {unit}"


def _unit(job: Job) -> dict:
    unit = job.unit
    fuse = None
    if unit.fuse_rating is not None:
        fuse = f"{_number(unit.fuse_rating, 'A')}, {unit.get_fuse_type_display()}"
    return {
        "category": unit.get_category_display(),
        "maker": unit.maker,
        "model_name": unit.model_name,
        "serial": unit.serial,
        "year": unit.year,
        "rated_voltage": _number(unit.rated_voltage, "V"),
        "rated_power": _number(unit.rated_power, unit.rated_power_unit),
        "rated_frequency": unit.get_rated_frequency_display(),
        "fuse": fuse,
        "construction": unit.get_construction_display(),
        "protection_class": unit.get_protection_class_display(),
        "cord": unit.get_cord_display(),
        "chassis_may_be_live": unit.chassis_may_be_live,
    }


def _instrument(role: str, meter: Instrument) -> dict:
    state = calibration_state(meter)
    counts = f" + {meter.accuracy_counts} counts ({_number(meter.resolution, '')})".rstrip()
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
    rig = test.rig
    source = rig.get_source_kind_display()
    if rig.output_at_full_dial:
        source += f", {_number(rig.output_at_full_dial, 'V')} at full dial"
    isolation = (
        "Isolation transformer"
        + (f", {_number(rig.isolation_rating, 'VA')}" if rig.isolation_rating else "")
        if rig.isolation_transformer
        else "No isolation transformer"
    )
    resistance = _number(rig.internal_resistance, "ohm") + (
        " (measured)" if rig.internal_resistance_measured else " (typical value, not measured)"
    )
    return {
        "name": rig.name,
        "mains_voltage": _number(rig.mains_voltage, "V"),
        "mains_frequency": f"{rig.mains_frequency} Hz",
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


def _declared_load(document: dict) -> dict:
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
    described = physics_load(document).describe()
    return {
        "summary": described["summary"],
        "model": described["model"],
        "assumptions": list(described.get("assumptions", [])),
        "basis": document["basis"].replace("_", " "),
        "configuration": "; ".join(said) or "as received",
    }


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
    live = None
    if test.live_chassis_override:
        live = {"reason": test.live_chassis_override, "by": _person(test.override_by)}
    return {
        "id": test.pk,
        "started_at": test.started_at.isoformat(),
        "closed_at": test.closed_at.isoformat(),
        "technician": _person(test.technician),
        "rig": _rig(test),
        "limiter": _limiter(test),
        "declared_load": _declared_load(test.declared_load),
        "instruments": [_instrument(role, meter) for role, meter in instruments_used(test)],
        "calibration_override": override,
        "live_chassis_override": live,
        "ambient_temperature": f"{test.ambient_temperature:g} K",
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
) -> dict:
    """Everything the certificate states, as plain JSON-ready data."""
    steps = job.steps.select_related("technician").order_by("performed_at", "id")
    return {
        "schema": SCHEMA,
        "paper_size": settings.CERTIFICATE_PAPER_SIZE,
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
        },
        "unit": _unit(job),
        "work_done": [
            {
                "performed_at": step.performed_at.date().isoformat(),
                "technician": _person(step.technician),
                "action": step.action,
                "minutes": step.minutes,
                "parts": [
                    {"part": p["part"], "quantity": f"{p['quantity']:g}", "note": p.get("note", "")}
                    for p in step.parts
                ],
            }
            for step in steps
        ],
        "tests": [_test(test, calibration_override) for test in tests],
        "statement": STATEMENT,
        "caveats": caveats(),
        "live_chassis_note": LIVE_CHASSIS_NOTE if job.unit.chassis_may_be_live else None,
        "signature": {"technician": _person(tests[-1].technician)},
    }
