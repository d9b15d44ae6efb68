"""Lamp advice: which of the rig's lamps, or banks of them, to power a declared load through.

The choice is a trade-off. A small lamp caps a fault's current lower (a dead short draws only
the lamp's own current), but it drops more volts on a healthy unit, which then runs starved and
may look faulty. A large lamp lets a healthy unit reach nearly the full source, but then the
unit's volts barely move when its draw doubles, so a fault cannot be told from a healthy unit
within the meter's uncertainty. The advice keeps the lamps that let a healthy unit reach
``min_load_fraction`` of the source *and* can still tell a doubling of draw, and among those
prefers the lowest fault current.
"""

from dataclasses import dataclass

import numpy as np

from shop.physics.circuit import (
    DEFAULT_FREQUENCY,
    check_frequency,
    check_load,
    check_source_resistance,
    check_voltage,
    solve_series,
    unit_operating_point,
)
from shop.physics.judgement import METER_ABSOLUTE_ACCURACY, METER_RELATIVE_ACCURACY
from shop.physics.loads import ResistiveLoad
from shop.physics.switch_mode import CANNOT_RUN_SENTENCE

# A healthy unit should get at least three quarters of the source through the lamp, or it may
# not start or may look faulty (common practice, no source).
ADVICE_MIN_LOAD_FRACTION = 0.75
# A lamp can tell a fault when doubling the draw moves the unit's volts by at least twice the
# meter's uncertainty: the judgement's own limit (MIN_SENSITIVITY_RATIO, 1x) leaves no room for
# the band's lamp and load tolerances, so the advice asks for a margin (common practice, no
# source).
ADVICE_MIN_SENSITIVITY_RATIO = 2.0
# A lamp rated below this fraction of the source would see nearly the whole source on a short.
ADVICE_MIN_RATED_VOLTAGE_FRACTION = 0.9

SUITABLE = "suitable"
TOO_SMALL = "too_small"
TOO_LARGE = "too_large"
UNDER_RATED = "under_rated"
SUITABILITIES = (SUITABLE, TOO_SMALL, TOO_LARGE, UNDER_RATED)  # in ranking order


@dataclass(frozen=True)
class LampAdvice:
    """One candidate lamp (or bank) for a declared load, ranked.

    Attributes
    ----------
    rank : int
        1 for the lamp to use.
    index : int
        Position of the lamp in the candidates given.
    label : str
        The lamp in words.
    suitability : str
        One of ``SUITABILITIES``.
    fault_current : float
        Current a dead short would draw through the lamp at full source [A].
    load_voltage : float
        Volts a healthy unit of the declared load gets at full source [V].
    load_fraction : float
        ``load_voltage`` as a fraction of the source voltage.
    sensitivity : float
        How far a doubling of draw moves the unit's volts at full source [V].
    meter_uncertainty : float
        The voltmeter's uncertainty at the healthy unit's volts [V].
    lamp_glow : str
        The lamp's glow class with a healthy unit at full source.
    reason : str
        Why, in a sentence with the numbers.
    """

    rank: int
    index: int
    label: str
    suitability: str
    fault_current: float
    load_voltage: float
    load_fraction: float
    sensitivity: float
    meter_uncertainty: float
    lamp_glow: str
    reason: str


def lamp_label(lamp):
    """The lamp (or bank) in words, e.g. ``"60 W 120 V gas lamp"``.

    Parameters
    ----------
    lamp : Lamp or LampBank

    Returns
    -------
    str
    """
    members = getattr(lamp, "lamps", None)
    if members is None:
        return f"{lamp.rated_power:g} W {lamp.rated_voltage:g} V {lamp.fill} lamp"
    powers = " + ".join(f"{member.rated_power:g} W" for member in members)
    return f"bank of {powers} lamps ({lamp.rated_voltage:g} V)"


def _check_non_negative(value, name):
    number = float(value)
    if not np.isfinite(number) or number < 0:
        raise ValueError(f"{name} must be a non-negative finite number (got {value!r})")
    return number


def _full_source_figures(lamp, load, source, source_resistance, frequency):
    """Fault current [A], healthy and doubled unit volts [V] and the lamp's glow at full source."""
    _, fault = unit_operating_point(lamp, ResistiveLoad(0.0), source, source_resistance, frequency)
    result = solve_series(
        lamp, load.scaled(np.array([1.0, 2.0])), source, source_resistance, frequency
    )
    return (
        float(fault),
        float(result.load_voltage[0]),
        float(result.load_voltage[1]),
        str(result.glow[0]),
    )


