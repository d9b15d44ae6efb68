"""Switching a switch-mode input on through the lamp: a reservoir, a converter, a cycling glow."""

from dataclasses import dataclass

import numpy as np

from shop.physics.glow import GLOW_CLASSES, glow_class
from shop.physics.rectifier import SILICON_DROP, SILICON_RESISTANCE
from shop.physics.transient import (
    DEFAULT_DURATION,
    DEFAULT_PHASE,
    FLASH_THEN_DIMS,
    SETTLE_FRACTION,
    STEADY,
    SwitchOnTransient,
    _Tables,
)
from shop.physics.warm_up import lamp_filaments

CYCLING = "cycling"
DOES_NOT_START = "does_not_start"
BEHAVIOURS = (STEADY, FLASH_THEN_DIMS, CYCLING, DOES_NOT_START)
# Steps per mains cycle. Each step solves the reservoir's charging in closed form against a
# parabola through the source (exact for that piece however stiff the charging), so the step
# need only follow the lamp's resistance and the converter's current: from 48 to 1024 steps
# a cycle the half-cycle figures move by less than 0.3 %, and scipy's LSODA on the same
# equations agrees within 0.6 % (tests/physics/test_switch_mode_start.py).
STEPS_PER_CYCLE = 48
# A step is split where a filament would heat by more than this fraction of its temperature
# in it (a cold lamp meeting a surge heats in a fraction of a millisecond), into at most
# SPLIT_MAX parts.
HEATING_PER_STEP = 0.02
SPLIT_MAX = 256
# A step in which the converter starts or stops (or its reservoir reaches the start level)
# is split into this many parts, to place the event within a sixteenth of a step.
EVENT_PARTS = 16
# Newton steps for the instant the bridge stops conducting within a step.
STOP_ITERATIONS = 2
# What each step records: the series resistance, one copy's squared path current, the
# reservoir where the path starts and stops, how long it conducts, the converter's current,
# and the path current's terms while it conducts (R i = q + r t - gap exp(-t / tau)).
STEP_RECORD = ("series", "path_squared", "start", "end", "span", "current", "q", "r", "gap")
RECORDED = ("reservoir", "running", "hottest", "split", "squared", "charge", "energy", "peak")
# Running periodically once the last two whole cycles' RMS currents agree to this fraction.
PERIODIC_TOLERANCE = 0.01
# The bridge: two silicon diodes conduct at a time (rectifier.py's figures, from memory).
BRIDGE_DROP = 2.0 * SILICON_DROP  # [V]
BRIDGE_RESISTANCE = 2.0 * SILICON_RESISTANCE  # [ohm]
# The converter's current is P / v; it is never let see less than this reservoir voltage.
LOWEST_RUNNING_VOLTAGE = 1.0  # [V]


@dataclass(frozen=True, kw_only=True)
class SwitchModeTransient(SwitchOnTransient):
    """A switch-mode input's switch-on: the fields of :class:`SwitchOnTransient` and more.

    ``behaviour`` is also ``"cycling"`` (``CYCLING``) or ``"does_not_start"``;
    ``steady_current``, ``settle_time`` are NaN and ``steady_glow`` empty where the unit
    cycles or never starts.

    Attributes
    ----------
    reservoir_voltage : numpy.ndarray
        Mean reservoir voltage over each half cycle [V].
    load_power : numpy.ndarray
        Mean power into the unit's terminals over each half cycle [W].
    restarts : numpy.ndarray
        Starts after the first, per column.
    cycle_period : numpy.ndarray
        Mean time between starts [s] (from the second start on when there are three or
        more), per column; NaN with fewer than two starts.
    """

    reservoir_voltage: np.ndarray
    load_power: np.ndarray
    restarts: np.ndarray
    cycle_period: np.ndarray


