"""The verdict of a power-up test: its inputs as plain numbers, the physics call, the record."""

from __future__ import annotations

import math
from dataclasses import fields

from shop.physics import PHYSICS_VERSION, judgement
from shop.physics.materials import data_fingerprint

from .declared_load import physics_load
from .models import Instrument, PowerUpTest, Reading, Verdict
from .physics_inputs import limiter_parameters, modelled_ambient, physics_limiter

READING_FIELDS = (
    "source_voltage",
    "source_point",
    "load_voltage",
    "current",
    "glow_seen",
    "behaviour_seen",
    "lamp_bypassed",
    "seconds_held",
    "seconds_since_switch_on",
)


def _meter(instrument: Instrument | None) -> dict | None:
    if instrument is None:
        return None
    return {
        "relative": float(instrument.accuracy_percent) / 100,
        "absolute": instrument.accuracy_counts * float(instrument.resolution),
        "response": instrument.response,
        "label": str(instrument),
    }


def verdict_inputs(test: PowerUpTest, readings: list[Reading]) -> dict:
    """Everything the judgement uses, as JSON-ready plain numbers and words.

    The rig's nominal mains and frequency are those frozen when the test opened, and the
    unit facts the test was opened on travel with the verdict.

    Each quantity is judged with the meter that read it: the source with the test's source
    meter, else the rig's built-in meter, else the unit's meter; the unit volts with the
    load meter, else the source meter (one meter read both); the current with the current
    meter. Current read with no current meter recorded has no known response.
    """
    rig = test.rig
    frozen = test.rig_facts or {}
    return {
        "limiter": limiter_parameters(lamp=test.lamp, bank=test.bank),
        "declared_load": test.declared_load,
        "ambient_temperature": test.ambient_temperature,
        "modelled_ambient_temperature": modelled_ambient(test.ambient_temperature),
        "nominal_source_voltage": float(frozen.get("mains_voltage", rig.mains_voltage)),
        "source_resistance": float(rig.internal_resistance),
        "frequency": float(frozen.get("mains_frequency", rig.mains_frequency)),
        "unit_facts": test.unit_facts,
        "warnings": list(test.warnings),
        "voltmeter": _meter(test.load_meter or test.source_meter or rig.builtin_meter),
        "source_meter": _meter(test.source_meter or rig.builtin_meter or test.load_meter),
        "ammeter": _meter(test.current_meter),
        "readings": [{name: getattr(r, name) for name in READING_FIELDS} for r in readings],
    }


def judge_inputs(inputs: dict) -> judgement.Verdict:
    """Call shop.physics.judge on stored inputs."""
    options = {}
    if inputs["voltmeter"]:
        options.update(
            meter_relative_accuracy=inputs["voltmeter"]["relative"],
            meter_absolute_accuracy=inputs["voltmeter"]["absolute"],
            voltmeter_response=inputs["voltmeter"]["response"],
        )
    if inputs.get("source_meter"):
        options.update(
            source_meter_relative_accuracy=inputs["source_meter"]["relative"],
            source_meter_absolute_accuracy=inputs["source_meter"]["absolute"],
            source_meter_response=inputs["source_meter"]["response"],
        )
    if inputs["ammeter"]:
        options.update(
            current_relative_accuracy=inputs["ammeter"]["relative"],
            current_absolute_accuracy=inputs["ammeter"]["absolute"],
            ammeter_response=inputs["ammeter"]["response"],
        )
    else:
        options.update(ammeter_response=judgement.UNKNOWN_RESPONSE)
    return judgement.judge(
        physics_limiter(inputs["limiter"], inputs["ambient_temperature"]),
        physics_load(inputs["declared_load"]),
        [judgement.Reading(**reading) for reading in inputs["readings"]],
        nominal_source_voltage=inputs["nominal_source_voltage"],
        source_resistance=inputs["source_resistance"],
        frequency=inputs["frequency"],
        **options,
    )


def _finite(value):
    """JSON has no infinity: an unbounded draw (a dead short) is stored as null."""
    if isinstance(value, float) and not math.isfinite(value):
        return None
    return value


def verdict_document(verdict: judgement.Verdict) -> dict:
    """The physics verdict as JSON: outcome, reasons and each reading's judgement."""
    per_reading = []
    # Every field is a plain number, word or flag: read them, no deep copy (asdict).
    names = [field.name for field in fields(judgement.ReadingJudgement)]
    for item in verdict.readings:
        entry = {name: _finite(getattr(item, name)) for name in names}
        entry["draw_unbounded"] = math.isinf(item.inferred_draw)
        per_reading.append(entry)
    return {
        "outcome": verdict.outcome,
        "reasons": [
            {"code": r.code, "message": r.message, "reading": r.reading} for r in verdict.reasons
        ],
        "per_reading": per_reading,
        "settings": {key: _finite(value) for key, value in verdict.settings.items()},
    }


def store_verdict(test: PowerUpTest, inputs: dict) -> Verdict:
    document = verdict_document(judge_inputs(inputs))
    verdict = Verdict(
        test=test,
        outcome=document["outcome"],
        reasons=document["reasons"],
        per_reading=document["per_reading"],
        inputs={**inputs, "settings": document["settings"]},
        physics_version=PHYSICS_VERSION,
        data_fingerprint=data_fingerprint(),
    )
    verdict.full_clean()
    verdict.save()
    return verdict