def advise_lamp(
    load,
    lamps,
    source_voltage,
    *,
    source_resistance=0.0,
    frequency=DEFAULT_FREQUENCY,
    labels=None,
    meter_relative_accuracy=METER_RELATIVE_ACCURACY,
    meter_absolute_accuracy=METER_ABSOLUTE_ACCURACY,
    min_load_fraction=ADVICE_MIN_LOAD_FRACTION,
    min_sensitivity_ratio=ADVICE_MIN_SENSITIVITY_RATIO,
):
    """Rank the rig's lamps (and banks) for powering up a unit of the declared load.

    Parameters
    ----------
    load : Load
        The declared load (``shop.physics.loads``).
    lamps : sequence of Lamp or LampBank
        The candidates: single lamps, and banks for sockets switched in parallel.
    source_voltage : float
        The full source the test will reach, normally the rig's nominal mains [V].
    source_resistance : float, default 0.0
        Resistance of the rig's windings [ohm].
    frequency : float, default 60.0
        Source frequency [Hz].
    labels : sequence of str, optional
        Names for the candidates; default from :func:`lamp_label`.
    meter_relative_accuracy, meter_absolute_accuracy : float
        Voltmeter uncertainty, ``relative * reading + absolute`` [fraction, V].
    min_load_fraction : float, default ``ADVICE_MIN_LOAD_FRACTION`` (0.75)
        Least fraction of the source a healthy unit should get.
    min_sensitivity_ratio : float, default ``ADVICE_MIN_SENSITIVITY_RATIO`` (2.0)
        Least ratio of sensitivity to meter uncertainty for a lamp to tell a fault.

    Returns
    -------
    list of LampAdvice
        Best first: suitable lamps by rising fault current, then lamps too
        small (by falling unit volts), too large (by falling sensitivity), and
        rated below the source.

    Notes
    -----
    Per candidate, at full source: the fault current is the current through
    a dead short (``ResistiveLoad(0.0)``), the lamp alone limiting it; the
    unit volts and glow are ``solve_series`` for the declared load; the
    sensitivity is the fall of unit volts when the draw doubles
    (``load.scaled(2)``).
    """
    check_load(load)
    source = check_voltage(source_voltage, "source_voltage")
    if source.ndim != 0 or source <= 0:
        raise ValueError(f"source_voltage must be one positive number of volts (got {source})")
    source = float(source)
    source_resistance = check_source_resistance(source_resistance)
    frequency = check_frequency(frequency)
    meter_relative_accuracy = _check_non_negative(
        meter_relative_accuracy, "meter_relative_accuracy"
    )
    meter_absolute_accuracy = _check_non_negative(
        meter_absolute_accuracy, "meter_absolute_accuracy"
    )
    min_load_fraction = _check_non_negative(min_load_fraction, "min_load_fraction")
    min_sensitivity_ratio = _check_non_negative(min_sensitivity_ratio, "min_sensitivity_ratio")
    lamps = list(lamps)
    if not lamps:
        raise ValueError("lamps must hold at least one candidate lamp or bank")
    labels = [lamp_label(lamp) for lamp in lamps] if labels is None else list(labels)
    if len(labels) != len(lamps):
        raise ValueError(f"labels must name every lamp ({len(lamps)} lamps, {len(labels)} labels)")
    declared = f"{float(np.max(load.rated_power)):.3g} W"

    entries = []
    for index, (lamp, label) in enumerate(zip(lamps, labels, strict=True)):
        under_rated = lamp.rated_voltage < ADVICE_MIN_RATED_VOLTAGE_FRACTION * source
        try:
            fault, volts, doubled, glow = _full_source_figures(
                lamp, load, source, source_resistance, frequency
            )
        except ValueError:
            if not under_rated:
                raise
            # Beyond the lamp's table: it would burn out; there are no figures to give.
            fault = volts = doubled = np.nan
            glow = "bright"
        cannot_run = np.isnan(volts) and not under_rated
        # A doubling that leaves the unit no operating point stops it: its volts collapse.
        sensitivity = volts if np.isnan(doubled) else volts - doubled
        uncertainty = meter_relative_accuracy * volts + meter_absolute_accuracy
        fraction = volts / source
        if under_rated:
            suitability = UNDER_RATED
            verdict = (
                f"rated {lamp.rated_voltage:g} V, below the {source:g} V source: a dead "
                "short would put nearly the whole source across it; use lamps rated "
                "for the mains"
            )
            key = fault
        elif cannot_run:
            suitability = TOO_SMALL
            verdict = f"too small: a healthy unit {CANNOT_RUN_SENTENCE}; choose a larger lamp"
            key = np.inf
        elif fraction < min_load_fraction:
            suitability = TOO_SMALL
            verdict = (
                f"too small: below the {100 * min_load_fraction:.0f} % a healthy unit "
                "needs, it may look faulty; choose a larger lamp"
            )
            key = -fraction
        elif sensitivity < min_sensitivity_ratio * uncertainty:
            suitability = TOO_LARGE
            verdict = (
                f"too large: under {min_sensitivity_ratio:g}x the meter's "
                f"{uncertainty:.2g} V, a unit drawing twice its load would look healthy; "
                "choose a smaller lamp"
            )
            key = -sensitivity / uncertainty
        else:
            suitability = SUITABLE
            verdict = "suitable"
            key = fault
        if cannot_run:
            reason = f"{label}: a dead short at {source:g} V draws at most {fault:.2g} A; {verdict}"
        else:
            change = (
                "leave it no operating point (it would cycle)"
                if np.isnan(doubled)
                else f"move that by {sensitivity:.2g} V"
            )
            reason = (
                f"{label}: a dead short at {source:g} V draws at most {fault:.2g} A; a "
                f"healthy {declared} unit gets {volts:.3g} V ({100 * fraction:.0f} % of the "
                f"source) and a doubling of its draw would {change}; {verdict}"
            )
        entries.append(
            (
                SUITABILITIES.index(suitability),
                key,
                index,
                dict(
                    index=index,
                    label=label,
                    suitability=suitability,
                    fault_current=fault,
                    load_voltage=volts,
                    load_fraction=fraction,
                    sensitivity=sensitivity,
                    meter_uncertainty=uncertainty,
                    lamp_glow=glow,
                    reason=reason,
                ),
            )
        )
    entries.sort(key=lambda entry: entry[:3])
    advice = [LampAdvice(rank=rank, **fields) for rank, (*_, fields) in enumerate(entries, start=1)]
    if advice[0].suitability == SUITABLE:
        best = advice[0]
        advice[0] = LampAdvice(
            **{
                **best.__dict__,
                "reason": (
                    f"{best.reason}: the lowest fault current of the lamps that let a healthy unit "
                    "run and can still tell a fault"
                ),
            }
        )
    return advice