def switch_mode_switch_on(
    lamp,
    load,
    source_voltage,
    *,
    source_resistance=0.0,
    frequency=60.0,
    phase=DEFAULT_PHASE,
    duration=DEFAULT_DURATION,
    lamp_bypassed=False,
):
    """Switching a switch-mode input on through the lamp (or bypassed), every column at once.

    Parameters
    ----------
    lamp : Lamp or LampBank
        The series lamp (or a spread lamp), cold at the bench's ambient at switch-on.
    load : ConstantPowerLoad
        The unit: its power [W], start and stop voltages [V], reservoir [F] and start delay
        [s] (:class:`shop.physics.switch_mode.ConstantPowerLoad`).
    source_voltage : numeric
        The RMS voltage the source is set to [V]; each value meets each of the load's draw
        factors (the two broadcast).
    source_resistance : float, default 0.0
        Resistance of the rig in series, its windings and wiring [ohm].
    frequency : float, default 60.0
        Mains frequency [Hz].
    phase : float, default 90.0
        Where in its cycle the source is when the switch closes [degrees]; 90 meets the
        crest, the worst case for the reservoir's surge.
    duration : float, default 1.0
        Time followed after the switch closes [s].
    lamp_bypassed : bool, default False
        True with the lamp shorted out: the rig's resistance alone limits the surge.

    Returns
    -------
    SwitchModeTransient
        The fields of :class:`shop.physics.transient.SwitchOnTransient`, shaped as
        :func:`shop.physics.transient.switch_on` shapes them, with ``behaviour`` one of
        ``BEHAVIOURS``, and the reservoir voltage, unit power, restarts and cycling period.

    Notes
    -----
    The unit is a bridge (``BRIDGE_DROP``, ``BRIDGE_RESISTANCE``) charging a reservoir
    ``C`` that feeds a converter drawing ``P / v_C`` once started. It starts when the
    reservoir has stood at or above :math:`\\sqrt{2} V_{start}` for the load's start delay
    and stops when it falls below :math:`\\sqrt{2} V_{stop}`; between the two it keeps its
    state (hysteresis). The levels are the reservoir's, so the source must reach the start
    voltage and the bridge's drop over :math:`\\sqrt{2}` (about 1.3 V) more, where the
    steady state (:func:`shop.physics.circuit.solve_series`) asks the start voltage. With
    ``k`` copies in parallel (the draw factor) and the loop resistance of one copy
    :math:`R_u = k (R_s + R_{lamp}) + R_k`, while the bridge conducts

    .. math:: C \\, dv_C/dt = (|e(t)| - V_k - v_C) / R_u - P / v_C,

    and otherwise :math:`C \\, dv_C/dt = -P / v_C`; the source sees ``k`` times the path's
    current. Each step (``STEPS_PER_CYCLE`` a cycle) holds the lamp's resistance, read half
    a step on as extrapolated from the step before, and the converter's current, at its value
    half a step on, and takes the source as the parabola through its values at the step's
    ends and middle. The reservoir then follows in closed form, exact for that piece however
    stiff the charging (a bypassed lamp leaves a time constant of microseconds), with the
    instants where the bridge starts and stops conducting solved within the step; so do the
    integrals of the current and of its square, from which come the half-cycle figures and
    the filaments' heating, and the peak current within the step. Each filament heats by its
    share of that integral and loses heat as in steady state, with its heat capacity
    (:meth:`shop.physics.lamp.Filament.thermal_table`). A step is taken again in parts where
    a filament would heat by more than ``HEATING_PER_STEP`` of its temperature in it (a cold
    lamp meeting the charging surge), and in ``EVENT_PARTS`` parts where the converter
    starts, stops or starts waiting to, with its start and stop placed within the part.

    Through too small a lamp the running converter pulls the reservoir below its stop level
    within tens of milliseconds, the reservoir recharges through the lamp, and the converter
    starts again once it has stood above its start level for the start delay: the period of
    the cycling is the start delay and the time the reservoir takes to climb back to the
    start level, plus the short run. The lamp's filament, whose thermal time constant is tens
    of milliseconds, swings through the cycle when the period is longer than that; with no
    start delay the cycling is as fast as the reservoir refills (a few mains cycles) and
    the glow looks steady.

    The steady figures come from this model's own periodic running state, the last whole
    cycle of a run whose last two cycles agree within ``PERIODIC_TOLERANCE``. They agree with
    :func:`shop.physics.circuit.solve_series` for a unit declared with a capacitor input
    (:mod:`shop.physics.capacitor_input` shoots for the same circuit's steady state; within
    about 1 %, tests/physics/test_capacitor_input.py), and differ from it for a
    power-factor-corrected one, which draws its power as a resistance would: a capacitor
    input draws the same power in peaks near the crest, so a larger RMS current.

    ``behaviour`` is ``"does_not_start"`` where the converter never starts within the run
    (a source too low, or a run shorter than the start delay), ``"cycling"``
    where it starts again in the second half of the run or never runs periodically,
    ``"flash_then_dims"`` where the lamp glows brighter at some time than at its periodic
    state, else ``"steady"``.

    References
    ----------
    .. [1] O. H. Schade, "Analysis of rectifier operation", Proc. IRE 31, 341-361 (1943).
    """
    if not getattr(load, "constant_power", False) or not hasattr(load, "reservoir"):
        raise ValueError(f"load must be a ConstantPowerLoad (got {type(load).__name__})")
    if not (np.isfinite(frequency) and frequency > 0):
        raise ValueError(f"frequency must be positive (got {frequency!r} Hz)")
    if not (np.isfinite(duration) and duration > 0):
        raise ValueError(f"duration must be positive (got {duration!r} s)")
    source = np.asarray(source_voltage, dtype=float)
    if not np.isfinite(source).all() or (source < 0).any():
        raise ValueError("source_voltage must be finite and not negative")
    factor = np.asarray(load.draw_factor, dtype=float)
    if np.isinf(factor).any():
        raise ValueError("factor must be finite for a switch-mode unit")
    shape = np.broadcast_shapes(source.shape, factor.shape)
    amplitude = np.sqrt(2.0) * np.broadcast_to(source, shape).ravel()
    copies = np.broadcast_to(factor, shape).ravel()
    size = amplitude.size
    # An open unit (no copies) never conducts: its bridge sees no source.
    charging_amplitude = np.where(copies > 0, amplitude, 0.0)
    filaments = [] if lamp_bypassed else lamp_filaments(lamp)

    omega = 2.0 * np.pi * frequency
    steps = STEPS_PER_CYCLE
    half_steps = steps // 2
    step = 1.0 / (frequency * steps)
    halves = max(int(np.ceil(duration * 2.0 * frequency - 1e-9)), 1)
    total = halves * half_steps
    angles = omega * step * np.arange(total + 1) + np.radians(phase)
    bridge = charging_amplitude * np.abs(np.sin(angles))[:, None] - BRIDGE_DROP
    pieces = _source_pieces(charging_amplitude, angles, step)

    unit = _Unit(load, copies, source_resistance, filaments, step)
    state = unit.initial(size)
    steps_record = np.zeros((total + 1, len(STEP_RECORD), size))
    record = {name: np.zeros((total + 1, size)) for name in RECORDED}
    reservoirs, runs, hottest = record["reservoir"], record["running"], record["hottest"]
    limit = HEATING_PER_STEP
    previous = (0, 0)  # columns running and waiting to start
    units = {}  # the precise units of split steps, by their number of parts
    for n in range(total + 1):
        reservoirs[n], runs[n] = state[0], state[3]
        if filaments:
            hottest[n] = state[1][0] if len(filaments) == 1 else state[1].max(axis=0)
        if n == total:
            break
        out = steps_record[n]
        after = unit.advance(state, *(piece[n] for piece in pieces), out)
        parts = 1
        if filaments and (after[2] > limit * state[1]).any():
            # The filament heats too fast for one step (a cold lamp meeting a surge).
            parts = int(np.ceil(np.max(after[2] / state[1]) / limit))
        counts = np.count_nonzero(after[3]), np.count_nonzero(after[4])
        if counts != previous:
            # The converter starts or stops, or starts waiting to: place it more closely.
            parts = max(parts, EVENT_PARTS)
        if parts > 1:
            # Again in parts, on the source's own curve, placing the converter's events
            # within them.
            parts = min(parts, SPLIT_MAX)
            if parts not in units:
                units[parts] = _Unit(
                    load, copies, source_resistance, filaments, step / parts, precise=True
                )
            fine = np.linspace(angles[n], angles[n + 1], parts + 1)
            after = _in_parts(units[parts], state, charging_amplitude, fine, out, record, n)
            counts = np.count_nonzero(after[3]), np.count_nonzero(after[4])
        state, previous = after, counts
    for index, name in enumerate(STEP_RECORD):
        record[name] = steps_record[:, index]
    record["series"][total] = record["series"][total - 1]
    if not filaments:
        record["hottest"][:] = np.nan
    whole = record["split"][:-1] == 0
    steps_of = tuple(record[name][:-1] for name in STEP_RECORD)
    sums = (*unit.sums(steps_of), unit.peak(steps_of))
    for name, values in zip(("squared", "charge", "energy", "peak"), sums, strict=True):
        record[name][:-1] = np.where(whole, values, record[name][:-1])
    return _figures(
        record,
        bridge,
        amplitude * np.sin(angles)[:, None],
        copies,
        shape,
        step,
        halves,
        duration,
        filaments,
        unit.ambient,
    )


