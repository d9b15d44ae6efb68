"""The series circuit: source, rig windings, tungsten lamp and unit, solved for a whole sweep."""

import copy
from dataclasses import dataclass

import numpy as np

from shop.physics.capacitor_input import capacitor_input_solution
from shop.physics.glow import GLOW_CLASSES
from shop.physics.loads import Load
from shop.physics.roots import bracketed_root
from shop.physics.waveform import periodic_steady_state

DEFAULT_FREQUENCY = 60.0  # [Hz]

# The polish stops once the source-voltage residual is below this fraction of the source
# voltage (or the bracket is a few ulp wide): far below the 1e-9 V the results promise, and
# relative so that the power balance closes to about 1e-13 even at microvolts.
SOLVER_RELATIVE_TOLERANCE = 1e-13
# A point whose residual is still above this after the polish is a solver failure, reported.
SOLVER_RESIDUAL_LIMIT = 1e-9  # [V] per volt of source above 1 V
# Doublings of the first current guess allowed while bracketing a bypassed operating point.
BRACKET_MAX_DOUBLINGS = 60
# Up to this many distinct loads (columns) the source volts each needs are tabulated on the
# lamp's whole curve; beyond, on every WIDE_LOAD_STRIDE-th point of it, so that memory does not
# grow as (curve points x readings).
NARROW_LOAD_COLUMNS = 64
WIDE_LOAD_STRIDE = 128

# What the unit does at each point: a steady operating point; off (a switch-mode input below
# its start voltage, drawing nothing); or no operating point at all (a constant-power unit that
# cannot draw its power through the lamp: it cycles or does not start).
STEADY = "steady"
OFF = "off"
NO_OPERATING_POINT = "no_operating_point"
OPERATING_STATES = (STEADY, OFF, NO_OPERATING_POINT)
# Rectified mean of a sine over its RMS, 2 sqrt(2) / pi. An average-responding meter senses
# the rectified mean and is calibrated to show a sine's RMS: it multiplies by the inverse.
SINE_AVERAGE_PER_RMS = 2.0 * np.sqrt(2.0) / np.pi
TRUE_RMS = "true_rms"
AVERAGE_RESPONDING = "average_responding"
METER_RESPONSES = (TRUE_RMS, AVERAGE_RESPONDING)


@dataclass(frozen=True)
class SeriesResult:
    """Steady operating point of the series circuit, one element per source voltage.

    Every field is a numpy array shaped like the broadcast of the source voltage
    and the load's parameters.

    Attributes
    ----------
    source_voltage : numpy.ndarray
        RMS source (rig output) voltage [V], as given.
    load_voltage : numpy.ndarray
        RMS voltage across the unit [V].
    current : numpy.ndarray
        RMS current through lamp, windings and unit [A].
    lamp_voltage : numpy.ndarray
        RMS voltage across the lamp [V] (zero when the lamp is bypassed).
    lamp_power : numpy.ndarray
        Power into the lamp [W].
    load_power : numpy.ndarray
        Real power into the unit [W], ``current**2 * Re(Z)``; for a reactive unit
        this is the real power, and ``source_voltage * current`` is the apparent
        power, larger than the sum of the real powers.
    filament_temperature : numpy.ndarray
        Lamp filament temperature [K] (ambient when the lamp is bypassed).
    glow : numpy.ndarray
        Glow class of the lamp (str), one of ``shop.physics.glow.GLOW_CLASSES``; empty
        where there is no operating point.
    state : numpy.ndarray
        One of ``OPERATING_STATES`` (str) per point. Where it is ``no_operating_point``
        every number above is NaN: the unit cannot draw its power through the lamp and
        will cycle or not start.
    peak_current : numpy.ndarray
        Largest instantaneous current [A]; ``sqrt(2)`` times the RMS for a phasor unit.
    average_current, average_load_voltage : numpy.ndarray
        Means of the rectified current [A] and unit voltage [V]: what an average-responding
        meter senses (it shows 1.111 times that, the sine's form factor).
    dc_voltage, ripple_voltage : numpy.ndarray
        A rectifier's mean output voltage and its peak-to-peak ripple [V]; NaN otherwise.
    conduction_angle : numpy.ndarray
        How long a rectifier's diodes conduct in each pulse [degrees]; NaN otherwise.
    """

    source_voltage: np.ndarray
    load_voltage: np.ndarray
    current: np.ndarray
    lamp_voltage: np.ndarray
    lamp_power: np.ndarray
    load_power: np.ndarray
    filament_temperature: np.ndarray
    glow: np.ndarray
    state: np.ndarray = None
    peak_current: np.ndarray = None
    average_current: np.ndarray = None
    average_load_voltage: np.ndarray = None
    dc_voltage: np.ndarray = None
    ripple_voltage: np.ndarray = None
    conduction_angle: np.ndarray = None

    @property
    def operating(self):
        """Where the unit has a steady operating point (running or off) [bool array]."""
        return np.asarray(self.state) != NO_OPERATING_POINT


