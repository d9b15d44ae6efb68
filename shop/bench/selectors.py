"""Reads for the bench, shaped so that list and detail pages cost a fixed number of queries."""

from __future__ import annotations

import hashlib
import json
import math
from dataclasses import asdict
from types import SimpleNamespace

import numpy as np
from django.core.cache import cache
from django.db.models import Prefetch, QuerySet
from django.utils import timezone

from shop.core.errors import ApplicationError
from shop.core.safety import caveats
from shop.intake.models import Unit
from shop.physics import PHYSICS_VERSION
from shop.physics.advice import advise_lamp
from shop.physics.materials import data_fingerprint

from . import judging, prediction, switch_on
from .declared_load import physics_load, unit_model_document
from .models import (
    REFUSED_TECHNOLOGIES,
    CalibrationRecord,
    Instrument,
    Lamp,
    LampBank,
    LampTechnology,
    PowerUpTest,
    Reading,
    Rig,
)
from .physics_inputs import limiter_parameters, physics_limiter
from .plot_svg import render_svg
from .services import SOURCE_HEADROOM

METER_FIELDS = ("source_meter", "load_meter", "current_meter")
PLOT_POINTS = 61
PLOT_CACHE_SECONDS = 24 * 3600


def calibration_state(instrument: Instrument) -> dict:
    """The latest due date over the instrument's calibrations, and whether it has passed.

    Reads `instrument.calibrations.all()`, so prefetch it in lists.
    """
    due_dates = [record.due_on for record in instrument.calibrations.all()]
    due_on = max(due_dates) if due_dates else None
    return {"due_on": due_on, "past_due": due_on is None or due_on < timezone.localdate()}


def instrument_list() -> QuerySet[Instrument]:
    return Instrument.objects.prefetch_related("calibrations")


def calibration_list() -> QuerySet[CalibrationRecord]:
    return CalibrationRecord.objects.select_related("instrument", "recorded_by")


def rig_list() -> QuerySet[Rig]:
    return Rig.objects.all()


def lamp_list() -> QuerySet[Lamp]:
    return Lamp.objects.select_related("rig")


def bank_list() -> QuerySet[LampBank]:
    return LampBank.objects.prefetch_related("lamps")


def powerup_list() -> QuerySet[PowerUpTest]:
    meters = [Prefetch(f"{name}__calibrations") for name in METER_FIELDS]
    return PowerUpTest.objects.select_related(
        "job__unit",
        "rig",
        "lamp",
        "bank",
        "technician",
        "opened_by",
        "override_by",
        "verdict",
        *METER_FIELDS,
    ).prefetch_related(*meters)


def reading_list(*, test: PowerUpTest) -> QuerySet[Reading]:
    return Reading.objects.filter(test=test).order_by("sequence")


# Computed reads: predictions, plots and advice (the physics runs in shop.physics) -----------


def _physics_refusal(exc: ValueError, field: str) -> ApplicationError:
    return ApplicationError(
        f"The physics model refuses this input: {exc}.", field=field, code="outside_model"
    )


def healthy_curves(test: PowerUpTest, inputs: dict, points: int) -> dict:
    """The healthy prediction over a sweep to the rig's full source, from a test's inputs."""
    full = test.rig.full_source_voltage
    return prediction.predict(
        limiter=inputs["limiter"],
        declared_load=test.declared_load,
        source_voltages=prediction.sweep(full, points),
        source_resistance=inputs["source_resistance"],
        frequency=inputs["frequency"],
        full_source_voltage=full,
        ambient_temperature=inputs["ambient_temperature"],
    )


def switch_on_source_voltage(inputs: dict) -> float:
    """The source volts a test's switch-on is shown at: the highest reading's (what the unit
    saw), else the rig's mains."""
    sources = [float(reading["source_voltage"]) for reading in inputs["readings"]]
    highest = max(sources, default=0.0)
    return highest if highest > 0 else float(inputs["nominal_source_voltage"])


def healthy_switch_on(inputs: dict) -> dict:
    """A healthy unit's switch-on for a test's inputs (see `switch_on_source_voltage`).

    Raises ValueError where the physics cannot follow the unit in time.
    """
    return switch_on.switch_on_block(
        limiter=inputs["limiter"],
        declared_load=inputs["declared_load"],
        source_voltage=switch_on_source_voltage(inputs),
        source_resistance=inputs["source_resistance"],
        frequency=inputs["frequency"],
        ambient_temperature=inputs["ambient_temperature"],
    )


