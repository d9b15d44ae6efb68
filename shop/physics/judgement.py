"""Judging a power-up test: each reading against what a healthy unit shows through the lamp.

Outcomes
--------
``fail``
    A reading outside its band shows the unit drawing at least
    ``fail_draw_multiple`` (default 2x) of the declared load, or at most
    ``open_draw_multiple`` (default 0.2x: next to nothing, an open fuse,
    switch or winding), even with the meters' uncertainty taken in the
    unit's favour; or the lamp was seen bright where a healthy unit keeps it
    dark or faint.
``marginal``
    No fail, but a reading falls outside its band (the unit draws more or
    less than declared, not certainly beyond those multiples), the glow seen
    is two or more classes off the prediction, or the glow cycled for a unit
    whose model cannot cycle.
``inconclusive``
    Every reading is in band, but none reached ``full_source_fraction``
    (default 0.9) of the nominal mains, or none of those that did could tell a
    doubling of draw from a healthy unit's band (the lamp is too large).
``pass``
    Every reading is in band, the test reached full source, and there a
    doubling of draw would have shown.

Unit volts alone cannot tell an open unit from one drawing a third of its load: with
nothing drawn the lamp stays cold, and a cold filament's few ohms drop only a volt or so at
a fraction of the declared current, within two meter readings' uncertainty. Such a reading
is reported as drawing less than declared, "perhaps nothing at all"; a measured current
settles it.

Reason codes (module constants; each reason carries a sentence with the numbers)
-------------------------------------------------------------------------------
- ``draw_high`` (fail): inferred draw at or above the fail multiple.
- ``draw_near_zero`` (fail): inferred draw at or below the open multiple.
- ``draw_above_band`` (marginal): above the band, below the fail multiple.
- ``draw_below_band`` (marginal): below the band, above the open multiple.
- ``glow_bright_unexpected`` (fail): lamp seen bright, predicted dark or faint.
- ``glow_brighter_than_predicted`` (marginal): two or more classes brighter.
- ``glow_dimmer_than_predicted`` (marginal): two or more classes dimmer.
- ``glow_cycling_unexpected`` (marginal): the glow cycled and the declared
  load model cannot cycle (``load.may_cycle`` is false): an intermittent
  connection, a thermal cut-out, or a unit that is not what was declared.
- ``source_not_full`` (inconclusive): no reading reached full source.
- ``lamp_too_large`` (inconclusive): at full source a doubling of draw moves
  the reading by less than the healthy band's own width (lamp spread, load
  tolerance) plus both meters' uncertainty, so a unit drawing twice its load
  could read in band; the sentence says to use a smaller lamp or measure the
  current.
- ``bypass_without_current`` (inconclusive): the only full-source readings
  were taken with the lamp bypassed and no current measured, so the unit's
  volts follow the source whatever it draws.
- ``load_cannot_run`` (inconclusive): at a reading's source voltage a healthy
  unit of the declared constant-power load has no operating point through the
  lamp (it cycles or does not start), so the reading cannot be judged; the
  sentence adds what the unit's own switch-on there shows (restarting about every
  so many seconds, the glow pulsing, or never starting:
  :mod:`shop.physics.switch_mode_start`).
- ``reading_not_settled`` (inconclusive): the reading was taken later than the
  switch-on the judgement follows (``SWITCH_ON_SECONDS``, three minutes), and a
  healthy unit is still settling then (heaters slower than any valve's).
- ``current_not_judged`` (a note, no change to the outcome): current was read
  on a meter whose response was not recorded, on a unit whose current flows in
  peaks (a rectifier): true-RMS and average-responding meters read it tens of
  per cent apart, so the readings are judged on the unit volts alone.
- ``all_in_band`` (pass).

Readings that give the seconds since switch-on are judged against the switch-on transient
(:func:`shop.physics.transient.switch_on` at the reading's source voltage, the heaters'
warm-up included) when a healthy unit has not settled by then, and against the steady state
otherwise: a valve set read 5-60 s after switch-on is judged against its warm-up. Unit volts
and current are predicted as the meters used would show them: a true-RMS meter the RMS, an
average-responding one the rectified mean times the sine's form factor.
"""

from dataclasses import dataclass

import numpy as np

from shop.physics.circuit import (
    DEFAULT_FREQUENCY,
    NO_OPERATING_POINT,
    OFF,
    STEADY,
    TRUE_RMS,
    bracketed_root,
    check_frequency,
    check_load,
    check_response,
    check_source_resistance,
    meter_readings,
    meter_view,
    solve_bypassed,
    solve_series,
)
from shop.physics.glow import GLOW_CLASSES
from shop.physics.switch_mode import CANNOT_RUN_SENTENCE
from shop.physics.switch_mode_start import CYCLING, DOES_NOT_START
from shop.physics.transient import switch_on

OUTCOMES = ("pass", "marginal", "fail", "inconclusive")
BEHAVIOURS = ("steady", "flash_then_dims", "cycling")

# "Reached full source": the highest source reading must be at least this fraction of the rig's
# nominal mains (at least 90 %: ANSI C84.1 Range A puts 120 V service at
# 114-126 V, 95-105 %, so 90 % of nominal is below any healthy mains).
FULL_SOURCE_FRACTION = 0.9
# A unit drawing twice its declared load is faulty, not merely off its nameplate (common
# practice, no source; nameplates and idle draw are good to tens of per cent, not 2x).
FAIL_DRAW_MULTIPLE = 2.0
# A unit drawing a fifth or less of its declared load is taken as open (common practice, no
# source): a healthy unit idles lower than its nameplate, but not that much lower once the
# declared load is what it should draw as configured on the bench.
OPEN_DRAW_MULTIPLE = 0.2
# Spread of lamp rated power: general-service lamps are made to about +/-5-8 % (from memory);
# 10 % also covers the few-per-cent change of low-voltage current that a +/-100 K spread of
# filament temperature at rating brings. Modelled as the same filament design drawing (1 +/- t)
# times the current at every voltage, which is exact for a lamp of that model with rated power
# scaled by (1 +/- t) and the same rated temperature and conduction fraction.
LAMP_POWER_TOLERANCE = 0.10
# Uncertainty of the declared load, as a fraction of it (common practice, no source).
LOAD_TOLERANCE = 0.20
# A handheld multimeter on AC volts: about +/-(1 % of reading + 5 counts) at 0.1 V resolution
# (typical data-sheet figure, from memory); the same meter reads source and unit volts.
METER_RELATIVE_ACCURACY = 0.01
METER_ABSOLUTE_ACCURACY = 0.5  # [V]
# The same class of meter on AC amps: about +/-(1.5 % + 3 counts) at 1 mA resolution (from
# memory), rounded up for the clamp meters many benches use.
CURRENT_RELATIVE_ACCURACY = 0.02
CURRENT_ABSOLUTE_ACCURACY = 0.005  # [A]
# A reading can tell a fault when a doubling of draw moves it by at least this multiple of what
# the healthy band and the meters allow: the healthy unit's room below its prediction (lamp
# spread, load tolerance, source and unit meters) plus a doubled unit's room above its own (lamp
# spread, both meters). At 1 the two bands just do not overlap, so a doubled unit cannot read in
# band.
MIN_SENSITIVITY_RATIO = 1.0

# Where the source volts were read. Before the rig the reading is the supply ahead of the rig's
# windings (the source resistance lies between it and the lamp); at the rig output, where a
# bench meter or a panel meter usually sits, the windings' drop is already behind the reading
# and the circuit from there is lamp and unit alone. The source is modelled as a sine at the
# point it was read, so a true-RMS and an average-responding meter read it alike.
BEFORE_RIG = "before_rig"
RIG_OUTPUT = "rig_output"
SOURCE_POINTS = (RIG_OUTPUT, BEFORE_RIG)
# A meter whose response (true RMS or average responding) was not recorded.
UNKNOWN_RESPONSE = "unknown"

# Inferred draw is searched between these multiples of the declared load; a reading beyond
# them is reported as 0 (no measurable draw) or inf (a dead short or worse), and one whose
# prediction does not move with the draw as nan.
DRAW_SEARCH_RANGE = (1e-3, 1e3)
DRAW_SEARCH_POINTS = 13  # log-spaced multiples giving each reading a starting bracket
# The draw is polished until the predicted reading matches the measured one to this much on
# the log scale of _draw_scale, about a part in 1e7 of the reading: far below any meter.
DRAW_TOLERANCE = 1e-7

DRAW_HIGH = "draw_high"
DRAW_NEAR_ZERO = "draw_near_zero"
DRAW_ABOVE_BAND = "draw_above_band"
DRAW_BELOW_BAND = "draw_below_band"
GLOW_BRIGHT_UNEXPECTED = "glow_bright_unexpected"
GLOW_BRIGHTER_THAN_PREDICTED = "glow_brighter_than_predicted"
GLOW_DIMMER_THAN_PREDICTED = "glow_dimmer_than_predicted"
GLOW_CYCLING_UNEXPECTED = "glow_cycling_unexpected"
SOURCE_NOT_FULL = "source_not_full"
LAMP_TOO_LARGE = "lamp_too_large"
BYPASS_WITHOUT_CURRENT = "bypass_without_current"
LOAD_CANNOT_RUN = "load_cannot_run"
READING_NOT_SETTLED = "reading_not_settled"
CURRENT_NOT_JUDGED = "current_not_judged"
ALL_IN_BAND = "all_in_band"