def check_voltage(value, name):
    """Return ``value`` as a float array of volts, refusing NaN, infinite and negative volts."""
    try:
        voltage = np.asarray(value, dtype=float)
    except (TypeError, ValueError) as error:
        raise ValueError(f"{name} must be a number of volts (got {value!r})") from error
    if np.isnan(voltage).any():
        raise ValueError(f"{name} must be a number of volts, not NaN")
    if np.isinf(voltage).any():
        raise ValueError(f"{name} must be finite (got an infinite voltage)")
    if (voltage < 0).any():
        raise ValueError(f"{name} must not be negative (got {voltage.min():g} V)")
    return voltage


def check_source_resistance(value):
    """Return the source resistance as a float [ohm], refusing negative, NaN and inf."""
    try:
        resistance = float(value)
    except (TypeError, ValueError) as error:
        raise ValueError(f"source_resistance must be one number of ohms (got {value!r})") from error
    if not np.isfinite(resistance):
        raise ValueError(f"source_resistance must be finite (got {resistance})")
    if resistance < 0:
        raise ValueError(f"source_resistance must not be negative (got {resistance:g} ohm)")
    return resistance


def check_frequency(value):
    """Return the source frequency as a float [Hz], refusing zero, negative, NaN and inf."""
    try:
        frequency = float(value)
    except (TypeError, ValueError) as error:
        raise ValueError(f"frequency must be one number of hertz (got {value!r})") from error
    if not np.isfinite(frequency) or frequency <= 0:
        raise ValueError(f"frequency must be positive and finite (got {frequency} Hz)")
    return frequency


def check_load(load):
    """Refuse an object that does not follow the load protocol, naming ``load``."""
    if not isinstance(load, Load):
        raise ValueError(
            f"load must follow the load protocol of shop.physics.loads (rated_power, "
            f"impedance, scaled, describe, may_cycle); got {type(load).__name__}"
        )


def _solver_tolerance(source_voltage):
    return SOLVER_RELATIVE_TOLERANCE * source_voltage


def _check_residual(residual, target):
    limit = SOLVER_RESIDUAL_LIMIT * np.maximum(target, 1.0)
    if (np.abs(residual) > limit).any():
        worst = np.argmax(np.abs(residual) / limit)
        raise RuntimeError(
            f"series solver did not converge: residual {residual.flat[worst]:.3g} V at "
            f"{target.flat[worst]:g} V source (limit {limit.flat[worst]:.3g} V)"
        )


def _load_shape(load, frequency):
    return np.shape(load.impedance(0.0, frequency))


def _open_columns(impedance, name="load"):
    """Which loads are open (infinite impedance at every current), refusing a mixture."""
    infinite = ~np.isfinite(impedance)
    open_ = infinite.all(axis=0)
    if (infinite.any(axis=0) & ~open_).any():
        raise ValueError(
            f"{name} impedance must be finite at every current or infinite (open) at every "
            "current; a load that opens at some currents needs a time-domain model"
        )
    return open_


