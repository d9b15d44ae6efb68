"""Predicted curves of a healthy unit through a lamp: the stateless prediction and the plot."""

from __future__ import annotations

import numpy as np

from shop.core.safety import caveats
from shop.physics.circuit import NO_OPERATING_POINT, solve_series
from shop.physics.judgement import LAMP_POWER_TOLERANCE, LOAD_TOLERANCE, lamp_with_spread
from shop.physics.loads import ResistiveLoad

from .declared_load import physics_load
from .physics_inputs import physics_limiter
from .switch_on import switch_on_block

DEFAULT_SWEEP_POINTS = 25
MAX_SWEEP_POINTS = 500
ROUND_DIGITS = 4


def _rounded(values) -> list:
    """JSON-ready values; NaN (no operating point) and infinity become null."""
    array = np.asarray(values)
    if array.dtype.kind in "fc":
        return [round(float(v), ROUND_DIGITS) if np.isfinite(v) else None for v in array]
    return [str(v) for v in array]


def predict(
    *,
    limiter: list[dict],
    declared_load: dict,
    source_voltages,
    source_resistance: float,
    frequency: float,
    full_source_voltage: float,
    ambient_temperature: float = 300.0,
    lamp_power_tolerance: float = LAMP_POWER_TOLERANCE,
    load_tolerance: float = LOAD_TOLERANCE,
) -> dict:
    """What a healthy unit of the declared load shows through the limiter, over a sweep.

    The band spans the lamp's rated-power spread (as the judgement models it) and the declared
    load's uncertainty; the fault cap is the lamp's own current with the unit's terminals
    shorted at full source.
    """
    source = np.asarray(source_voltages, dtype=float)
    lamp = physics_limiter(limiter, ambient_temperature)
    load = physics_load(declared_load)
    healthy = solve_series(lamp, load, source, source_resistance, frequency)
    # The lowest unit volts: the smallest lamp with the heaviest load; the highest: the reverse.
    low = solve_series(
        lamp_with_spread(lamp, 1 - lamp_power_tolerance),
        load.scaled(1 + load_tolerance),
        source,
        source_resistance,
        frequency,
    )
    high = solve_series(
        lamp_with_spread(lamp, 1 + lamp_power_tolerance),
        load.scaled(1 - load_tolerance),
        source,
        source_resistance,
        frequency,
    )
    doubled = solve_series(lamp, load.scaled(2.0), source, source_resistance, frequency)
    short = solve_series(
        lamp, ResistiveLoad(0.0), np.array([full_source_voltage]), source_resistance, frequency
    )
    return {
        "source_voltage": _rounded(source),
        "load_voltage": _rounded(healthy.load_voltage),
        "load_voltage_low": _rounded(low.load_voltage),
        "load_voltage_high": _rounded(high.load_voltage),
        "current": _rounded(healthy.current),
        "lamp_voltage": _rounded(healthy.lamp_voltage),
        "lamp_power": _rounded(healthy.lamp_power),
        "load_power": _rounded(healthy.load_power),
        "filament_temperature": _rounded(healthy.filament_temperature),
        "glow": _rounded(healthy.glow),
        "state": _rounded(healthy.state),
        "sensitivity": _rounded(healthy.load_voltage - doubled.load_voltage),
        "fault_current_cap": {
            "source_voltage": full_source_voltage,
            "current": round(float(short.current[0]), ROUND_DIGITS),
            "lamp_power": round(float(short.lamp_power[0]), 1),
            "glow": str(short.glow[0]),
            "sentence": (
                f"A dead short in the unit would draw at most {float(short.current[0]):.3f} A at "
                f"{full_source_voltage:g} V through this lamp, which would glow "
                f"{short.glow[0]}."
            ),
        },
        "tolerances": {"lamp_power": lamp_power_tolerance, "declared_load": load_tolerance},
        "model": load.describe(),
        "cannot_run": bool(np.any(np.asarray(healthy.state) == NO_OPERATING_POINT)),
        "caveats": caveats(),
    }


CURVE_KEYS = ("source_voltage", "load_voltage", "load_voltage_low", "load_voltage_high")


def running_curve(curves: dict) -> dict:
    """The healthy line and band only at steps where the unit has an operating point.

    A switch-mode unit that cannot draw its power through the lamp has null figures there;
    plots leave those steps out rather than draw a line through them.
    """
    rows = [
        row
        for row in zip(*(curves[key] for key in CURVE_KEYS))
        if all(value is not None for value in row)
    ]
    return {key: [row[i] for row in rows] for i, key in enumerate(CURVE_KEYS)}


def switch_on_summary(**inputs) -> dict | None:
    """Switching the healthy unit on at the crest at `source_voltage`: inrush, settling, glow.

    Takes the keyword arguments of :func:`shop.bench.switch_on.switch_on_block` and answers
    its thinned series and the behaviour in words; None where the physics cannot follow the
    unit in time (today a constant-power unit, whose steady state already says whether it
    runs).
    """
    try:
        return switch_on_block(**inputs)
    except ValueError:
        return None


def sweep(full_source_voltage: float, points: int = DEFAULT_SWEEP_POINTS) -> np.ndarray:
    """Evenly spaced source volts from zero to full source."""
    return np.linspace(0.0, full_source_voltage, points)
