"""Lamp advice: which of the rig's lamps, or banks of them, to power a declared load through.

The choice is a trade-off. A small lamp caps a fault's current lower (a dead short draws only
the lamp's own current), but it drops more volts on a healthy unit, which then runs starved and
may look faulty. A large lamp lets a healthy unit reach nearly the full source, but then the
unit's volts barely move when its draw doubles, so a fault cannot be told from a healthy unit
within the band the judgement allows, and a short draws far more than the unit ever should.
Common practice (no source) is to start with a lamp close to the unit's rated draw and go up
one size if a healthy unit will not start or its lamp stays bright. The advice keeps the lamps
that let a healthy unit reach ``min_load_fraction`` of the source, whose fault current stays
within ``max_fault_multiple`` of the smallest such lamp's, and with which the judgement can tell
a doubling of draw from a healthy unit (:func:`shop.physics.judgement.doubling_margin`, the
band rule the verdict uses); among those it prefers the lamp closest to the unit's draw, then
the lowest fault current.
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
from shop.physics.judgement import (
    METER_ABSOLUTE_ACCURACY,
    METER_RELATIVE_ACCURACY,
    doubling_margin,
)
from shop.physics.loads import ResistiveLoad
from shop.physics.switch_mode import CANNOT_RUN_SENTENCE

# A healthy unit should keep at least half the source through the lamp (common practice, no
# source): a lamp of about the unit's own draw leaves a resistive unit about 60 % of it, and
# below half a healthy unit may not start or may look faulty.
ADVICE_MIN_LOAD_FRACTION = 0.5
# A lamp whose dead short draws more than this many times that of the smallest lamp a healthy
# unit runs through (or, if none does, the unit's own rated current) is larger than the job
# needs (common practice, no source: start near the unit's draw and go up a size or two at
# most; a lamp's short-circuit current is about its own rated current).
ADVICE_MAX_FAULT_MULTIPLE = 3.0
# A lamp can tell a fault when doubling the draw moves the unit's volts by at least this
# multiple of what the judgement's band and the meters allow (judgement.doubling_margin): 1 is
# the verdict's own limit; the quarter more leaves room for the few per cent between published
# tungsten tables and between a lamp and its model (common practice, no source).
ADVICE_MIN_SENSITIVITY_RATIO = 1.25
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
    sensitivity_needed : float
        How far a doubling must move the unit's volts to leave a healthy unit's band (lamp
        spread, load tolerance, both meters) [V]: ``judgement.doubling_margin``.
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
    sensitivity_needed: float = float("nan")


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


def _lamp_power(lamp):
    """Rated power of a lamp, or the sum of a bank's [W]."""
    members = getattr(lamp, "lamps", None)
    if members is None:
        return float(lamp.rated_power)
    return float(sum(member.rated_power for member in members))


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
    max_fault_multiple=ADVICE_MAX_FAULT_MULTIPLE,
    source_meter_relative_accuracy=None,
    source_meter_absolute_accuracy=None,
):
    """Rank the rig's lamps (and banks) for powering up a unit of the declared load.

    Parameters
    ----------
    load : Load
        The declared load (``shop.physics.loads``).
    lamps : sequence of Lamp or LampBank
        The candidates: single lamps, and banks for sockets switched in parallel.
    source_voltage : float
        The full source the test will reach, normally the rig's nominal mains [V], ahead of
        the rig's windings.
    source_resistance : float, default 0.0
        Resistance of the rig's windings [ohm].
    frequency : float, default 60.0
        Source frequency [Hz].
    labels : sequence of str, optional
        Names for the candidates; default from :func:`lamp_label`.
    meter_relative_accuracy, meter_absolute_accuracy : float
        Uncertainty of the meter on the unit's volts, ``relative * reading + absolute``
        [fraction, V].
    min_load_fraction : float, default ``ADVICE_MIN_LOAD_FRACTION`` (0.5)
        Least fraction of the source a healthy unit should get.
    min_sensitivity_ratio : float, default ``ADVICE_MIN_SENSITIVITY_RATIO`` (1.25)
        Least ratio of a doubling's shift to what the judgement's band and the meters allow.
    max_fault_multiple : float, default ``ADVICE_MAX_FAULT_MULTIPLE`` (3.0)
        Largest dead-short current, as a multiple of that through the smallest lamp a
        healthy unit runs through (else of the unit's own rated current).
    source_meter_relative_accuracy, source_meter_absolute_accuracy : float, optional
        Uncertainty of the meter on the source [fraction, V]; default the unit meter's.

    Returns
    -------
    list of LampAdvice
        Best first: suitable lamps by closeness of their rated power to the declared draw
        (then by rising fault current), then lamps too small (by falling unit volts), too
        large (by rising fault current), and rated below the source.

    Notes
    -----
    Per candidate, at full source: the fault current is the current through
    a dead short (``ResistiveLoad(0.0)``), the lamp alone limiting it; the
    unit volts and glow are ``solve_series`` for the declared load; the
    sensitivity is the fall of unit volts when the draw doubles
    (``load.scaled(2)``), and ``sensitivity_needed`` what the judgement's band
    and the meters allow (:func:`shop.physics.judgement.doubling_margin`).
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
    max_fault_multiple = _check_non_negative(max_fault_multiple, "max_fault_multiple")
    lamps = list(lamps)
    if not lamps:
        raise ValueError("lamps must hold at least one candidate lamp or bank")
    labels = [lamp_label(lamp) for lamp in lamps] if labels is None else list(labels)
    if len(labels) != len(lamps):
        raise ValueError(f"labels must name every lamp ({len(lamps)} lamps, {len(labels)} labels)")
    rated_power = float(np.max(load.rated_power))
    declared = f"{rated_power:.3g} W"

    figures = []
    for lamp in lamps:
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
        runs = not (under_rated or cannot_run) and volts / source >= min_load_fraction
        figures.append((under_rated, cannot_run, runs, fault, volts, doubled, glow))
    # The fault current of the smallest lamp a healthy unit runs through, else the unit's own
    # rated current: a size or two above it is the most a lamp should allow.
    running = [fault for *_, runs, fault, _, _, _ in figures if runs]
    base_current = min(running) if running else rated_power / source

    entries = []
    for index, (lamp, label) in enumerate(zip(lamps, labels, strict=True)):
        under_rated, cannot_run, runs, fault, volts, doubled, glow = figures[index]
        # A doubling that leaves the unit no operating point stops it: its volts collapse.
        sensitivity = volts if np.isnan(doubled) else volts - doubled
        uncertainty = meter_relative_accuracy * volts + meter_absolute_accuracy
        needed, band_may_cycle = np.nan, False
        if not (under_rated or cannot_run):
            _, needed, band_may_cycle = doubling_margin(
                lamp,
                load,
                source,
                source_resistance=source_resistance,
                frequency=frequency,
                meter_relative_accuracy=meter_relative_accuracy,
                meter_absolute_accuracy=meter_absolute_accuracy,
                source_meter_relative_accuracy=source_meter_relative_accuracy,
                source_meter_absolute_accuracy=source_meter_absolute_accuracy,
            )
        fraction = volts / source
        closeness = abs(np.log(_lamp_power(lamp) / rated_power))
        if under_rated:
            suitability = UNDER_RATED
            verdict = (
                f"rated {lamp.rated_voltage:g} V, below the {source:g} V source: a dead "
                "short would put nearly the whole source across it; use lamps rated "
                "for the mains"
            )
            key = (fault,)
        elif cannot_run:
            suitability = TOO_SMALL
            verdict = f"too small: a healthy unit {CANNOT_RUN_SENTENCE}; choose a larger lamp"
            key = (np.inf,)
        elif not runs:
            suitability = TOO_SMALL
            verdict = (
                f"too small: a healthy unit keeps less than the {100 * min_load_fraction:.0f} "
                "% of the source it needs to start and look healthy; choose a larger lamp"
            )
            key = (-fraction,)
        elif band_may_cycle:
            suitability = TOO_SMALL
            verdict = (
                "too small: a healthy unit drawing a little more than declared, or through a "
                "lamp at the low end of its spread, would cycle through it; choose a larger lamp"
            )
            key = (-fraction,)
        elif not sensitivity >= min_sensitivity_ratio * needed:
            suitability = TOO_LARGE
            verdict = (
                f"too large: a doubling must move the unit by {needed:.2g} V to leave a "
                "healthy unit's band (lamp spread, load tolerance, both meters), so a unit "
                "drawing twice its load could read as healthy; choose a smaller lamp, or "
                "measure the current"
            )
            key = (fault,)
        elif fault > max_fault_multiple * base_current:
            suitability = TOO_LARGE
            verdict = (
                f"too large: a dead short would draw {fault / base_current:.2g} times the "
                f"{base_current:.2g} A of the smallest lamp a healthy unit runs through, more "
                f"than the {max_fault_multiple:g} times a size or two up allows; choose a "
                "smaller lamp"
            )
            key = (fault,)
        else:
            suitability = SUITABLE
            verdict = "suitable"
            key = (closeness, fault)
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
                    sensitivity_needed=float(needed),
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
                    f"{best.reason}: the closest to the unit's {declared} draw of the lamps "
                    "that let a healthy unit run, can tell a doubling of its draw and keep a "
                    "short's current near the unit's own; if a healthy unit will not start or "
                    "the lamp stays bright, go up one size"
                ),
            }
        )
    return advice