def _unit_side(load, current, target, frequency, open_):
    """Unit volts and real power from the current (open units: no current, full source)."""
    impedance = load.impedance(current, frequency)
    with np.errstate(invalid="ignore"):
        load_voltage = np.where(open_, target, current * np.abs(impedance))
        load_power = np.where(open_, 0.0, current**2 * impedance.real)
    return load_voltage, load_power


def _required_source(grid_voltage, grid_current, impedance, open_, source_resistance):
    """Source volts that drive the lamp at curve points: ``|V_lamp + I (R_s + Z)|``."""
    with np.errstate(invalid="ignore"):
        return np.abs(
            grid_voltage + grid_current * (source_resistance + np.where(open_, 0.0, impedance))
        )


def _grid_table(curve, load, load_shape, source_resistance, frequency, rows):
    """Open mask and the source volts needed at the curve's ``rows``, one column per load.

    Returns ``(open_, required)``, ``required`` shaped ``(rows.size, columns)``; the first
    curve point (no current) needs no source volts. Refuses a load that opens at some
    currents only, or whose needed source volts do not rise with the current.
    """
    column = (-1,) + (1,) * len(load_shape)
    voltage, current = curve.voltage[rows], curve.current[rows]
    impedance = load.impedance(current.reshape(column), frequency)
    impedance = np.broadcast_to(impedance, (rows.size,) + load_shape).reshape(rows.size, -1)
    open_ = _open_columns(impedance[rows > 0])
    required = _required_source(
        voltage[:, None], current[:, None], impedance, open_, source_resistance
    )
    required[rows == 0] = 0.0
    if not (np.diff(required, axis=0) > 0).all():
        raise ValueError(
            "load has no unique operating point with this lamp: the source voltage needed "
            "does not rise with the current (a load whose voltage falls as it draws more, "
            "such as a constant-power input, needs its own model)"
        )
    return open_, required