# The outcome each reason code leads to; the verdict takes the worst present.
REASON_OUTCOMES = {
    DRAW_HIGH: "fail",
    DRAW_NEAR_ZERO: "fail",
    GLOW_BRIGHT_UNEXPECTED: "fail",
    DRAW_ABOVE_BAND: "marginal",
    DRAW_BELOW_BAND: "marginal",
    GLOW_BRIGHTER_THAN_PREDICTED: "marginal",
    GLOW_DIMMER_THAN_PREDICTED: "marginal",
    GLOW_CYCLING_UNEXPECTED: "marginal",
    SOURCE_NOT_FULL: "inconclusive",
    LAMP_TOO_LARGE: "inconclusive",
    BYPASS_WITHOUT_CURRENT: "inconclusive",
    LOAD_CANNOT_RUN: "inconclusive",
    READING_NOT_SETTLED: "inconclusive",
    # A note: the verdict rests on the unit volts alone, whatever its outcome.
    CURRENT_NOT_JUDGED: "pass",
    ALL_IN_BAND: "pass",
}
OUTCOME_SEVERITY = ("pass", "inconclusive", "marginal", "fail")

IN_BAND = "in_band"
READING_STATUSES = (
    IN_BAND,
    DRAW_ABOVE_BAND,
    DRAW_BELOW_BAND,
    DRAW_HIGH,
    DRAW_NEAR_ZERO,
    LOAD_CANNOT_RUN,
)
# The switch-on is followed this long at most when judging a reading taken during it, the
# heaters' warm-up included (shop.physics.warm_up). Through a lamp a heater settles (current
# within 10 % of steady) in two to three of its time constants: 17-27 s for the default 10 s
# heater of a valve set, 55-84 s for 30 s, the slow end of indirectly heated valves (from
# memory), 110-170 s for a minute (90-130 V through a 100 W lamp, tests/physics/
# test_warm_up.py). A reading later than this while a healthy unit is still unsettled names
# its heaters as slower than any valve's.
SWITCH_ON_SECONDS = 180.0  # [s]
# Draws a reading during the switch-on is placed among (log-spaced multiples of the declared
# load); fewer and narrower than the steady search, since every one is a transient to follow.
SWITCH_ON_DRAWS = np.geomspace(0.1, 10.0, 9)
# A switch-mode unit that cannot run is followed this long from switch-on to see it restart:
# several restarts at the default start delay (shop.physics.switch_mode_start).
CANNOT_RUN_SECONDS = 2.0  # [s]
JUDGED_AGAINST = ("steady_state", "switch_on")
# A predicted reading whose scale value misses the measured one by more than this after the
# draw search lies on the edge of the draws that let the unit run: the reading shows more
# than any running unit of the declared kind can draw.
DRAW_EDGE_RESIDUAL = 1e-3


def _optional_non_negative(value, name, unit):
    if value is None:
        return None
    number = float(value)
    if not np.isfinite(number):
        raise ValueError(f"{name} must be a finite number of {unit} (got {value!r})")
    if number < 0:
        raise ValueError(f"{name} must not be negative (got {number:g} {unit})")
    return number


@dataclass(frozen=True)
class Reading:
    """One step of a power-up test as the technician recorded it.

    Parameters
    ----------
    source_voltage : float
        RMS voltage at the rig's output [V].
    load_voltage : float
        RMS voltage across the unit [V].
    current : float, optional
        RMS current into the unit [A], where it was measured.
    glow_seen : str, optional
        The lamp's glow as seen, one of ``shop.physics.glow.GLOW_CLASSES``.
    behaviour_seen : str, optional
        How the glow behaved, one of ``BEHAVIOURS``: ``steady``,
        ``flash_then_dims`` or ``cycling``.
    lamp_bypassed : bool, default False
        Whether the lamp was switched out (unit straight on the rig).
    seconds_held : float, optional
        How long the step was held [s]; kept for the record.
    seconds_since_switch_on : float, optional
        Time from switch-on to the reading [s]; kept for the record.
    source_point : str, default ``RIG_OUTPUT``
        Where ``source_voltage`` was read, one of ``SOURCE_POINTS``: at the rig's
        output (``"rig_output"``: the rig's windings lie before it) or before the
        rig (``"before_rig"``: the windings lie between it and the lamp).
    """

    source_voltage: float
    load_voltage: float
    current: float | None = None
    glow_seen: str | None = None
    behaviour_seen: str | None = None
    lamp_bypassed: bool = False
    seconds_held: float | None = None
    seconds_since_switch_on: float | None = None
    source_point: str = RIG_OUTPUT

    def __post_init__(self):
        for name, unit in (("source_voltage", "V"), ("load_voltage", "V")):
            if getattr(self, name) is None:
                raise ValueError(f"{name} is required (in {unit})")
            object.__setattr__(self, name, _optional_non_negative(getattr(self, name), name, unit))
        for name, unit in (
            ("current", "A"),
            ("seconds_held", "s"),
            ("seconds_since_switch_on", "s"),
        ):
            object.__setattr__(self, name, _optional_non_negative(getattr(self, name), name, unit))
        if self.glow_seen is not None and self.glow_seen not in GLOW_CLASSES:
            raise ValueError(
                f"glow_seen must be one of {', '.join(GLOW_CLASSES)} (got {self.glow_seen!r})"
            )
        if self.behaviour_seen is not None and self.behaviour_seen not in BEHAVIOURS:
            raise ValueError(
                f"behaviour_seen must be one of {', '.join(BEHAVIOURS)} "
                f"(got {self.behaviour_seen!r})"
            )
        if not isinstance(self.lamp_bypassed, bool | np.bool_):
            raise ValueError(f"lamp_bypassed must be True or False (got {self.lamp_bypassed!r})")
        object.__setattr__(self, "lamp_bypassed", bool(self.lamp_bypassed))
        if self.source_point not in SOURCE_POINTS:
            raise ValueError(
                f"source_point must be one of {', '.join(SOURCE_POINTS)} "
                f"(got {self.source_point!r})"
            )


@dataclass(frozen=True)
class Reason:
    """A machine-readable reason code with a sentence carrying the numbers.

    Attributes
    ----------
    code : str
        One of the reason-code constants of this module.
    message : str
        The sentence for the technician.
    reading : int or None
        Index of the reading it quotes, if any.
    """

    code: str
    message: str
    reading: int | None = None

    @property
    def outcome(self):
        """The outcome this reason leads to."""
        return REASON_OUTCOMES[self.code]


@dataclass(frozen=True)
class ReadingJudgement:
    """One reading against its prediction.

    Attributes
    ----------
    index : int
        Position of the reading in the list judged.
    status : str
        One of ``READING_STATUSES``.
    lamp_bypassed : bool
        Whether it was judged without the lamp.
    measured : str
        What the draw was inferred from: ``"current"`` or ``"load_voltage"``.
    predicted_load_voltage, load_voltage_low, load_voltage_high : float
        Unit volts of a healthy unit and the band around it [V].
    predicted_current, current_low, current_high : float
        Current of a healthy unit and the band around it [A].
    predicted_glow, glow_dimmest, glow_brightest : str
        Glow class of a healthy unit and its range across the band.
    inferred_draw : float
        The draw that reproduces the reading, as a multiple of the declared
        load (0: no measurable draw; inf: a dead short or worse; nan: the
        reading cannot tell, e.g. lamp bypassed with no source resistance and
        no current measured).
    inferred_draw_low, inferred_draw_high : float
        The draws the reading allows within the meters' uncertainty (source
        and unit), as multiples of the declared load.
    sensitivity : float
        Volts at the unit that a doubling of draw would change here [V].
    current_sensitivity : float
        Amperes a doubling of draw would change here [A].
    meter_uncertainty : float
        Uncertainty of the measured quantity here [V or A, as ``measured``].
    sensitive : bool
        Whether a doubling of draw moves the reading out of the healthy band:
        ``sensitivity`` (or ``current_sensitivity``) at least ``sensitivity_needed``.
    predicted_state : str
        What a healthy unit does here, one of ``shop.physics.circuit.OPERATING_STATES``;
        with ``no_operating_point`` the predictions are NaN and the glow words empty.
    may_cycle : bool
        Whether a healthy unit within the band may have no operating point here, so that a
        cycling glow is to be expected.
    judged_against : str
        ``"steady_state"``, or ``"switch_on"`` when taken before a healthy unit settles.
    sensitivity_needed : float
        How far a doubling must move the measured quantity to leave the healthy band [V or
        A]: the band's room below the healthy prediction (lamp spread, load tolerance, both
        meters) plus a doubled unit's room above its own (lamp spread, both meters).
    source_point : str
        Where the source volts were read, one of ``SOURCE_POINTS``.
    """

    index: int
    status: str
    lamp_bypassed: bool
    measured: str
    predicted_load_voltage: float
    load_voltage_low: float
    load_voltage_high: float
    predicted_current: float
    current_low: float
    current_high: float
    predicted_glow: str
    glow_dimmest: str
    glow_brightest: str
    inferred_draw: float
    inferred_draw_low: float
    inferred_draw_high: float
    sensitivity: float
    current_sensitivity: float
    meter_uncertainty: float
    sensitive: bool
    predicted_state: str = STEADY
    may_cycle: bool = False
    judged_against: str = "steady_state"
    sensitivity_needed: float = float("nan")
    source_point: str = RIG_OUTPUT