def _in_parts(unit, state, amplitude, angles, out, record, n):
    """Step ``n`` taken again as ``unit`` (a precise unit of a part of it) between the
    source phases ``angles`` [rad]: returns the state after it, leaves the series resistance
    of its first part in ``out`` and its sums in ``record`` (marked as split)."""
    pieces = _source_pieces(amplitude, angles, unit.step)
    parts = np.zeros((angles.size - 1, len(STEP_RECORD), amplitude.size))
    for j, values in enumerate(parts):
        state = unit.advance(state, *(piece[j] for piece in pieces), values)
    parts = tuple(np.moveaxis(parts, 1, 0))
    out[0] = parts[0][0]
    record["split"][n] = 1.0
    record["squared"][n], record["charge"][n], record["energy"][n] = unit.sums(parts).sum(axis=1)
    record["peak"][n] = unit.peak(parts).max(axis=0)
    return state


def _source_pieces(amplitude, angles, step):
    """The source less the bridge's drop over each step, as a parabola through its values
    at the step's ends and middle: its value and slope at the start, its curvature, and
    the slope of its chord.

    Parameters: the bridge's crest per column [V], the source's phase at the step ends
    [rad] and the step [s]. Returns four arrays (steps, columns): [V], [V/s], [V/s^2],
    [V/s].
    """
    middle = 0.5 * (angles[:-1] + angles[1:])
    first, mid, last = (
        amplitude * np.abs(np.sin(values))[:, None] - BRIDGE_DROP
        for values in (angles[:-1], middle, angles[1:])
    )
    curvature = 4.0 * (last - 2.0 * mid + first) / step**2
    chord = (last - first) / step
    return first, chord - 0.5 * curvature * step, curvature, chord