def _series_solution(lamp, load, target, source_resistance, frequency):
    """Lamp volts, current and the open-unit mask, shaped like target and load broadcast.

    Each point starts bracketed between the two neighbouring points of the lamp's curve
    where the source volts it needs pass its target. With few distinct loads (columns) they
    are tabulated on the whole curve, per column, and each point found by ``searchsorted``.
    With many (a draw per reading, as the draw inference asks) a whole table would grow
    with the readings: the loads are tabulated (and checked: open or not, rising) on every
    ``WIDE_LOAD_STRIDE``-th curve point, and each point's bracket narrowed from there by a
    bisection over the curve's indices, every point at once. Both find the same bracket.
    """
    load_shape = _load_shape(load, frequency)
    shape = np.broadcast_shapes(target.shape, load_shape)
    curve = lamp.curve()
    grid_voltage = np.asarray(curve.voltage, dtype=float)
    grid_current = np.asarray(curve.current, dtype=float)
    size = grid_voltage.size
    columns = int(np.prod(load_shape, dtype=int))
    narrow = columns <= NARROW_LOAD_COLUMNS
    rows = np.arange(size) if narrow else np.unique(np.r_[0:size:WIDE_LOAD_STRIDE, size - 1])
    open_columns, required = _grid_table(
        curve, load, load_shape, source_resistance, frequency, rows
    )
    open_ = np.broadcast_to(open_columns.reshape(load_shape), shape).ravel()
    column_of_point = np.broadcast_to(np.arange(columns).reshape(load_shape), shape).ravel()
    flat_target = np.broadcast_to(target, shape).ravel()
    largest = required[-1, column_of_point]
    beyond = (flat_target > largest) & ~open_
    if beyond.any():
        worst = np.argmax(np.where(beyond, flat_target - largest, -np.inf))
        raise ValueError(
            f"source_voltage {flat_target[worst]:g} V is beyond what this lamp's table supports "
            f"with this load and source resistance (at most {largest[worst]:.4g} V)"
        )

    def needed_at(index):
        """The source volts each point needs at its own curve index."""
        impedance = load.impedance(grid_current[index].reshape(shape), frequency).ravel()
        needed = _required_source(
            grid_voltage[index], grid_current[index], impedance, open_, source_resistance
        )
        return np.where(index == 0, 0.0, needed)

    # How many curve points need less than the target (searchsorted's left side).
    if narrow:
        index = np.empty(flat_target.size, dtype=np.intp)
        for column in range(columns):
            points = column_of_point == column
            index[points] = np.searchsorted(required[:, column], flat_target[points])
    else:
        below = np.zeros(flat_target.size, dtype=np.intp)
        for row in range(rows.size):
            below += required[row, column_of_point] < flat_target
        low = np.where(below > 0, rows[np.maximum(below - 1, 0)] + 1, 0)
        high = rows[np.minimum(below, rows.size - 1)]
        while (active := low < high).any():
            middle = (low + high) // 2
            short = needed_at(middle) < flat_target
            low = np.where(active & short, middle + 1, low)
            high = np.where(active & ~short, middle, high)
        index = low
    index = np.clip(index, 1, size - 1)
    if narrow:
        f_lower = required[index - 1, column_of_point] - flat_target
        f_upper = required[index, column_of_point] - flat_target
    else:
        f_lower = needed_at(index - 1) - flat_target
        f_upper = needed_at(index) - flat_target
    lower, upper = grid_voltage[index - 1], grid_voltage[index]
    latest = {}

    def residual(lamp_voltage):
        current = np.asarray(lamp.current(lamp_voltage), dtype=float)
        latest.update(voltage=lamp_voltage, current=current)
        impedance = load.impedance(current.reshape(shape), frequency).ravel()
        with np.errstate(invalid="ignore"):
            needed = np.abs(lamp_voltage + current * (source_resistance + impedance))
        return np.where(open_, 0.0, needed - flat_target)

    lamp_voltage, remainder = bracketed_root(
        residual, lower, upper, f_lower, f_upper, _solver_tolerance(flat_target)
    )
    _check_residual(remainder, flat_target)
    # The last evaluation saw every point at its root unless no step was needed at all.
    if latest and np.array_equal(latest["voltage"], lamp_voltage):
        current = latest["current"]
    else:
        current = np.asarray(lamp.current(lamp_voltage), dtype=float)
    open_ = open_.reshape(shape)
    current = np.where(open_, 0.0, current.reshape(shape))
    lamp_voltage = np.where(open_, 0.0, lamp_voltage.reshape(shape))
    return lamp_voltage, current, open_


def _bypassed_solution(load, target, source_resistance, frequency):
    """Current and the open-unit mask with the lamp shorted out, shaped like the broadcast."""
    shape = np.broadcast_shapes(target.shape, _load_shape(load, frequency))
    flat_target = np.broadcast_to(target, shape).ravel()
    cold = np.broadcast_to(load.impedance(0.0, frequency), shape).ravel()
    open_ = ~np.isfinite(cold)
    start = np.abs(source_resistance + np.where(open_, 1.0, cold))
    if ((start == 0) & (flat_target > 0)).any():
        raise ValueError(
            "source_resistance must be positive to bypass the lamp on a dead short: the "
            "current would be unbounded"
        )

    def residual(current):
        impedance = load.impedance(current.reshape(shape), frequency).ravel()
        with np.errstate(invalid="ignore"):
            needed = current * np.abs(source_resistance + impedance)
        return np.where(open_, 0.0, needed - flat_target)

    with np.errstate(divide="ignore", invalid="ignore"):
        upper = np.where(flat_target > 0, flat_target / start, 0.0)
    f_upper = residual(upper)
    for _ in range(BRACKET_MAX_DOUBLINGS):
        short_of = f_upper < 0
        if not short_of.any():
            break
        upper = np.where(short_of, 2 * upper, upper)
        f_upper = residual(upper)
    else:
        raise ValueError("load has no operating point straight on this source")
    current, remainder = bracketed_root(
        residual, np.zeros_like(upper), upper, -flat_target, f_upper, _solver_tolerance(flat_target)
    )
    _check_residual(remainder, flat_target)
    open_ = open_.reshape(shape)
    return np.where(open_, 0.0, current.reshape(shape)), open_