@dataclass(frozen=True)
class Verdict:
    """The outcome of a power-up test, its reasons and each reading's judgement.

    Attributes
    ----------
    outcome : str
        One of ``OUTCOMES``.
    reasons : tuple of Reason
        Worst first; one per reason code present.
    readings : tuple of ReadingJudgement
        In the order the readings were given.
    settings : dict
        The tolerances and limits the judgement used.
    """

    outcome: str
    reasons: tuple
    readings: tuple
    settings: dict

    @property
    def codes(self):
        """The reason codes, worst first."""
        return tuple(reason.code for reason in self.reasons)


class _SpreadLamp:
    """The same filament design drawing ``factor`` times the current at every lamp voltage."""

    def __init__(self, lamp, factor):
        self.base = lamp
        self.factor = factor
        curve = lamp.curve()
        self._curve = curve._replace(current=curve.current * factor)
        self.max_voltage = lamp.max_voltage

    def curve(self):
        return self._curve

    def current(self, voltage):
        return self.factor * self.base.current(voltage)

    def filament_temperature(self, voltage):
        return self.base.filament_temperature(voltage)

    def glow(self, voltage):
        return self.base.glow(voltage)


def lamp_with_spread(lamp, factor):
    """The lamp as one of its production spread: the same filament design drawing ``factor``
    times the current at every lamp voltage (a rated-power tolerance of ``factor - 1``).

    Parameters
    ----------
    lamp : Lamp or LampBank
        The nominal lamp.
    factor : float
        Multiple of the nominal current [-], e.g. ``1 - LAMP_POWER_TOLERANCE``.

    Returns
    -------
    An object the series solver takes in place of a lamp; the judgement's band uses the same.
    """
    return _SpreadLamp(lamp, factor)


def _on_last_axis(values, mask):
    """Pick the readings in ``mask`` from a per-reading array; leave others to broadcast."""
    values = np.asarray(values)
    if values.ndim and values.shape[-1] == mask.size:
        return values[..., mask]
    return values


def _circuits(bypassed, at_output, source_resistance):
    """Groups of readings solved alike: lamp in or bypassed, source read before or after the rig.

    Read at the rig's output, the windings' drop is already behind the reading: from there the
    circuit is lamp and unit alone, so those readings are solved with no source resistance.
    Yields each group's mask, whether its lamp is bypassed, and its source resistance [ohm].
    """
    for lamp_out in (False, True):
        for output in (False, True):
            mask = (bypassed == lamp_out) & (at_output == output)
            if mask.any():
                yield mask, lamp_out, 0.0 if output else source_resistance


def _predict(
    lamp, load, factor, source_voltage, bypassed, at_output, source_resistance, frequency, responses
):
    """Unit volts, current, glow and state for ``load.scaled(factor)``, lamp in or bypassed."""
    shape = np.broadcast_shapes(np.shape(factor), source_voltage.shape)
    load_voltage = np.empty(shape)
    current = np.empty(shape)
    glow = np.empty(shape, dtype=f"<U{max(map(len, GLOW_CLASSES))}")
    state = np.empty(shape, dtype=f"<U{len(NO_OPERATING_POINT)}")
    for mask, lamp_out, resistance in _circuits(bypassed, at_output, source_resistance):
        solve = solve_bypassed if lamp_out else solve_series
        result = solve(
            lamp,
            load.scaled(_on_last_axis(factor, mask)),
            source_voltage[mask],
            resistance,
            frequency,
        )
        load_voltage[..., mask] = meter_view(
            result.load_voltage, result.average_load_voltage, responses[0]
        )
        current[..., mask] = meter_view(result.current, result.average_current, responses[1])
        glow[..., mask] = result.glow
        state[..., mask] = result.state
    return load_voltage, current, glow, state


def _predict_meters(
    lamp, load, factor, source_voltage, bypassed, at_output, source_resistance, frequency, responses
):
    """Unit volts and current for ``load.scaled(factor)``: what the meters read, no glow."""
    shape = np.broadcast_shapes(np.shape(factor), source_voltage.shape)
    load_voltage = np.empty(shape)
    current = np.empty(shape)
    for mask, lamp_out, resistance in _circuits(bypassed, at_output, source_resistance):
        load_voltage[..., mask], current[..., mask] = meter_readings(
            lamp,
            load.scaled(_on_last_axis(factor, mask)),
            source_voltage[mask],
            resistance,
            frequency,
            lamp_bypassed=lamp_out,
            voltmeter_response=responses[0],
            ammeter_response=responses[1],
        )
    return load_voltage, current


def _band_corners(lamp, load, sources, flags, tolerances, circuit):
    """The healthy band's corners and a doubled unit's, before the unit meter's uncertainty.

    ``sources`` are the source readings' low and high limits [V], ``flags`` the readings'
    lamp-bypassed and read-at-the-rig-output masks, ``tolerances`` the lamp's and the load's,
    ``circuit`` the source resistance [ohm], frequency [Hz] and the meters' responses.

    The lowest unit volts (and highest current) of a healthy unit come from the smallest
    lamp of the spread, the heaviest load within the tolerance and the source reading's low
    (high) limit; the opposite corner gives the other end. A unit drawing twice the declared
    load looks most like a healthy one with the large lamp and the high source reading for
    its volts, and the small lamp and the low source reading for its current.
    """
    source_low, source_high = sources
    lamp_tolerance, load_tolerance = tolerances
    n = source_low.size
    corners_source = np.concatenate([source_low, source_high])
    corners_bypassed = np.concatenate([flags[0], flags[0]])
    corners_at_output = np.concatenate([flags[1], flags[1]])
    heavy_light = np.array([[1.0 + load_tolerance], [1.0 - load_tolerance], [2.0]])
    corners = {}
    for name, factor in (("small", 1.0 - lamp_tolerance), ("large", 1.0 + lamp_tolerance)):
        corners[name] = _predict(
            _SpreadLamp(lamp, factor),
            load,
            heavy_light,
            corners_source,
            corners_bypassed,
            corners_at_output,
            *circuit,
        )
    low, high = slice(0, n), slice(n, 2 * n)
    return {
        "volts_low": corners["small"][0][0, low],
        "volts_high": corners["large"][0][1, high],
        "current_low": corners["small"][1][1, low],
        "current_high": corners["large"][1][0, high],
        "doubled_volts_high": corners["large"][0][2, high],
        "doubled_current_low": corners["small"][1][2, low],
        "glow_brightest": corners["small"][2][0, high],
        "glow_dimmest": corners["large"][2][1, low],
    }


def _widened(edges, meter, ammeter):
    """The corners widened by the unit meters' uncertainty, each away from the prediction.

    ``edges`` holds the band's volts low and high, current low and high, and the doubled
    unit's volts high and current low, in that order.
    """
    volts_low, volts_high, current_low, current_high, doubled_volts_high, doubled_current_low = (
        edges
    )
    volts_low = np.maximum(volts_low - _uncertainty(volts_low, *meter), 0.0)
    volts_high = volts_high + _uncertainty(volts_high, *meter)
    current_low = np.maximum(current_low - _uncertainty(current_low, *ammeter), 0.0)
    current_high = current_high + _uncertainty(current_high, *ammeter)
    # A doubling that stops the unit (no operating point) collapses its volts to nothing.
    doubled_volts_high = np.nan_to_num(doubled_volts_high, nan=0.0)
    doubled_volts_high = doubled_volts_high + _uncertainty(doubled_volts_high, *meter)
    doubled_current_low = np.nan_to_num(doubled_current_low, nan=np.inf)
    with np.errstate(invalid="ignore"):
        doubled_current_low = np.maximum(
            doubled_current_low - _uncertainty(doubled_current_low, *ammeter), 0.0
        )
    return (
        volts_low,
        volts_high,
        current_low,
        current_high,
        doubled_volts_high,
        doubled_current_low,
    )