def _plot_key(test: PowerUpTest, inputs: dict) -> str:
    """A cache key naming everything the plot is drawn from.

    The judgement's inputs (limiter, declared load, rig, meters and every reading), the
    stored verdict if the test is closed, the rig's full source, the title's job number and
    the physics version and data: any edit that could change the picture changes the key.
    """
    drawn_from = {
        "inputs": inputs,
        "verdict": test.verdict.pk if hasattr(test, "verdict") else None,
        "full_source": test.rig.full_source_voltage,
        "test": test.pk,
        "job": test.job.number,
        "physics": [PHYSICS_VERSION, data_fingerprint()],
        "points": PLOT_POINTS,
    }
    text = json.dumps(drawn_from, sort_keys=True, default=str, separators=(",", ":"))
    return "powerup-plot:" + hashlib.sha256(text.encode()).hexdigest()


def powerup_plot(test: PowerUpTest) -> str:
    """The test's SVG plot: the healthy band over a sweep and each reading by its status,
    and under it a healthy unit's switch-on (or a line saying why it is left out).

    Drawn once per set of inputs and kept in the cache: an open test of 10,000 readings
    would otherwise be judged again on every request.
    """
    # The judged fields only, as plain rows: no model instance per reading.
    readings = [
        SimpleNamespace(**row) for row in reading_list(test=test).values(*judging.READING_FIELDS)
    ]
    inputs = judging.verdict_inputs(test, readings)
    key = _plot_key(test, inputs)
    drawn = cache.get(key)
    if drawn is None:
        drawn = _draw_plot(test, readings, inputs)
        cache.set(key, drawn, PLOT_CACHE_SECONDS)
    return drawn


def _draw_plot(test: PowerUpTest, readings: list[SimpleNamespace], inputs: dict) -> str:
    if hasattr(test, "verdict"):
        statuses = [entry["status"] for entry in test.verdict.per_reading]
    elif readings:
        statuses = [item.status for item in judging.judge_inputs(inputs).readings]
    else:
        statuses = []
    curves = healthy_curves(test, inputs, PLOT_POINTS)
    curves.update(prediction.running_curve(curves))
    points = [
        {"source_voltage": r.source_voltage, "load_voltage": r.load_voltage, "status": status}
        for r, status in zip(readings, statuses)
    ]
    starting, refused = None, None
    try:
        starting = healthy_switch_on(inputs)
    except ValueError as exc:
        refused = str(exc)
    title = f"Power-up {test.pk}, job {test.job.number}: unit volts against source volts"
    return render_svg(
        prediction=curves,
        readings=points,
        title=title,
        switch_on=starting,
        switch_on_refused=refused,
    )


def _rig_numbers(data: dict) -> dict:
    if "rig_id" in data:
        rig = data["rig_id"]
        return {
            "rig": rig,
            "mains_voltage": float(rig.mains_voltage),
            "frequency": float(rig.mains_frequency),
            "source_resistance": float(rig.internal_resistance),
            "full": rig.full_source_voltage,
        }
    spec = data["rig"]
    return {
        "rig": None,
        "mains_voltage": spec["mains_voltage"],
        "frequency": float(spec["mains_frequency"]),
        "source_resistance": spec["internal_resistance"],
        "full": spec.get("output_at_full_dial") or spec["mains_voltage"],
    }


def _limiter_numbers(data: dict) -> list[dict]:
    if "lamp_id" in data:
        lamp = data["lamp_id"]
        if lamp.technology in REFUSED_TECHNOLOGIES:
            raise ApplicationError(
                f"Refused: {REFUSED_TECHNOLOGIES[lamp.technology]}.",
                field="lamp_id",
                code="lamp_does_not_limit",
            )
        return limiter_parameters(lamp=lamp)
    if "bank_id" in data:
        return limiter_parameters(bank=data["bank_id"])
    spec = dict(data["lamp"])
    technology = spec.pop("technology")
    if technology in REFUSED_TECHNOLOGIES:
        raise ApplicationError(
            f"Refused: {REFUSED_TECHNOLOGIES[technology]}.",
            field="lamp.technology",
            code="lamp_does_not_limit",
        )
    if technology == LampTechnology.HALOGEN:
        spec["fill"] = "halogen"
    return [{"label": "lamp", **spec}]