class _Unit:
    """The unit's bridge, reservoir and converter behind the lamp, a step at a time.

    A state is ``(reservoir [V], filament temperatures [K], their last step's rise [K],
    running (1.0 or 0.0), time waiting to start [s])``, each per column (the temperatures
    per filament and column). Scalars are kept as 0-d arrays and flags as 1.0 and 0.0:
    numpy works on those faster than on Python floats and booleans mixed with arrays.
    A ``precise`` unit (for the parts of a split step) places the converter's start and
    stop within its step; an ordinary one at the step's end.
    """

    def __init__(self, load, copies, source_resistance, filaments, step, precise=False):
        self.precise = precise
        self.copies = copies
        self.power = np.array(load.power)
        self.capacitance = np.array(load.reservoir)
        self.step = np.array(step)
        self.half_step_per_capacitance = np.array(0.5 * step / load.reservoir)
        # The reservoir the converter's current is reckoned from: high enough that half a
        # step's draw leaves at least half of it.
        self.lowest = max(LOWEST_RUNNING_VOLTAGE, np.sqrt(step * load.power / load.reservoir))
        self.source_resistance = np.array(float(source_resistance))
        self.start_level = np.array(np.sqrt(2.0) * load.start_voltage)
        self.stop_level = np.array(max(np.sqrt(2.0) * load.stop_voltage, LOWEST_RUNNING_VOLTAGE))
        self.delay = np.array(load.start_delay)
        self.waits = load.start_delay > 0
        self.tables = _Tables([filament.thermal_table() for filament, _ in filaments])
        self.multipliers = np.array([multiplier for _, multiplier in filaments]).reshape(-1, 1)
        self.single = 1.0 / self.multipliers[0, 0] if filaments else 0.0
        self.ambient = np.array([filament.ambient_temperature for filament, _ in filaments])

    def initial(self, size):
        """Switch-on: the reservoir empty, the filaments at ambient, the converter off."""
        temperatures = np.repeat(self.ambient[:, None], size, axis=1)
        return (np.zeros(size), temperatures, np.zeros_like(temperatures), np.zeros(size), 0.0)

    def advance(self, state, level, rate, curvature, chord, out):
        """One step from ``state``; returns the state after it.

        The source less the bridge's drop is ``level + rate t + curvature t^2 / 2`` over the
        step ([V], [V/s], [V/s^2] per column), ``chord`` [V/s] the slope between its ends.
        ``out`` receives, per column (``STEP_RECORD``): the series resistance (lamp and rig)
        held over the step [ohm],
        the integral of one copy's squared path current [A^2 s], the reservoir where the
        path starts and stops conducting [V], how long it conducts [s] and the converter's
        current [A].
        """
        reservoir, temperatures, warming, running, waiting = state
        step = self.step
        lamp = 0.0
        if self.tables.count:
            # The filaments as they will be half a step on, by their last step's rise.
            resistance, loss, capacity = self.tables.read(temperatures + 0.5 * warming)
            if self.tables.count == 1:
                lamp = resistance[0] * self.single
            else:
                lamp = 1.0 / (self.multipliers / resistance).sum(axis=0)
        series = np.add(self.source_resistance, lamp, out=out[0])
        # The converter's current, held over the step at its value half a step on.
        held = np.maximum(reservoir, self.lowest)
        later = held - self.half_step_per_capacitance * self.power / held
        drain = np.multiply(running, self.power / later, out=out[5]) / self.capacitance
        # The bridge conducts from the start, or from where the source first meets the
        # draining reservoir, or not at all in this step. A source that only touches the
        # reservoir between the step's ends is taken as not meeting it.
        behind = reservoir - level
        rise = rate + drain
        reaches = np.maximum((chord + drain) * step, 0.0) > behind
        if reaches.any():
            delayed, span = self._conduct(
                reservoir, level, rate, curvature, series, drain, behind, rise, reaches, out
            )
        else:
            out[1] = out[4] = out[6] = out[7] = out[8] = 0.0
            out[2] = out[3] = reservoir - drain * step
            delayed, span = step, 0.0
        if self.tables.count:
            source = self.copies * lamp
            warming = (source * source * out[1] / resistance - loss * step) / capacity
            temperatures = temperatures + warming
        before = reservoir
        reservoir = np.maximum(out[3] - drain * (step - delayed - span), 0.0)
        if not self.precise and (
            (running.min() == 1.0 and reservoir.min() >= self.stop_level)
            or (running.max() == 0.0 and reservoir.max() < self.start_level)
        ):
            # Every column runs on, or every one stays off and far from starting.
            return reservoir, temperatures, warming, running, waiting
        # The converter stops below the stop level and starts once the reservoir has stood at
        # or above the start level for the start delay.
        keep = np.heaviside(reservoir - self.stop_level, 1.0)
        ready = np.heaviside(reservoir - self.start_level, 1.0)
        if self.precise:
            reservoir, ready, waiting = self._events(
                before, reservoir, out[3], running, keep, ready, waiting
            )
        elif self.waits:
            waiting = (waiting + step) * ready * (1.0 - running)
            ready = ready * np.heaviside(waiting - self.delay, 1.0)
        running = keep * np.maximum(running, ready)
        return reservoir, temperatures, warming, running, waiting

    def _conduct(
        self, reservoir, level, rate, curvature, series, drain, behind, rise, reaches, out
    ):
        """The bridge conducting within the step (``reaches``), in closed form.

        Writes ``out[1:5]`` (``STEP_RECORD``) and returns when the path starts conducting
        and for how long [s], per column.
        """
        step, capacitance = self.step, self.capacitance
        loop = self.copies * series + BRIDGE_RESISTANCE
        tau = loop * capacitance
        # Where it starts: the first root of curvature t^2 / 2 + rise t - behind, in a form
        # that holds as the curvature vanishes.
        root = np.sqrt(np.maximum(rise * rise + 2.0 * curvature * behind, 0.0))
        delayed = 2.0 * np.maximum(behind, 0.0) / np.maximum(rise + root, 1e-300)
        delayed = np.where(reaches, np.minimum(delayed, step), step)
        span = step - delayed
        start = np.subtract(reservoir, drain * delayed, out=out[2])
        # On: C dv/dt = (s(t) - v) / R - I with s a parabola, from where the path starts
        # (there s = level_a, s' = rate_a); the path current is R i = q + r t - g exp(-t/tau).
        level_a = level + (rate + 0.5 * curvature * delayed) * delayed
        rate_a = rate + curvature * delayed
        r = tau * curvature
        q = tau * (drain + rate_a - r)
        gap = start - level_a + q
        decay = np.exp(-span / tau)
        stops = (q + r * span < gap * decay) & reaches
        if stops.any():
            span = self._stopping(stops, q, r, gap, tau, span)
            decay = np.exp(-span / tau)
        out[4], out[6], out[7], out[8] = span, q, r, gap
        left = gap * decay
        level_b = level_a + (rate_a + 0.5 * curvature * span) * span
        np.add(level_b - q - r * span, left, out=out[3])
        # The integral of (R i)^2 = (q + r t)^2 - 2 g (q + r t) e^(-t/tau) + g^2 e^(-2t/tau).
        fall = tau * (1.0 - decay)  # the integral of e^(-t/tau)
        squared = (
            (q * q + (q * r + r * r * span / 3.0) * span) * span
            - 2.0 * gap * (q * fall + r * (tau * fall - span * tau * decay))
            + 0.5 * gap * (gap + left) * fall
        )
        np.divide(squared, loop * loop, out=out[1])
        return delayed, span

    def _events(self, before, reservoir, conducted, running, keep, ready, waiting):
        """The converter's start and stop placed within the step (a split step's parts).

        Where it crossed the stop level after the bridge stopped conducting (the reservoir
        at ``conducted`` then) it stopped there and drained no further. The start delay is
        counted from where the reservoir crossed the start level (linearly within the
        step), and a converter due to start within the step has drawn since then.
        Returns the reservoir [V], whether it starts or runs on (1.0 or 0.0) and the time
        waited [s].
        """
        late = running * (1.0 - keep) * (conducted >= self.stop_level)
        reservoir = reservoir + late * (self.stop_level - reservoir)
        if self.waits:
            rise = np.maximum(reservoir - before, 1e-300)
            credit = self.step * np.clip((reservoir - self.start_level) / rise, 0.0, 1.0)
            waiting = (waiting + credit) * ready * (1.0 - running)
            ready = ready * np.heaviside(waiting - self.delay, 1.0)
            early = ready * (1.0 - running) * (waiting - self.delay)
            drawn = early * self.power / np.maximum(reservoir * self.capacitance, 1e-300)
            reservoir = reservoir - drawn
        return reservoir, ready, waiting

    @staticmethod
    def _stopping(stops, q, r, gap, tau, span):
        """Where the path current ``q + r t - g exp(-t/tau)`` reaches zero, within ``span``
        (where ``stops``): from where its straight line between the ends meets zero,
        ``STOP_ITERATIONS`` Newton steps kept within the stretch."""
        began = q - gap
        ended = q + r * span - gap * np.exp(-span / tau)
        guess = np.divide(began * span, began - ended, out=span.copy(), where=stops)
        for _ in range(STOP_ITERATIONS):
            shrink = np.exp(-guess / tau)
            value = q + r * guess - gap * shrink
            slope = r + gap * shrink / tau
            step = np.divide(value, slope, out=np.zeros_like(value), where=stops & (slope != 0))
            guess = np.clip(guess - step, 0.0, span)
        return np.where(stops, guess, span)

    def peak(self, record):
        """The largest source current within each step's conduction [A], from its
        ``STEP_RECORD`` values: at either end, or where ``q + r t - gap e^(-t/tau)`` turns."""
        series, _, _, _, span, _, q, r, gap = record
        loop = self.copies * series + BRIDGE_RESISTANCE
        tau = loop * self.capacitance
        with np.errstate(divide="ignore", invalid="ignore"):
            turn = tau * np.log(-gap / (r * tau))
        turn = np.clip(np.nan_to_num(turn, nan=0.0), 0.0, span)
        ends = [
            q - gap,
            q + r * turn - gap * np.exp(-turn / tau),
            q + r * span - gap * np.exp(-span / tau),
        ]
        return self.copies * np.maximum(np.max(ends, axis=0), 0.0) / loop

    def sums(self, record):
        """Integrals over each step from its ``STEP_RECORD`` values: of the squared source
        current [A^2 s], of the rectified source current [C] and of the power into the
        unit's terminals [J] (the reservoir's energy, the converter's and the bridge's)."""
        _, squared, start, end, span, current, *_ = record
        charge = self.capacitance * (end - start) + current * span
        energy = charge * (0.5 * (start + end) + BRIDGE_DROP) + BRIDGE_RESISTANCE * squared
        copies = self.copies
        return np.stack((copies * copies * squared, copies * charge, copies * energy))