def _needed(
    volts, amps, volts_low, current_high, doubled_volts_high, doubled_current_low, doubled_stops
):
    """How far a doubling must move the unit volts and the current to leave the healthy band.

    The band's room on that side of the healthy prediction (``volts[0]``, ``amps[0]``), plus
    the doubled unit's room on the other side of its own (``volts[1]``, ``amps[1]``). Both
    include the lamp's spread and both meters (the source reading moves the corners); the
    band's also the declared load's tolerance.
    """
    with np.errstate(invalid="ignore"):
        volts_needed = (volts[0] - volts_low) + np.where(
            doubled_stops, doubled_volts_high, doubled_volts_high - volts[1]
        )
        current_needed = (current_high - amps[0]) + np.where(
            doubled_stops, 0.0, amps[1] - doubled_current_low
        )
    return volts_needed, current_needed


def doubling_margin(
    lamp,
    load,
    source_voltage,
    *,
    source_resistance=0.0,
    frequency=DEFAULT_FREQUENCY,
    source_point=BEFORE_RIG,
    lamp_power_tolerance=LAMP_POWER_TOLERANCE,
    load_tolerance=LOAD_TOLERANCE,
    meter_relative_accuracy=METER_RELATIVE_ACCURACY,
    meter_absolute_accuracy=METER_ABSOLUTE_ACCURACY,
    source_meter_relative_accuracy=None,
    source_meter_absolute_accuracy=None,
):
    """How far a doubling of draw moves a healthy unit's volts, and how far it must move.

    The judgement's own rule for unit volts read with the lamp in circuit, at one source
    voltage: a doubling tells a fault when ``shift >= needed``, so that a unit drawing twice
    its load cannot read inside a healthy unit's band.

    Parameters
    ----------
    lamp : Lamp or LampBank
        The series lamp.
    load : Load
        The declared load.
    source_voltage : float
        The source at ``source_point`` [V].
    source_resistance, frequency, source_point
        As for :func:`judge` and :class:`Reading`.
    lamp_power_tolerance, load_tolerance, meter_relative_accuracy, meter_absolute_accuracy,
    source_meter_relative_accuracy, source_meter_absolute_accuracy
        As for :func:`judge`.

    Returns
    -------
    shift, needed : float
        The fall of the unit's volts from the declared draw to twice it, and the band's room
        below the healthy prediction plus the doubled unit's room above its own [V]; ``shift``
        is the healthy volts where the doubled unit has no operating point. NaN where a
        healthy unit has none.
    band_may_cycle : bool
        Whether a healthy unit within the band (the heavy load, the small lamp, the low
        source reading) has no operating point: it may cycle through this lamp.
    """
    source_resistance = check_source_resistance(source_resistance)
    frequency = check_frequency(frequency)
    if source_point not in SOURCE_POINTS:
        raise ValueError(f"source_point must be one of {', '.join(SOURCE_POINTS)}")
    meter = (float(meter_relative_accuracy), float(meter_absolute_accuracy))
    source_meter = (
        meter[0] if source_meter_relative_accuracy is None else source_meter_relative_accuracy,
        meter[1] if source_meter_absolute_accuracy is None else source_meter_absolute_accuracy,
    )
    source = np.array([float(source_voltage)])
    flags = np.array([False]), np.array([source_point == RIG_OUTPUT])
    responses = (TRUE_RMS, TRUE_RMS)
    volts, amps, _, state = _predict(
        lamp,
        load,
        np.array([[1.0], [2.0]]),
        source,
        *flags,
        source_resistance,
        frequency,
        responses,
    )
    if state[0, 0] == NO_OPERATING_POINT:
        return np.nan, np.nan, True
    span = _uncertainty(source, *source_meter)
    band = _band_corners(
        lamp,
        load,
        (np.maximum(source - span, 0.0), source + span),
        flags,
        (float(lamp_power_tolerance), float(load_tolerance)),
        (source_resistance, frequency, responses),
    )
    band_may_cycle = bool(np.isnan(band["volts_low"][0]))
    names = ("volts_low", "volts_high", "current_low", "current_high")
    edges = tuple(band[name] for name in names + ("doubled_volts_high", "doubled_current_low"))
    ammeter = (CURRENT_RELATIVE_ACCURACY, CURRENT_ABSOLUTE_ACCURACY)
    volts_low, _, _, current_high, doubled_volts_high, doubled_current_low = _widened(
        (np.nan_to_num(edges[0], nan=0.0),) + edges[1:], meter, ammeter
    )
    doubled_stops = np.isnan(volts[1])
    needed, _ = _needed(
        volts,
        amps,
        volts_low,
        current_high,
        doubled_volts_high,
        doubled_current_low,
        doubled_stops,
    )
    shift = np.where(doubled_stops, volts[0], volts[0] - volts[1])
    return float(shift[0]), float(needed[0]), band_may_cycle


def _uncertainty(value, relative, absolute):
    return relative * np.abs(value) + absolute


def _draw_scale(load_voltage, current, source_voltage, by_current):
    """A reading on a scale that rises with the draw, close to linear in the draw's log.

    Unit volts become ``log((V_s - V) / V)`` (about the log of the lamp-to-unit impedance
    ratio, so nearly proportional to the log of the draw), current ``log(I)``. Readings at or
    beyond the source voltage map to ``-inf`` (no draw), zero volts to ``+inf``.
    """
    with np.errstate(divide="ignore", invalid="ignore"):
        drop = np.maximum(source_voltage - load_voltage, 0.0)
        volts = np.log(drop) - np.log(load_voltage)
        amps = np.log(current)
    return np.where(by_current, amps, volts)


def _infer_draw(
    lamp,
    load,
    source_voltage,
    measured,
    by_current,
    bypassed,
    at_output,
    grid_voltage,
    grid_current,
    source_resistance,
    frequency,
    responses,
):
    """The multiple of the declared load that reproduces each reading (vectorised).

    The predicted reading is monotone in the draw (unit volts fall, current rises), so each
    reading is bracketed on the log-spaced grid of draws and polished by Illinois false
    position in the log of the draw, every reading at once, on ``_draw_scale``.
    """
    log_grid = np.log(np.geomspace(*DRAW_SEARCH_RANGE, DRAW_SEARCH_POINTS))
    rising = _draw_scale(grid_voltage, grid_current, source_voltage, by_current)
    # A draw with no operating point (a constant-power unit that cannot run) lies beyond
    # every reading a running unit can give.
    rising = np.where(np.isnan(grid_voltage), np.inf, rising)
    target = _draw_scale(measured, measured, source_voltage, by_current)
    with np.errstate(invalid="ignore"):
        # A reading whose prediction does not move with the draw cannot tell it.
        flat = ~(rising[-1] - rising[0] > DRAW_TOLERANCE)
        reached = rising >= target
    never = ~reached.any(axis=0) & ~flat
    below_all = reached[0] & ~flat
    interior = ~never & ~below_all & ~flat
    with np.errstate(invalid="ignore"):
        offset = np.where(interior, rising - target, 0.0)
    index = np.clip(reached.argmax(axis=0), 1, log_grid.size - 1)
    columns = np.arange(measured.size)
    lower = np.where(interior, log_grid[index - 1], log_grid[0])
    upper = np.where(interior, log_grid[index], log_grid[0])
    f_lower = offset[index - 1, columns]
    f_upper = offset[index, columns]
    # First estimate: the inverse quadratic through the grid points around each bracket.
    middle = np.clip(index, 1, log_grid.size - 2)
    nodes = np.stack([middle - 1, middle, middle + 1])
    values = offset[nodes, columns]
    logs = log_grid[nodes]
    with np.errstate(divide="ignore", invalid="ignore"):
        start = sum(
            logs[i]
            * np.prod([values[j] / (values[j] - values[i]) for j in range(3) if j != i], axis=0)
            for i in range(3)
        )

    def residual(log_draw):
        load_voltage, current = _predict_meters(
            lamp,
            load,
            np.exp(log_draw),
            source_voltage,
            bypassed,
            at_output,
            source_resistance,
            frequency,
            responses,
        )
        scale = _draw_scale(load_voltage, current, source_voltage, by_current)
        scale = np.where(np.isnan(load_voltage), np.inf, scale)
        with np.errstate(invalid="ignore"):
            return np.where(interior, scale - target, 0.0)

    log_draw, remainder = bracketed_root(
        residual,
        lower,
        upper,
        f_lower,
        f_upper,
        DRAW_TOLERANCE,
        start=np.where(interior, start, lower),
    )
    beyond_running = interior & ~(np.abs(remainder) <= DRAW_EDGE_RESIDUAL)
    draw = np.where(never | beyond_running, np.inf, np.exp(log_draw))
    draw = np.where(below_all, 0.0, draw)
    return np.where(flat, np.nan, draw)