def prediction_for_request(data: dict) -> dict:
    """The stateless prediction: curves, band, fault cap, advice on a known rig, caveats."""
    rig = _rig_numbers(data)
    limiter = _limiter_numbers(data)
    source = (
        np.asarray(data["source_voltages"], dtype=float)
        if "source_voltages" in data
        else prediction.sweep(rig["full"], data["points"])
    )
    if source.max() > rig["full"] * SOURCE_HEADROOM:
        raise ApplicationError(
            f"{source.max():g} V is beyond this rig's full source of {rig['full']:g} V.",
            field="source_voltages",
        )
    try:
        answer = prediction.predict(
            limiter=limiter,
            declared_load=data["declared_load"],
            source_voltages=source,
            source_resistance=rig["source_resistance"],
            frequency=rig["frequency"],
            full_source_voltage=rig["full"],
            ambient_temperature=data["ambient_temperature"],
        )
    except ValueError as exc:
        raise _physics_refusal(exc, "lamp") from exc
    warnings = list(data["declared_load"].get("cautions", []))
    if max(item["rated_voltage"] for item in limiter) < rig["mains_voltage"] * 0.9:
        warnings.append(
            "The lamp is rated well below this rig's mains: at full source it "
            "runs above its rating and may fail."
        )
    if answer["cannot_run"]:
        warnings.append(
            "The unit cannot draw its rated power through this lamp at some steps (figures are "
            "null there): expect it to cycle or not start. Use a larger lamp."
        )
    answer["warnings"] = warnings
    answer["switch_on"] = prediction.switch_on_summary(
        limiter=limiter,
        declared_load=data["declared_load"],
        source_voltage=rig["full"],
        source_resistance=rig["source_resistance"],
        frequency=rig["frequency"],
        ambient_temperature=data["ambient_temperature"],
    )
    if rig["rig"] is not None:
        answer["advice"] = _advice_entries(rig["rig"], data["declared_load"])
    return answer


def _advice_entries(rig: Rig, document: dict) -> list[dict]:
    lamps = [lamp for lamp in rig.lamps.all() if lamp.technology not in REFUSED_TECHNOLOGIES]
    banks = list(rig.banks.prefetch_related("lamps"))
    candidates = [(lamp, None, limiter_parameters(lamp=lamp)) for lamp in lamps] + [
        (None, bank, limiter_parameters(bank=bank)) for bank in banks
    ]
    if not candidates:
        return []
    meter = rig.builtin_meter
    options = {}
    if meter is not None:
        options = {
            "meter_relative_accuracy": float(meter.accuracy_percent) / 100,
            "meter_absolute_accuracy": meter.accuracy_counts * float(meter.resolution),
        }
    labels = [lamp.label if lamp else bank.label for lamp, bank, _ in candidates]
    ranked = advise_lamp(
        physics_load(document),
        [physics_limiter(p) for *_, p in candidates],
        float(rig.mains_voltage),
        source_resistance=float(rig.internal_resistance),
        frequency=float(rig.mains_frequency),
        labels=labels,
        **options,
    )
    entries = []
    for item in ranked:
        lamp, bank, _ = candidates[item.index]
        # JSON has no NaN: a figure a lamp cannot give (rated below the source, or a unit that
        # cannot run through it) is null.
        entry = {
            key: None if isinstance(value, float) and not math.isfinite(value) else value
            for key, value in asdict(item).items()
            if key != "index"
        }
        entry.update(lamp_id=lamp.pk if lamp else None, bank_id=bank.pk if bank else None)
        entries.append(entry)
    return entries


def lamp_advice(unit: Unit, rig: Rig) -> dict:
    """Rank the rig's lamps and banks for the unit's nameplate load."""
    document = unit_model_document(unit)
    return {
        "unit": unit.pk,
        "rig": rig.pk,
        "source_voltage": float(rig.mains_voltage),
        "declared_load": document,
        "advice": _advice_entries(rig, document),
        "caveats": caveats(),
    }