def _checked(load, source_voltage, source_resistance, frequency):
    check_load(load)
    return (
        check_voltage(source_voltage, "source_voltage"),
        check_source_resistance(source_resistance),
        check_frequency(frequency),
    )


def _constant_power_solution(lamp, load, target, source_resistance, bypassed):
    """Lamp volts, current, open mask and state for a constant-power unit (see its Notes)."""
    power = np.asarray(load.rated_power, dtype=float)
    shape = np.broadcast_shapes(target.shape, power.shape)
    flat_target = np.broadcast_to(target, shape).ravel()
    flat_power = np.broadcast_to(power, shape).ravel()
    lamp_voltage = np.zeros(flat_target.size)
    current = np.zeros(flat_target.size)
    state = np.full(flat_target.size, STEADY, dtype=f"<U{max(map(len, OPERATING_STATES))}")
    off = (flat_power == 0) | (flat_target < load.start_voltage)
    state[off] = OFF
    running = ~off & np.isfinite(flat_power)
    state[~off & ~running] = NO_OPERATING_POINT
    if bypassed:
        # V_s = R_s I + P / I: the root on the falling side, written without cancellation.
        with np.errstate(invalid="ignore"):
            root = np.sqrt(flat_target**2 - 4.0 * flat_power * source_resistance)
            current = np.where(running, 2.0 * flat_power / (flat_target + root), 0.0)
        state[running & np.isnan(current)] = NO_OPERATING_POINT
    elif running.any():
        curve = lamp.curve()
        grid_voltage = np.asarray(curve.voltage[1:], dtype=float)
        grid_current = np.asarray(curve.current[1:], dtype=float)
        powers, column = np.unique(flat_power[running], return_inverse=True)
        required = (grid_voltage + source_resistance * grid_current)[:, None] + powers[
            None, :
        ] / grid_current[:, None]
        lowest = np.argmin(required, axis=0)
        points = np.flatnonzero(running)
        goal = flat_target[points]
        reachable = goal >= required[lowest[column], column]
        state[points[~reachable]] = NO_OPERATING_POINT
        points, goal, column = points[reachable], goal[reachable], column[reachable]
        if points.size:
            falling = np.arange(grid_voltage.size)[:, None] <= lowest[column][None, :]
            above = ((required[:, column] >= goal) & falling).sum(axis=0)
            index = np.clip(above, 1, np.maximum(lowest[column], 1))
            lower = np.where(above == 0, 0.0, grid_voltage[index - 1])
            upper = grid_voltage[index]
            f_lower = np.where(above == 0, np.inf, required[index - 1, column] - goal)
            f_upper = required[index, column] - goal
            point_power = powers[column]

            def residual(voltage):
                amps = np.asarray(lamp.current(voltage), dtype=float)
                with np.errstate(divide="ignore"):
                    return voltage + source_resistance * amps + point_power / amps - goal

            found, remainder = bracketed_root(
                residual, lower, upper, f_lower, f_upper, _solver_tolerance(goal)
            )
            _check_residual(remainder, goal)
            lamp_voltage[points] = found
            current[points] = np.asarray(lamp.current(found), dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        unit_voltage = flat_power / current
    stopped = (state == STEADY) & (unit_voltage < load.stop_voltage)
    state[stopped] = NO_OPERATING_POINT
    missing = state == NO_OPERATING_POINT
    current = np.where(missing, np.nan, current)
    lamp_voltage = np.where(missing, np.nan, lamp_voltage)
    return (
        lamp_voltage.reshape(shape),
        current.reshape(shape),
        (state == OFF).reshape(shape),
        state.reshape(shape),
    )


def _operating_point(lamp, load, target, source_resistance, frequency, bypassed):
    """Lamp volts, current, open mask and state: the solver each kind of load needs."""
    if getattr(load, "constant_power", False):
        return _constant_power_solution(lamp, load, target, source_resistance, bypassed)
    if bypassed:
        current, open_ = _bypassed_solution(load, target, source_resistance, frequency)
        lamp_voltage = np.zeros(current.shape)
    else:
        lamp_voltage, current, open_ = _series_solution(
            lamp, load, target, source_resistance, frequency
        )
    state = np.full(current.shape, STEADY, dtype=f"<U{max(map(len, OPERATING_STATES))}")
    return lamp_voltage, current, open_, state


def _capacitor_input(lamp, load, target, source_resistance, frequency, bypassed):
    """A capacitor-input switch-mode unit's figures and states (shop.physics.capacitor_input)."""
    # Where the same power cannot be drawn as a resistance would draw it, it cannot be drawn
    # in peaks either: those columns skip the shooting (the stop voltage set aside, which
    # the two inputs meet differently).
    corrected = copy.copy(load)
    corrected.stop_voltage = 0.0
    state = _constant_power_solution(lamp, corrected, target, source_resistance, bypassed)[3]
    figures, off, missing, shape = capacitor_input_solution(
        lamp,
        load,
        target,
        source_resistance,
        frequency,
        bypassed,
        unreachable=state == NO_OPERATING_POINT,
    )
    figures["average_load_voltage"][off] = SINE_AVERAGE_PER_RMS * figures["load_voltage"][off]
    state = np.full(off.size, STEADY, dtype=f"<U{max(map(len, OPERATING_STATES))}")
    state[off] = OFF
    state[missing] = NO_OPERATING_POINT
    solution = {name: values.reshape(shape) for name, values in figures.items()}
    solution["state"] = state.reshape(shape)
    return solution


def _solve(lamp, load, target, source_resistance, frequency, bypassed):
    """Every figure of the operating point as a dict of arrays, phasor or time domain."""
    if getattr(load, "input_stage", None) == "capacitor":
        return _capacitor_input(lamp, load, target, source_resistance, frequency, bypassed)
    if getattr(load, "waveform", False):
        figures = periodic_steady_state(
            None if bypassed else lamp, load, target, source_resistance, frequency
        )
        solution = dict(vars(figures))
        solution["state"] = np.full(
            figures.current.shape, STEADY, dtype=f"<U{max(map(len, OPERATING_STATES))}"
        )
        return solution
    lamp_voltage, current, open_, state = _operating_point(
        lamp, load, target, source_resistance, frequency, bypassed
    )
    load_voltage, load_power = _unit_side(
        load, current, np.broadcast_to(target, current.shape), frequency, open_
    )
    nan = np.full(current.shape, np.nan)
    return {
        "lamp_voltage": lamp_voltage,
        "current": current,
        "load_voltage": load_voltage,
        "load_power": load_power,
        "state": state,
        # Phasors are sinusoids: crest sqrt(2) and rectified mean 2 sqrt(2) / pi of the RMS.
        "peak_current": np.sqrt(2.0) * current,
        "average_current": SINE_AVERAGE_PER_RMS * current,
        "average_load_voltage": SINE_AVERAGE_PER_RMS * load_voltage,
        "dc_voltage": nan,
        "ripple_voltage": nan,
        "conduction_angle": nan,
    }


def _result(lamp, target, solution):
    current = solution["current"]
    target = np.broadcast_to(target, current.shape).copy()
    lamp_voltage = solution["lamp_voltage"]
    state = solution["state"]
    operating = state != NO_OPERATING_POINT
    temperature = np.full(current.shape, np.nan)
    glow = np.full(current.shape, "", dtype=f"<U{max(map(len, GLOW_CLASSES))}")
    if operating.any():
        temperature[operating] = lamp.filament_temperature(lamp_voltage[operating])
        glow[operating] = lamp.glow(lamp_voltage[operating])
    return SeriesResult(
        source_voltage=target,
        load_voltage=solution["load_voltage"],
        current=current,
        lamp_voltage=lamp_voltage,
        lamp_power=lamp_voltage * current,
        load_power=solution["load_power"],
        filament_temperature=temperature,
        glow=glow,
        state=state,
        peak_current=solution["peak_current"],
        average_current=solution["average_current"],
        average_load_voltage=solution["average_load_voltage"],
        dc_voltage=solution["dc_voltage"],
        ripple_voltage=solution["ripple_voltage"],
        conduction_angle=solution["conduction_angle"],
    )


def solve_series(lamp, load, source_voltage, source_resistance=0.0, frequency=DEFAULT_FREQUENCY):
    """Steady operating point of a unit powered through a series lamp, for a whole sweep.

    Parameters
    ----------
    lamp : Lamp or LampBank
        The series lamp (``shop.physics.lamp``); anything with ``curve()``,
        ``current(voltage)``, ``filament_temperature(voltage)`` and
        ``glow(voltage)`` will do.
    load : Load
        The unit, any model following the protocol of ``shop.physics.loads``.
        A model with array parameters is solved for each, broadcast against
        ``source_voltage``.
    source_voltage : numeric
        RMS output voltage of the rig [V], scalar or array, ``>= 0``.
    source_resistance : float, default 0.0
        Resistance of the rig's windings (autotransformer and isolation
        transformer) in series [ohm], ``>= 0``.
    frequency : float, default 60.0
        Source frequency [Hz].

    Returns
    -------
    SeriesResult
        Arrays shaped like ``source_voltage`` (broadcast against the load's
        parameters).

    Raises
    ------
    ValueError
        For negative, NaN or infinite volts, a negative source resistance, a
        load outside the protocol or one with no unique operating point, and a
        source voltage beyond what the lamp's table supports (naming
        ``source_voltage`` and the largest it supports).

    Notes
    -----
    The lamp is a resistance and the unit an impedance :math:`Z(I)`, so the
    phasor sum of the drops is the source voltage:

    .. math:: V_s = I \\, |R_{lamp}(I) + R_s + Z(I)| = |V_{lamp} + I (R_s + Z(I))|

    On the lamp's own curve (``lamp.curve()``: voltage and current on a dense
    grid) every point gives :math:`I` and :math:`V_{lamp}`, hence the source
    voltage that drives it. For a passive unit that source voltage rises with
    the current, so its inverse is interpolated on the grid for a bracketed
    first guess, and every point is then polished at once by Illinois false
    position in the lamp voltage (each step asks ``lamp.current``) until the
    residual is about 1e-13 of the source voltage. The drops add as phasors,
    never as RMS numbers. A unit whose impedance is infinite is open: no
    current flows and it sees the whole source voltage.

    A constant-power unit (``load.constant_power``, e.g.
    :class:`shop.physics.switch_mode.ConstantPowerLoad`) needs a source voltage that falls
    and then rises with the current; it is solved on the falling side (the state a running
    supply settles in), and a point below the minimum, or whose unit volts fall below the
    unit's stop voltage, is reported in ``state`` as ``no_operating_point`` with NaN
    numbers, never as an error. Below its start voltage the unit is off and draws nothing.
    """
    target, source_resistance, frequency = _checked(
        load, source_voltage, source_resistance, frequency
    )
    return _result(lamp, target, _solve(lamp, load, target, source_resistance, frequency, False))


def solve_bypassed(lamp, load, source_voltage, source_resistance=0.0, frequency=DEFAULT_FREQUENCY):
    """Operating point with the lamp bypassed: the unit straight on the source through the rig.

    Parameters
    ----------
    lamp : Lamp or LampBank
        The series lamp, shorted by its bypass switch (it sits at 0 V, ambient
        temperature, dark).
    load : Load
        The unit, any model following the protocol of ``shop.physics.loads``.
    source_voltage : numeric
        RMS output voltage of the rig [V], ``>= 0``.
    source_resistance : float, default 0.0
        Resistance of the rig's windings [ohm], ``>= 0``; with a dead short
        and no source resistance the current is unbounded and refused.
    frequency : float, default 60.0
        Source frequency [Hz].

    Returns
    -------
    SeriesResult
        With ``lamp_voltage`` and ``lamp_power`` zero.

    Notes
    -----
    :math:`V_s = I \\, |R_s + Z(I)|`, solved for :math:`I` by Illinois false
    position in a bracket grown from :math:`V_s / |R_s + Z(0)|` by doubling.
    """
    target, source_resistance, frequency = _checked(
        load, source_voltage, source_resistance, frequency
    )
    return _result(lamp, target, _solve(lamp, load, target, source_resistance, frequency, True))


def check_response(value, name):
    """Return a meter response, refusing anything outside ``METER_RESPONSES`` by name."""
    if value not in METER_RESPONSES:
        raise ValueError(f"{name} must be one of {', '.join(METER_RESPONSES)} (got {value!r})")
    return value


def meter_view(rms, average, response):
    """What a meter of that response shows: the RMS, or the rectified mean calibrated on a sine.

    Parameters
    ----------
    rms, average : numeric
        RMS and rectified mean of the quantity [V or A].
    response : str
        ``"true_rms"`` or ``"average_responding"``.

    Returns
    -------
    numpy.ndarray
        The reading [V or A]: ``rms``, or ``average / SINE_AVERAGE_PER_RMS`` (the mean times
        the sine's form factor, 1.1107), which equals the RMS only for a sine.
    """
    if response == AVERAGE_RESPONDING:
        return np.asarray(average, dtype=float) / SINE_AVERAGE_PER_RMS
    return np.asarray(rms, dtype=float)


def meter_readings(
    lamp,
    load,
    source_voltage,
    source_resistance=0.0,
    frequency=DEFAULT_FREQUENCY,
    *,
    lamp_bypassed=False,
    voltmeter_response=TRUE_RMS,
    ammeter_response=TRUE_RMS,
):
    """Unit volts and current as meters of the given responses would show them.

    Parameters
    ----------
    lamp, load, source_voltage, source_resistance, frequency
        As :func:`solve_series`.
    lamp_bypassed : bool, default False
        Whether the lamp is switched out.
    voltmeter_response, ammeter_response : str, default "true_rms"
        ``"true_rms"`` or ``"average_responding"`` (RMS-calibrated on a sine).

    Returns
    -------
    load_voltage, current : numpy.ndarray
        The readings [V, A]; NaN where a constant-power unit has no operating point.

    Notes
    -----
    A rectifier's current flows in peaks: an average-responding ammeter reads it well below
    its RMS (its crest factor is high), and the unit's voltage, flattened at the crests by
    the lamp's drop, reads a little differently too. Comparing like with like, the
    judgement predicts the reading of the meter actually used.
    """
    target, source_resistance, frequency = _checked(
        load, source_voltage, source_resistance, frequency
    )
    solution = _solve(lamp, load, target, source_resistance, frequency, lamp_bypassed)
    return (
        meter_view(solution["load_voltage"], solution["average_load_voltage"], voltmeter_response),
        meter_view(solution["current"], solution["average_current"], ammeter_response),
    )


def unit_operating_point(
    lamp,
    load,
    source_voltage,
    source_resistance=0.0,
    frequency=DEFAULT_FREQUENCY,
    *,
    lamp_bypassed=False,
):
    """Unit volts and current alone: the operating point without the lamp's glow.

    The same solution as :func:`solve_series` (or :func:`solve_bypassed` when
    ``lamp_bypassed``), for searches that call the solver many times and need
    only what the meters read.

    Parameters
    ----------
    lamp : Lamp or LampBank
        The series lamp.
    load : Load
        The unit, any model following the protocol of ``shop.physics.loads``.
    source_voltage : numeric
        RMS output voltage of the rig [V], ``>= 0``.
    source_resistance : float, default 0.0
        Resistance of the rig's windings [ohm], ``>= 0``.
    frequency : float, default 60.0
        Source frequency [Hz].
    lamp_bypassed : bool, default False
        Whether the lamp is switched out.

    Returns
    -------
    load_voltage, current : numpy.ndarray
        RMS unit volts [V] and current [A], shaped like ``source_voltage``
        broadcast against the load's parameters; NaN where a constant-power unit has
        no operating point.
    """
    target, source_resistance, frequency = _checked(
        load, source_voltage, source_resistance, frequency
    )
    solution = _solve(lamp, load, target, source_resistance, frequency, lamp_bypassed)
    return solution["load_voltage"], solution["current"]
