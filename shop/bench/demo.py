"""Load the demo shop's bench: rigs, lamps, meters, and closed tests from generated readings.

Readings come from `shop.physics.scenarios`, a scalar generator independent of the series
solver that judges them: a real lamp drawn around the nominal one, seeded meter noise.
"""

from __future__ import annotations

from dataclasses import asdict
from datetime import timedelta
from decimal import Decimal

import numpy as np
from django.utils import timezone

from shop.intake.models import Job
from shop.physics.lamp import Lamp as PhysicsLamp
from shop.physics.scenarios import random_perturbed_lamp, readings

from . import services
from .declared_load import physics_load, unit_model_document
from .models import Instrument, Lamp, Rig


def _instruments(entries: list[dict], lead) -> dict[str, Instrument]:
    today = timezone.localdate()
    made = {}
    for entry in entries:
        fields = {k: v for k, v in entry.items() if k not in {"key", "calibration"}}
        instrument = services.instrument_create(actor=lead, **fields)
        calibration = entry["calibration"]
        calibrated_on = today - timedelta(days=calibration["days_ago"])
        services.calibration_record_add(
            instrument=instrument,
            calibrated_on=calibrated_on,
            due_on=calibrated_on + timedelta(days=calibration["valid_days"]),
            reference=calibration["reference"],
            recorded_by=lead,
            paired_readings=[
                {"reference": r, "indicated": i} for r, i in calibration.get("pairs", [])
            ],
        )
        made[entry["key"]] = instrument
    return made


def _rigs(entries: list[dict], meters: dict[str, Instrument], lead) -> dict[str, tuple[Rig, dict]]:
    made = {}
    for entry in entries:
        fields = {
            k: v
            for k, v in entry.items()
            if k not in {"key", "lamps", "lamp_voltage", "bank", "builtin_meter"}
        }
        rig = services.rig_create(
            actor=lead, builtin_meter=meters.get(entry["builtin_meter"]), **fields
        )
        lamps = {
            watts: services.lamp_create(
                actor=lead,
                rig=rig,
                label=f"{watts} W clear",
                technology="tungsten",
                rated_voltage=Decimal(entry["lamp_voltage"]),
                rated_power=Decimal(watts),
            )
            for watts in entry["lamps"]
        }
        services.bank_create(
            actor=lead,
            rig=rig,
            label=" + ".join(f"{w} W" for w in entry["bank"]),
            lamps=[lamps[w] for w in entry["bank"]],
        )
        made[entry["key"]] = (rig, lamps)
    return made


def _generated_readings(lamp: Lamp, rig: Rig, document: dict, entry: dict):
    rng = np.random.default_rng(entry["seed"])
    draw = entry["draw"]
    nominal = PhysicsLamp(float(lamp.rated_voltage), float(lamp.rated_power))
    true_lamp = random_perturbed_lamp(nominal, rng)
    declared = physics_load(document)
    # The unit as it really is: the declared model drawing `draw` times as much (0: open).
    unit = float("inf") if draw == 0 else declared.scaled(draw)
    taken = readings(
        true_lamp,
        unit,
        [float(s) for s in entry["steps"]],
        rng,
        source_resistance=float(rig.internal_resistance),
        frequency=float(rig.mains_frequency),
        with_current=entry.get("with_current", False),
    )
    return [{k: v for k, v in asdict(r).items() if v is not None} for r in taken]


def _declared_load(entry: dict, unit) -> dict | None:
    """The entry's declared load; else, given a bench configuration, the unit's nameplate model
    set up that way (an amplifier with its output loaded); else None (the service's default)."""
    if "declared_load" in entry or "configuration" not in entry:
        return entry.get("declared_load")
    document = unit_model_document(unit)
    document["configuration"] = {**document["configuration"], **entry["configuration"]}
    return document


def load_demo_bench(data: dict, staff: dict, units_by_key: dict) -> list[str]:
    """Create the bench records and close every demo test; return one line per test."""
    lead = next(user for user in staff.values() if user.groups.filter(name="lead").exists())
    meters = _instruments(data["instruments"], lead)
    rigs = _rigs(data["rigs"], meters, lead)
    lines = []
    for entry in data["tests"]:
        rig, lamps = rigs[entry["rig"]]
        lamp = lamps[entry["lamp"]]
        job = Job.objects.filter(unit=units_by_key[entry["unit"]]).latest("id")
        test = services.powerup_open(
            job=job,
            rig=rig,
            lamp=lamp,
            technician=staff[entry["by"]],
            declared_load=_declared_load(entry, job.unit),
            load_meter=meters[entry["meter"]],
            current_meter=meters.get(entry.get("current_meter")),
            notes=f"Demo scenario: {entry['scenario']}.",
        )
        services.readings_add(
            test=test,
            readings=_generated_readings(lamp, rig, test.declared_load, entry),
            actor=staff[entry["by"]],
        )
        verdict = services.powerup_close(test=test, actor=staff[entry["by"]])
        lines.append(f"  job {job.number}: {entry['scenario']} -> {verdict.outcome}")
    return lines