def _switch_on_overrides(lamp, load, readings, source_resistance, frequency, responses):
    """Predictions at each reading's seconds since switch-on, where a healthy unit is unsettled.

    Returns the readings' indices and their meter views at the declared draw, its double and
    ``SWITCH_ON_DRAWS`` (rows) from one switch-on run per source point (the heaters' slow
    warm-up included), and the readings taken later than ``SWITCH_ON_SECONDS`` while a
    healthy unit is still settling there. A source read at the rig's output is followed with
    no source resistance, as its steady state is.
    """
    timed = [
        index
        for index, reading in enumerate(readings)
        if reading.seconds_since_switch_on is not None
        and not reading.lamp_bypassed
        and reading.source_voltage > 0
    ]
    if not timed or getattr(load, "constant_power", False):
        return {}, []
    rows, volts, amps, late = [], [], [], []
    for point in SOURCE_POINTS:
        group = [index for index in timed if readings[index].source_point == point]
        if not group:
            continue
        resistance = 0.0 if point == RIG_OUTPUT else source_resistance
        found = _switch_on_group(lamp, load, readings, group, resistance, frequency, responses)
        if found is None:
            return {}, []
        rows += found[0]
        late += found[3]
        if found[0]:
            volts.append(found[1])
            amps.append(found[2])
    if not rows:
        return {}, late
    return {
        "rows": rows,
        "volts": np.concatenate(volts, axis=1),
        "amps": np.concatenate(amps, axis=1),
    }, late


def _switch_on_group(lamp, load, readings, timed, source_resistance, frequency, responses):
    """One switch-on run for the timed readings of one source point (None: no time model)."""
    seconds = np.array([readings[index].seconds_since_switch_on for index in timed])
    sources = np.array([readings[index].source_voltage for index in timed])
    duration = min(float(seconds.max()), SWITCH_ON_SECONDS) + 1.0 / frequency
    draws = np.concatenate([[1.0, 2.0], SWITCH_ON_DRAWS])
    try:
        result = switch_on(
            lamp,
            load.scaled(draws),
            sources[:, None],
            source_resistance=source_resistance,
            frequency=frequency,
            duration=duration,
            remanence=False,
        )
    except ValueError:
        # A load without a time-domain model is judged on its steady state alone.
        return None
    settle = result.settle_time[:, 0]
    unsettled = ~(settle <= seconds)
    within = seconds <= SWITCH_ON_SECONDS
    rows = [index for index, flag in zip(timed, unsettled & within, strict=True) if flag]
    late = [
        (index, float(second))
        for index, second, flag in zip(timed, seconds, unsettled & ~within, strict=True)
        if flag
    ]
    if not rows:
        return [], None, None, late
    pick = np.flatnonzero(unsettled & within)
    half = result.at(seconds[pick])
    volts = meter_view(
        result.load_voltage[half, pick], result.average_load_voltage[half, pick], responses[0]
    )
    amps = meter_view(result.current[half, pick], result.average_current[half, pick], responses[1])
    return rows, volts.T, amps.T, late


def _draw_on_grid(grid_volts, grid_amps, reading, meter, ammeter):
    """Draw, least and most draw of a reading among ``SWITCH_ON_DRAWS`` (log interpolation).

    Beyond the grid the draw is 0 or infinite, as beyond the steady search.
    """
    by_current = reading.current is not None
    measured = reading.current if by_current else reading.load_voltage
    span = _uncertainty(measured, *(ammeter if by_current else meter))
    rising = _draw_scale(grid_volts, grid_amps, reading.source_voltage, by_current)
    log_grid = np.log(SWITCH_ON_DRAWS)
    found = []
    # Least draw: the reading moved by its uncertainty towards less draw, then towards more.
    for value in (
        measured,
        measured - span if by_current else measured + span,
        measured + span if by_current else max(measured - span, 0.0),
    ):
        target = _draw_scale(value, value, reading.source_voltage, by_current)
        if target <= rising[0]:
            found.append(0.0)
        elif target >= rising[-1]:
            found.append(np.inf)
        else:
            found.append(float(np.exp(np.interp(target, rising, log_grid))))
    return tuple(found)


def _not_settled_reasons(readings, late):
    if not late:
        return []
    index, seconds = max(late, key=lambda item: item[1])
    more = f" ({len(late) - 1} more readings alike)" if len(late) > 1 else ""
    return [
        Reason(
            READING_NOT_SETTLED,
            f"at {_volts(readings[index].source_voltage)} source the reading was taken "
            f"{seconds:g} s after switch-on, while a healthy unit is still settling (its "
            f"heaters warming) beyond the {SWITCH_ON_SECONDS:g} s of warm-up the judgement "
            "follows: it may show more draw than steady state; read it again once the "
            f"lamp's glow has steadied{more}",
            index,
        )
    ]


def _volts(value):
    return f"{value:.3g} V"


def _amps(value):
    return f"{value:.2g} A"


def _draw(value, constant_power=False):
    if np.isinf(value) and constant_power:
        return "more than it can draw through this lamp and keep running"
    if np.isinf(value):
        return f"more than {DRAW_SEARCH_RANGE[1]:g}x declared (a dead short)"
    if value == 0:
        return f"nil (below {DRAW_SEARCH_RANGE[0]:g}x declared)"
    if np.isnan(value):
        return "not measurable from this reading"
    return f"{value:.2g}x declared"


def _check_fraction(value, name, low, high):
    number = float(value)
    if not low <= number < high:
        raise ValueError(f"{name} must be at least {low:g} and below {high:g} (got {value!r})")
    return number


def _check_positive(value, name, unit):
    number = float(value)
    if not np.isfinite(number) or number <= 0:
        raise ValueError(f"{name} must be positive and finite (got {value!r} {unit})")
    return number


def _peaky_current(load):
    """Whether the unit's current flows in peaks (a rectifier): meter responses differ on it."""
    return bool(getattr(load, "waveform", False) or getattr(load, "input_stage", None))