def _figures(record, bridge, emf, copies, shape, step, halves, duration, filaments, ambient):
    """Half-cycle figures, the periodic state and the behaviour of each column."""
    total, size = bridge.shape[0] - 1, bridge.shape[1]
    half_steps = total // halves
    half = half_steps * step
    loop = copies * record["series"] + BRIDGE_RESISTANCE
    currents = copies * np.maximum(bridge - record["reservoir"], 0.0) / loop
    unit_volts = emf - np.sign(emf) * record["series"] * currents
    squared, charge, energy = (record[name][:-1] for name in ("squared", "charge", "energy"))

    def per_half(values):
        return values.reshape(halves, half_steps, size).sum(axis=1)

    def trapezoid(values):
        inner = per_half(values[:-1])
        ends = 0.5 * (values[half_steps::half_steps] - values[:-1:half_steps])
        return (inner + ends) / half_steps

    current = np.sqrt(per_half(squared) / half)
    within = np.maximum(np.maximum(currents[:-1], currents[1:]), record["peak"][:-1])
    peak = within.reshape(halves, half_steps, size).max(axis=1)
    temperature = record["hottest"][1:].reshape(halves, half_steps, size).max(axis=1)

    # Starts: the converter running at a step's end and not at its start.
    running = record["running"] > 0.5
    started = running[1:] & ~running[:-1]
    count = started.sum(axis=0)
    times = (np.arange(1, total + 1) * step)[:, None]
    order = np.cumsum(started, axis=0)
    first_start = np.where(started & (order == 1), times, 0.0).sum(axis=0)
    second_start = np.where(started & (order == 2), times, 0.0).sum(axis=0)
    last_start = np.where(started & (order == count), times, 0.0).sum(axis=0)
    late_restart = (started & (order > 1) & (times > 0.5 * duration)).any(axis=0)

    # The periodic running state: running through the last two cycles, the two alike.
    ends = (np.arange(halves) + 1) * half
    cycle_current = np.sqrt(0.5 * (current[-2:] ** 2).sum(axis=0))
    before = np.sqrt(0.5 * (current[-4:-2] ** 2).sum(axis=0)) if halves >= 4 else np.nan
    with np.errstate(invalid="ignore"):
        alike = np.abs(cycle_current - before) <= PERIODIC_TOLERANCE * cycle_current
    through = running[-4 * half_steps :].all(axis=0)
    periodic = (count > 0) & through & alike & ~late_restart
    steady_current = np.where(periodic, cycle_current, np.nan)
    with np.errstate(invalid="ignore"):
        outside = ~(np.abs(current - steady_current) <= SETTLE_FRACTION * steady_current)
    last_outside = np.where(outside.any(axis=0), halves - 1 - np.argmax(outside[::-1], axis=0), -1)
    settle = np.where(last_outside < 0, 0.0, ends[np.clip(last_outside, 0, None)])
    settle = np.where(periodic & (last_outside < halves - 1), settle, np.nan)

    if filaments:
        rated = max(filament.rated_temperature for filament, _ in filaments)
        glow = glow_class(np.maximum(temperature, ambient.min()), rated)
        names = np.array(GLOW_CLASSES)
        alphabetical = np.argsort(names)
        rank = alphabetical[np.searchsorted(names, glow, sorter=alphabetical)]
        brightest = np.argmax(rank[-2:], axis=0)
        flash = rank.max(axis=0) > rank[-2:].max(axis=0)
        steady_glow = np.where(periodic, glow[-2:][brightest, np.arange(size)], "")
    else:
        glow = np.full((halves, size), GLOW_CLASSES[0])
        flash = np.zeros(size, dtype=bool)
        steady_glow = np.where(periodic, GLOW_CLASSES[0], "")
    behaviour = np.where(
        count == 0,
        DOES_NOT_START,
        np.where(~periodic, CYCLING, np.where(flash, FLASH_THEN_DIMS, STEADY)),
    )
    later, skipped = np.where(count >= 3, second_start, first_start), np.where(count >= 3, 2, 1)
    with np.errstate(invalid="ignore", divide="ignore"):
        period = np.where(count >= 2, (last_start - later) / (count - skipped), np.nan)

    def shaped(values):
        values = np.asarray(values)
        return values.reshape(values.shape[:-1] + shape)

    return SwitchModeTransient(
        time=ends,
        current=shaped(current),
        load_voltage=shaped(np.sqrt(trapezoid(unit_volts**2))),
        average_current=shaped(per_half(charge) / half),
        average_load_voltage=shaped(trapezoid(np.abs(unit_volts))),
        peak_current=shaped(peak),
        filament_temperature=shaped(temperature),
        glow=shaped(glow),
        inrush_peak=shaped(peak.max(axis=0)),
        steady_current=shaped(steady_current),
        settle_time=shaped(settle),
        steady_glow=shaped(steady_glow),
        behaviour=shaped(behaviour),
        reservoir_voltage=shaped(trapezoid(record["reservoir"])),
        load_power=shaped(per_half(energy) / half),
        restarts=shaped(np.maximum(count - 1, 0)),
        cycle_period=shaped(period),
    )