def judge(
    lamp,
    load,
    readings,
    *,
    nominal_source_voltage,
    source_resistance=0.0,
    frequency=DEFAULT_FREQUENCY,
    lamp_power_tolerance=LAMP_POWER_TOLERANCE,
    load_tolerance=LOAD_TOLERANCE,
    meter_relative_accuracy=METER_RELATIVE_ACCURACY,
    meter_absolute_accuracy=METER_ABSOLUTE_ACCURACY,
    current_relative_accuracy=CURRENT_RELATIVE_ACCURACY,
    current_absolute_accuracy=CURRENT_ABSOLUTE_ACCURACY,
    fail_draw_multiple=FAIL_DRAW_MULTIPLE,
    open_draw_multiple=OPEN_DRAW_MULTIPLE,
    full_source_fraction=FULL_SOURCE_FRACTION,
    min_sensitivity_ratio=MIN_SENSITIVITY_RATIO,
    voltmeter_response=TRUE_RMS,
    ammeter_response=TRUE_RMS,
    source_meter_relative_accuracy=None,
    source_meter_absolute_accuracy=None,
    source_meter_response=TRUE_RMS,
):
    """Judge a power-up test's readings against a healthy unit of the declared load.

    Parameters
    ----------
    lamp : Lamp or LampBank
        The series lamp used for the test.
    load : Load
        The declared load: what the unit should draw as configured on the bench.
    readings : sequence of Reading
        The test's readings, in the order taken; each says where its source volts were
        read (``Reading.source_point``).
    nominal_source_voltage : float
        The rig's nominal mains [V] (e.g. 120 or 230).
    source_resistance : float, default 0.0
        Resistance of the rig's windings [ohm]; it lies between the source reading and
        the lamp only for readings taken before the rig.
    frequency : float, default 60.0
        Source frequency [Hz].
    lamp_power_tolerance : float, default ``LAMP_POWER_TOLERANCE`` (0.10)
        Spread of the lamp's rated power [fraction].
    load_tolerance : float, default ``LOAD_TOLERANCE`` (0.20)
        Uncertainty of the declared load [fraction].
    meter_relative_accuracy, meter_absolute_accuracy : float
        Uncertainty of the meter on the unit's volts, ``relative * reading + absolute``
        [fraction, V]; defaults ``METER_RELATIVE_ACCURACY`` (0.01) and
        ``METER_ABSOLUTE_ACCURACY`` (0.5 V).
    current_relative_accuracy, current_absolute_accuracy : float
        Ammeter uncertainty [fraction, A]; defaults 0.02 and 0.005 A.
    fail_draw_multiple : float, default ``FAIL_DRAW_MULTIPLE`` (2.0)
        Inferred draw at or above which an out-of-band reading fails.
    open_draw_multiple : float, default ``OPEN_DRAW_MULTIPLE`` (0.2)
        Inferred draw at or below which an out-of-band reading fails as open.
    full_source_fraction : float, default ``FULL_SOURCE_FRACTION`` (0.9)
        Fraction of nominal mains a pass must reach (at least 0.9).
    min_sensitivity_ratio : float, default ``MIN_SENSITIVITY_RATIO`` (1.0)
        A reading tells a fault when a doubling of draw moves it by at least this
        multiple of what the healthy band and the meters allow (``sensitivity_needed``).
    voltmeter_response, ammeter_response : str, default "true_rms"
        ``"true_rms"`` or ``"average_responding"``: the unit's volts and current are
        predicted as those meters would show them. The ammeter's may be ``"unknown"``:
        on a unit whose current flows in peaks (a rectifier) its current is then not
        judged (reason ``current_not_judged``); on any other unit the current is a sine,
        which both responses read alike.
    source_meter_relative_accuracy, source_meter_absolute_accuracy : float, optional
        Uncertainty of the meter on the source volts [fraction, V]; default the unit
        voltmeter's (one meter read both).
    source_meter_response : str, default "true_rms"
        ``"true_rms"``, ``"average_responding"`` or ``"unknown"``; recorded only: the
        source is modelled as a sine where it was read, which every response reads alike.

    Returns
    -------
    Verdict

    Notes
    -----
    For every reading the band is the healthy prediction at its corners: the
    lowest unit volts come from the smallest lamp (power ``1 - t_lamp``), the
    heaviest load (``1 + t_load``) and the source reading's low limit (source
    meter); the highest from the opposite corner; each end is widened by the unit
    meter's uncertainty. The model is monotone in each, so the corners bound the band.
    A source read at the rig's output is solved with no source resistance (the
    windings' drop is already behind the reading); one read before the rig with
    the windings in series. The inferred draw is the factor ``k`` for which
    ``solve_series(lamp, load.scaled(k), source_voltage)`` reproduces the
    measured current, or the unit volts where no current was measured
    (bypassed readings: the unit straight on the source through the rig). It
    is found through the load model, never by subtracting RMS volts.
    Sensitivity is the change of the measured quantity from ``k = 1`` to ``k = 2``;
    it tells a fault when it at least equals the healthy band's room on that side
    plus the doubled unit's own spread (the lamp and both meters at their other
    corner), so that a doubled unit cannot read inside a healthy unit's band. A reading
    with its current measured is judged on the current, unless the current cannot tell a
    doubling (through a small lamp, which caps it) and the unit's volts can: then on the volts.
    """
    check_load(load)
    source_resistance = check_source_resistance(source_resistance)
    frequency = check_frequency(frequency)
    nominal = _check_positive(nominal_source_voltage, "nominal_source_voltage", "V")
    lamp_tolerance = _check_fraction(lamp_power_tolerance, "lamp_power_tolerance", 0.0, 1.0)
    load_tolerance = _check_fraction(load_tolerance, "load_tolerance", 0.0, 1.0)
    meter = (
        _check_fraction(meter_relative_accuracy, "meter_relative_accuracy", 0.0, 1.0),
        _check_fraction(meter_absolute_accuracy, "meter_absolute_accuracy", 0.0, np.inf),
    )
    source_meter = (
        meter[0]
        if source_meter_relative_accuracy is None
        else _check_fraction(
            source_meter_relative_accuracy, "source_meter_relative_accuracy", 0.0, 1.0
        ),
        meter[1]
        if source_meter_absolute_accuracy is None
        else _check_fraction(
            source_meter_absolute_accuracy, "source_meter_absolute_accuracy", 0.0, np.inf
        ),
    )
    ammeter = (
        _check_fraction(current_relative_accuracy, "current_relative_accuracy", 0.0, 1.0),
        _check_fraction(current_absolute_accuracy, "current_absolute_accuracy", 0.0, np.inf),
    )
    fail_multiple = _check_fraction(
        fail_draw_multiple, "fail_draw_multiple", 1.0 + load_tolerance, np.inf
    )
    open_multiple = _check_fraction(
        open_draw_multiple, "open_draw_multiple", 0.0, 1.0 - load_tolerance
    )
    full_fraction = float(full_source_fraction)
    if not FULL_SOURCE_FRACTION <= full_fraction <= 1.0:
        raise ValueError(
            f"full_source_fraction must lie between {FULL_SOURCE_FRACTION:g} and 1 "
            f"(got {full_source_fraction!r}): a pass needs at least "
            f"{100 * FULL_SOURCE_FRACTION:.0f} % of nominal mains"
        )
    sensitivity_ratio = _check_positive(min_sensitivity_ratio, "min_sensitivity_ratio", "")
    if source_meter_response != UNKNOWN_RESPONSE:
        check_response(source_meter_response, "source_meter_response")
    ammeter_unknown = ammeter_response == UNKNOWN_RESPONSE
    responses = (
        check_response(voltmeter_response, "voltmeter_response"),
        TRUE_RMS if ammeter_unknown else check_response(ammeter_response, "ammeter_response"),
    )
    readings = tuple(readings)
    if not readings:
        raise ValueError("readings must hold at least one Reading")
    for position, reading in enumerate(readings):
        if not isinstance(reading, Reading):
            raise ValueError(
                f"readings[{position}] must be a Reading (got {type(reading).__name__})"
            )

    source = np.array([reading.source_voltage for reading in readings])
    unit_volts = np.array([reading.load_voltage for reading in readings])
    # Current read on a meter of unknown response, through a unit whose current flows in
    # peaks: the two responses read it tens of per cent apart, so it cannot be judged.
    current_unjudged = ammeter_unknown and _peaky_current(load)
    by_current = np.array(
        [reading.current is not None and not current_unjudged for reading in readings]
    )
    amps = np.array(
        [np.nan if reading.current is None else reading.current for reading in readings]
    )
    bypassed = np.array([reading.lamp_bypassed for reading in readings])
    at_output = np.array([reading.source_point == RIG_OUTPUT for reading in readings])
    n = len(readings)
    measured = np.where(by_current, amps, unit_volts)
    source_span = _uncertainty(source, *source_meter)
    source_low = np.maximum(source - source_span, 0.0)
    source_high = source + source_span
    measured_span = np.where(
        by_current, _uncertainty(measured, *ammeter), _uncertainty(measured, *meter)
    )
    # Each reading three times: as read, then moved by the meters' uncertainty towards the
    # least draw (unit volts up or current down, and the source reading down or up), then
    # towards the most. Solved together, the three cost about as much as one.
    source_3 = np.concatenate(
        [
            source,
            np.where(by_current, source_high, source_low),
            np.where(by_current, source_low, source_high),
        ]
    )
    measured_3 = np.concatenate(
        [
            measured,
            np.maximum(measured + np.where(by_current, -measured_span, measured_span), 0.0),
            np.maximum(measured - np.where(by_current, -measured_span, measured_span), 0.0),
        ]
    )
    by_current_3 = np.tile(by_current, 3)
    bypassed_3 = np.tile(bypassed, 3)
    at_output_3 = np.tile(at_output, 3)

    # Healthy unit, doubled draw and the search grid of draws, all in one solve.
    draws = np.concatenate([[1.0, 2.0], np.geomspace(*DRAW_SEARCH_RANGE, DRAW_SEARCH_POINTS)])
    volts_k, amps_k, glow_k, state_k = _predict(
        lamp,
        load,
        draws[:, None],
        source_3,
        bypassed_3,
        at_output_3,
        source_resistance,
        frequency,
        responses,
    )
    draw_3 = _infer_draw(
        lamp,
        load,
        source_3,
        measured_3,
        by_current_3,
        bypassed_3,
        at_output_3,
        volts_k[2:],
        amps_k[2:],
        source_resistance,
        frequency,
        responses,
    )
    draw, least_draw, most_draw = draw_3[:n], draw_3[n : 2 * n], draw_3[2 * n :]
    volts_k, amps_k, glow_k, state_k = (
        volts_k[:, :n],
        amps_k[:, :n],
        glow_k[:, :n],
        state_k[:, :n],
    )

    band = _band_corners(
        lamp,
        load,
        (source_low, source_high),
        (bypassed, at_output),
        (lamp_tolerance, load_tolerance),
        (source_resistance, frequency, responses),
    )
    volts_low, volts_high = band["volts_low"], band["volts_high"]
    current_low, current_high = band["current_low"], band["current_high"]
    doubled_volts_high = band["doubled_volts_high"]
    doubled_current_low = band["doubled_current_low"]
    glow_brightest, glow_dimmest = band["glow_brightest"], band["glow_dimmest"]
    # Readings taken while a healthy unit is still settling: the switch-on instead.
    switch_on_rows, not_settled = _switch_on_overrides(
        lamp, load, readings, source_resistance, frequency, responses
    )
    # Where the heaviest corner has no operating point its unit cycles: its volts may fall
    # to nothing, its current and glow flash up.
    cannot_run = state_k[0] == NO_OPERATING_POINT
    heavy_cycles = np.isnan(volts_low) | np.isnan(current_high)
    volts_low = np.where(heavy_cycles & ~cannot_run, 0.0, volts_low)
    current_high = np.where(heavy_cycles & ~cannot_run, np.inf, current_high)
    glow_brightest = np.where(heavy_cycles & ~cannot_run, "bright", glow_brightest)
    if switch_on_rows:
        rows = switch_on_rows["rows"]
        # The band moves with the healthy prediction: its corners scaled by the switch-on's
        # ratio to the steady state at that instant (the doubled unit's by its own).
        for edge, values, steady, row in (
            (volts_low, switch_on_rows["volts"], volts_k[0, rows], 0),
            (volts_high, switch_on_rows["volts"], volts_k[0, rows], 0),
            (current_low, switch_on_rows["amps"], amps_k[0, rows], 0),
            (current_high, switch_on_rows["amps"], amps_k[0, rows], 0),
            (doubled_volts_high, switch_on_rows["volts"], volts_k[1, rows], 1),
            (doubled_current_low, switch_on_rows["amps"], amps_k[1, rows], 1),
        ):
            with np.errstate(divide="ignore", invalid="ignore"):
                edge[rows] = edge[rows] * np.where(steady > 0, values[row] / steady, 1.0)
        volts_k[:2, rows] = switch_on_rows["volts"][:2]
        amps_k[:2, rows] = switch_on_rows["amps"][:2]
        for position, reading_index in enumerate(rows):
            draw[reading_index], least_draw[reading_index], most_draw[reading_index] = (
                _draw_on_grid(
                    switch_on_rows["volts"][2:, position],
                    switch_on_rows["amps"][2:, position],
                    readings[reading_index],
                    meter,
                    ammeter,
                )
            )
    edges = (volts_low, volts_high, current_low, current_high)
    edges = _widened(edges + (doubled_volts_high, doubled_current_low), meter, ammeter)
    volts_low, volts_high, current_low, current_high, doubled_volts_high, doubled_current_low = (
        edges
    )

    # A doubling that leaves no operating point stops the unit: its volts collapse.
    doubled_stops = np.isnan(volts_k[1]) & ~cannot_run
    sensitivity = np.where(doubled_stops, volts_k[0], volts_k[0] - volts_k[1])
    current_sensitivity = np.where(doubled_stops, np.inf, amps_k[1] - amps_k[0])
    volts_needed, current_needed = _needed(
        volts_k[:2],
        amps_k[:2],
        volts_low,
        current_high,
        doubled_volts_high,
        doubled_current_low,
        doubled_stops,
    )
    with np.errstate(invalid="ignore"):
        volts_tell = sensitivity >= sensitivity_ratio * volts_needed
        current_tells = current_sensitivity >= sensitivity_ratio * current_needed
    # Through a small lamp the current barely moves with the draw (the lamp caps it) while the
    # unit's volts fall far: a reading whose current cannot tell a doubling and whose volts
    # can is judged on its volts.
    by_current = by_current & (current_tells | ~volts_tell)
    measured = np.where(by_current, amps, unit_volts)
    uncertainty = np.where(
        by_current, _uncertainty(amps_k[0], *ammeter), _uncertainty(volts_k[0], *meter)
    )
    needed = np.where(by_current, current_needed, volts_needed)
    sensitive = np.where(by_current, current_tells, volts_tell)

    band_low = np.where(by_current, current_low, volts_low)
    band_high = np.where(by_current, current_high, volts_high)
    heavier = np.where(by_current, measured > band_high, measured < band_low)
    lighter = np.where(by_current, measured < band_low, measured > band_high)
    status = np.full(n, IN_BAND, dtype=object)
    status[heavier] = DRAW_ABOVE_BAND
    # A fault must show even with the meters' uncertainty taken in the unit's favour.
    status[heavier & (least_draw >= fail_multiple)] = DRAW_HIGH
    status[lighter] = DRAW_BELOW_BAND
    status[lighter & (most_draw <= open_multiple)] = DRAW_NEAR_ZERO
    # A healthy unit that has not started draws nothing at any multiple of its power: a
    # reading beyond the band there draws where it should draw nothing at all.
    drawing_while_off = heavier & (state_k[0] == OFF)
    status[drawing_while_off] = DRAW_HIGH
    for values in (draw, least_draw, most_draw):
        values[drawing_while_off] = np.inf
    status[cannot_run] = LOAD_CANNOT_RUN

    judged = tuple(
        ReadingJudgement(
            index=i,
            status=status[i],
            lamp_bypassed=bool(bypassed[i]),
            measured="current" if by_current[i] else "load_voltage",
            predicted_load_voltage=float(volts_k[0, i]),
            load_voltage_low=float(volts_low[i]),
            load_voltage_high=float(volts_high[i]),
            predicted_current=float(amps_k[0, i]),
            current_low=float(current_low[i]),
            current_high=float(current_high[i]),
            predicted_glow=str(glow_k[0, i]),
            glow_dimmest=str(glow_dimmest[i]),
            glow_brightest=str(glow_brightest[i]),
            inferred_draw=float(draw[i]),
            inferred_draw_low=float(least_draw[i]),
            inferred_draw_high=float(most_draw[i]),
            sensitivity=float(sensitivity[i]),
            current_sensitivity=float(current_sensitivity[i]),
            meter_uncertainty=float(uncertainty[i]),
            sensitive=bool(sensitive[i]),
            predicted_state=str(state_k[0, i]),
            may_cycle=bool(cannot_run[i] | heavy_cycles[i]),
            judged_against="switch_on" if i in switch_on_rows.get("rows", ()) else "steady_state",
            sensitivity_needed=float(needed[i]),
            source_point=readings[i].source_point,
        )
        for i in range(n)
    )
    declared = f"a healthy {float(np.max(load.rated_power)):.3g} W unit"
    reasons = _draw_reasons(readings, judged, declared, getattr(load, "constant_power", False))
    reasons += _glow_reasons(readings, judged, load, declared)
    reasons += _cannot_run_reasons(
        readings, judged, declared, lamp, load, source_resistance, frequency
    )
    reasons += _not_settled_reasons(readings, not_settled)
    if not any(reason.outcome != "pass" for reason in reasons):
        reasons.append(_completion_reason(readings, judged, nominal, full_fraction))
    if current_unjudged and any(reading.current is not None for reading in readings):
        reasons.append(_current_not_judged_reason(readings))
    reasons.sort(key=lambda reason: -OUTCOME_SEVERITY.index(reason.outcome))
    settings = {
        "nominal_source_voltage": nominal,
        "source_resistance": source_resistance,
        "frequency": frequency,
        "lamp_power_tolerance": lamp_tolerance,
        "load_tolerance": load_tolerance,
        "meter_relative_accuracy": meter[0],
        "meter_absolute_accuracy": meter[1],
        "source_meter_relative_accuracy": source_meter[0],
        "source_meter_absolute_accuracy": source_meter[1],
        "current_relative_accuracy": ammeter[0],
        "current_absolute_accuracy": ammeter[1],
        "fail_draw_multiple": fail_multiple,
        "open_draw_multiple": open_multiple,
        "full_source_fraction": full_fraction,
        "min_sensitivity_ratio": sensitivity_ratio,
        "voltmeter_response": responses[0],
        "ammeter_response": UNKNOWN_RESPONSE if ammeter_unknown else responses[1],
        "source_meter_response": source_meter_response,
        "current_judged": not current_unjudged,
    }
    return Verdict(
        outcome=reasons[0].outcome, reasons=tuple(reasons), readings=judged, settings=settings
    )


def _current_not_judged_reason(readings):
    index = next(i for i, reading in enumerate(readings) if reading.current is not None)
    return Reason(
        CURRENT_NOT_JUDGED,
        "the current was read on a meter whose response (true RMS or average responding) "
        "was not recorded, and this unit draws its current in peaks, which the two read tens "
        "of per cent apart: the current is not judged, only the unit's volts; record the "
        "current meter to have it judged",
        index,
    )


def _reading_sentence(reading, judged, declared, constant_power=False):
    where = f"at {_volts(reading.source_voltage)} source"
    if reading.lamp_bypassed:
        where += " with the lamp bypassed"
    if judged.measured == "current":
        seen = f"the unit drew {_amps(reading.current)}"
        if np.isinf(judged.current_high):
            band = f"{declared} would draw at least {_amps(judged.current_low)} (more if it cycles)"
        else:
            band = f"{declared} would draw {judged.current_low:.2g}-{_amps(judged.current_high)}"
    else:
        seen = f"the unit read {_volts(reading.load_voltage)}"
        band = (
            f"{declared} would read {judged.load_voltage_low:.3g}-"
            f"{_volts(judged.load_voltage_high)}"
        )
    if judged.predicted_state == OFF:
        drawn = "it draws where a healthy unit has not started and draws nothing"
    else:
        drawn = f"inferred draw {_draw(judged.inferred_draw, constant_power)}"
    sentence = f"{where} {seen}; {band}; {drawn}"
    low, high = judged.inferred_draw_low, judged.inferred_draw_high
    if np.isfinite(low) and np.isfinite(high) and high > 0:
        sentence += f" ({low:.2g}-{high:.2g}x within the meters' uncertainty)"
    return sentence


def _draw_reasons(readings, judged, declared, constant_power):
    advice = {
        DRAW_HIGH: "the unit draws far more than declared: look for a short or a failed part",
        DRAW_ABOVE_BAND: "the unit draws more than declared",
        DRAW_BELOW_BAND: "the unit draws less than declared",
        DRAW_NEAR_ZERO: (
            "the unit draws next to nothing: look for an open fuse, switch or winding"
        ),
    }
    reasons = []
    for code, text in advice.items():
        hits = [item for item in judged if item.status == code]
        if not hits:
            continue
        # Quote the most telling reading: the one whose draw is furthest off even with the
        # meters' uncertainty in the unit's favour.
        if code in (DRAW_HIGH, DRAW_ABOVE_BAND):
            worst = max(hits, key=lambda item: np.nan_to_num(item.inferred_draw_low))
        else:
            worst = min(hits, key=lambda item: np.nan_to_num(item.inferred_draw_high, nan=np.inf))
        if code == DRAW_BELOW_BAND and worst.inferred_draw_low <= OPEN_DRAW_MULTIPLE:
            text += (
                ", perhaps nothing at all: look for an open fuse, switch or winding, or "
                "measure the current to tell"
            )
        more = f" ({len(hits) - 1} more readings alike)" if len(hits) > 1 else ""
        sentence = _reading_sentence(readings[worst.index], worst, declared, constant_power)
        reasons.append(Reason(code, f"{sentence}: {text}{more}", worst.index))
    return reasons


def _glow_reasons(readings, judged, load, declared):
    reasons = []
    found = {}
    bright = GLOW_CLASSES.index("bright")
    faint = GLOW_CLASSES.index("faint")
    for reading, item in zip(readings, judged, strict=True):
        if reading.lamp_bypassed:
            continue
        where = f"at {_volts(reading.source_voltage)} source"
        if reading.behaviour_seen == "cycling" and not item.may_cycle:
            if load.may_cycle:
                text = (
                    f"{where} the lamp's glow cycled; {declared} runs steadily through this "
                    "lamp there: it restarts, so it draws more than declared or is shutting "
                    "down on a fault"
                )
            else:
                text = (
                    f"{where} the lamp's glow cycled; the declared load "
                    f"({load.describe()['summary']}) holds a steady glow: look for an "
                    "intermittent connection, a thermal cut-out, or a unit that is not what "
                    "was declared"
                )
            found.setdefault(
                GLOW_CYCLING_UNEXPECTED, Reason(GLOW_CYCLING_UNEXPECTED, text, item.index)
            )
        if reading.glow_seen is None or item.status == LOAD_CANNOT_RUN:
            continue
        seen = GLOW_CLASSES.index(reading.glow_seen)
        brightest = GLOW_CLASSES.index(item.glow_brightest)
        dimmest = GLOW_CLASSES.index(item.glow_dimmest)
        expected = (
            f"{declared} keeps it {item.glow_dimmest}"
            if dimmest == brightest
            else f"{declared} keeps it {item.glow_dimmest} to {item.glow_brightest}"
        )
        sentence = f"{where} the lamp was seen {reading.glow_seen}; {expected}"
        if seen == bright and brightest <= faint:
            found.setdefault(
                GLOW_BRIGHT_UNEXPECTED,
                Reason(
                    GLOW_BRIGHT_UNEXPECTED,
                    f"{sentence}: the unit draws far more than declared",
                    item.index,
                ),
            )
        elif seen >= brightest + 2:
            found.setdefault(
                GLOW_BRIGHTER_THAN_PREDICTED,
                Reason(
                    GLOW_BRIGHTER_THAN_PREDICTED,
                    f"{sentence}: the unit may draw more than declared",
                    item.index,
                ),
            )
        elif seen <= dimmest - 2:
            found.setdefault(
                GLOW_DIMMER_THAN_PREDICTED,
                Reason(
                    GLOW_DIMMER_THAN_PREDICTED,
                    f"{sentence}: the unit may draw less than "
                    "declared, or the lamp is not the one declared",
                    item.index,
                ),
            )
    reasons.extend(found.values())
    return reasons


def _cannot_run_reasons(readings, judged, declared, lamp, load, source_resistance, frequency):
    hits = [item for item in judged if item.status == LOAD_CANNOT_RUN]
    if not hits:
        return []
    top = max(hits, key=lambda item: readings[item.index].source_voltage)
    more = f" ({len(hits) - 1} more readings alike)" if len(hits) > 1 else ""
    source = readings[top.index].source_voltage
    if readings[top.index].source_point == RIG_OUTPUT:
        source_resistance = 0.0
    return [
        Reason(
            LOAD_CANNOT_RUN,
            f"at {_volts(source)} source {declared} {CANNOT_RUN_SENTENCE}"
            f"{_restarting(lamp, load, source, source_resistance, frequency)}, so the "
            f"reading cannot be judged; use a larger lamp{more}",
            top.index,
        )
    ]


def _restarting(lamp, load, source, source_resistance, frequency):
    """What a healthy switch-mode unit's own switch-on shows at this source, as a clause.

    Its switch-on (:func:`shop.physics.switch_mode_start.switch_mode_switch_on`, through
    :func:`switch_on`) follows the reservoir and the converter's start and stop: the glow
    pulsing with the restarts is what to look for. Empty where that model does not apply.
    """
    if not getattr(load, "constant_power", False) or np.ndim(load.rated_power) != 0:
        return ""
    result = switch_on(
        lamp,
        load,
        source,
        source_resistance=source_resistance,
        frequency=frequency,
        duration=CANNOT_RUN_SECONDS,
    )
    behaviour = str(np.ravel(result.behaviour)[0])
    period = float(np.ravel(getattr(result, "cycle_period", np.nan))[0])
    if behaviour == DOES_NOT_START:
        return " (its reservoir never reaches the start voltage here: it stays off)"
    if behaviour == CYCLING and np.isfinite(period):
        return (
            f" (its own switch-on here restarts about every {period:.2g} s: the lamp's "
            "glow pulses with it)"
        )
    return ""


def _completion_reason(readings, judged, nominal, full_fraction):
    source = np.array([reading.source_voltage for reading in readings])
    top = int(np.argmax(source))
    full = full_fraction * nominal
    if source[top] < full:
        return Reason(
            SOURCE_NOT_FULL,
            f"the highest source reading was {_volts(source[top])}, "
            f"{100 * source[top] / nominal:.0f} % of the {_volts(nominal)} nominal; a pass "
            f"needs at least {100 * full_fraction:.0f} % ({_volts(full)})",
            top,
        )
    at_full = [item for item in judged if readings[item.index].source_voltage >= full]
    if not any(item.sensitive for item in at_full):
        through_lamp = [item for item in at_full if not item.lamp_bypassed]
        if not through_lamp:
            item = at_full[0]
            return Reason(
                BYPASS_WITHOUT_CURRENT,
                f"at {_volts(readings[item.index].source_voltage)} source the lamp was "
                f"bypassed and no current was measured; the unit's volts would move by only "
                f"{_volts(item.sensitivity)} for a doubling of draw, within the "
                f"{_volts(item.sensitivity_needed)} a healthy unit's band and the meters "
                "allow: measure the current",
                item.index,
            )
        item = max(through_lamp, key=_sensitivity_share)
        if item.measured == "current":
            change = (
                f"its current by only {_amps(item.current_sensitivity)}, within the "
                f"{_amps(item.sensitivity_needed)} that a healthy unit's band (lamp spread, "
                "load tolerance) and the meters allow"
            )
            remedy = "use a smaller lamp"
        else:
            change = (
                f"its volts by only {_volts(item.sensitivity)}, within the "
                f"{_volts(item.sensitivity_needed)} that a healthy unit's band (lamp spread, "
                "load tolerance) and both meters allow"
            )
            remedy = "use a smaller lamp, or measure the current"
        return Reason(
            LAMP_TOO_LARGE,
            f"at {_volts(readings[item.index].source_voltage)} source a doubling of the "
            f"unit's draw would move {change}: a unit drawing twice its load could read in "
            f"band, so the lamp is too large to tell a fault; {remedy}",
            item.index,
        )
    item = max(
        (item for item in at_full if item.sensitive),
        key=lambda item: readings[item.index].source_voltage,
    )
    reading = readings[item.index]
    if item.measured == "current":
        shown = (
            f"a doubling of draw would move its current by {_amps(item.current_sensitivity)}, "
            f"beyond the {_amps(item.sensitivity_needed)} a healthy unit's band and the meters "
            "allow"
        )
    else:
        shown = (
            f"a doubling of draw would move the unit by {_volts(item.sensitivity)}, beyond "
            f"the {_volts(item.sensitivity_needed)} a healthy unit's band and both meters allow"
        )
    return Reason(
        ALL_IN_BAND,
        f"all {len(readings)} readings were in band, up to {_volts(reading.source_voltage)} "
        f"source ({100 * reading.source_voltage / nominal:.0f} % of the {_volts(nominal)} "
        f"nominal); at {_volts(reading.source_voltage)} {shown}",
        item.index,
    )


def _sensitivity_share(item):
    """How much of what a doubling must move a reading by it does move it (0 when it cannot)."""
    moved = item.current_sensitivity if item.measured == "current" else item.sensitivity
    if not np.isfinite(item.sensitivity_needed) or item.sensitivity_needed <= 0:
        return 0.0
    return float(np.nan_to_num(moved / item.sensitivity_needed))
