"""The slow phase of a switch-on: heaters warming for tens of seconds, the circuit in step.

A valve set's heaters warm with a time constant of seconds to tens of seconds, while the lamp's
filament (well under 0.1 s) and the circuit's electrical states (a reservoir, a core's flux)
follow within a fraction of a second. After ``DETAILED_SECONDS``, followed cycle by cycle by
:func:`shop.physics.transient.switch_on`, only the heaters' temperatures are integrated here;
the lamp and everything electrical sit at the periodic steady state of the circuit whose
heaters are held at their present resistance (quasi-static). That steady state is tabulated
once per run on a grid of the heaters' total conductance (and of a valve rectifier's warmth
while it still warms), every column at once, and the heaters' ODE is integrated on it.
"""

from dataclasses import dataclass

import numpy as np
from scipy.interpolate import CubicSpline

from shop.physics.circuit import SINE_AVERAGE_PER_RMS, solve_bypassed, solve_series
from shop.physics.composite import CompositeLoad
from shop.physics.loads import ResistiveLoad
from shop.physics.waveform import Network, _flatten, _solve

# The part followed cycle by cycle before the slow phase takes over [s]: the lamp's filament
# settles within about 0.1 s (fixtures/physics/checks/load_reference.csv, from memory) and a
# reservoir charges within a few of its own time constants, tens of milliseconds. Half a
# second halves the cost of a valve set's switch-on against a whole one; measured against the
# detailed integrator run to 5 s on the nameplate radio (120 V, 100 W lamp, draws 0.1-10x),
# the half cycles' RMS currents agree within 0.13 % at the declared draw and within 1.3 % at
# any draw from 1.5 s on (1.4 % with a whole second): the lamp's lag behind the heaters.
DETAILED_SECONDS = 0.5
# Nodes of the held-heater table: the heaters' total conductance, log-spaced from their
# hottest to their cold value, and a valve rectifier's warmth, log-spaced from where the slow
# phase begins to fully warm. Cubic splines through them agree with the steady state solved
# directly to within 1e-4 for the valve radio (7e-5 seen) and about 2e-4 across draws of
# 0.1-10x, far inside any meter's uncertainty (tests/physics/test_warm_up.py).
CONDUCTANCE_NODES = 10
WARMTH_NODES = 5
# The table reaches heaters this much above the highest source voltage (or their rating).
HEATER_VOLTAGE_MARGIN = 1.1
# RK4 steps of the slow phase: at least this many per heater time constant, and no longer than
# SLOW_STEP_MAX so that a reading's instant is met within half of it.
STEPS_PER_TIME_CONSTANT = 50
SLOW_STEP_MAX = 0.2  # [s]
FIGURES = (
    "current",
    "load_voltage",
    "average_current",
    "average_load_voltage",
    "peak_current",
    "lamp_voltage",
)


def lamp_filaments(lamp):
    """(filament, multiplier) pairs of a lamp, a bank of lamps, or a spread lamp."""
    base = getattr(lamp, "base", None)
    if base is not None:
        return [
            (filament, multiplier * lamp.factor) for filament, multiplier in lamp_filaments(base)
        ]
    return [(member, 1.0) for member in getattr(lamp, "lamps", (lamp,))]


@dataclass(frozen=True)
class SlowPhase:
    """The slow phase, step by step: heater temperatures and the circuit in step with them.

    Arrays over time have the steps on their first axis (after the heaters' for
    ``heater_temperature``) and the columns (source voltages broadcast against the load's
    draw factor) after it.

    Attributes
    ----------
    time : numpy.ndarray
        The instant of each step since switch-on [s], shape ``(S,)``.
    heater_temperature : numpy.ndarray
        Each heater's temperature there [K], shape ``(H, S) + columns``, in the order of
        :attr:`shop.physics.waveform.Network.heaters`.
    current, load_voltage : numpy.ndarray
        RMS current [A] and unit voltage [V] of the held-heater steady state there.
    average_current, average_load_voltage : numpy.ndarray
        Their rectified means [A, V].
    peak_current : numpy.ndarray
        Largest instantaneous current over a cycle there [A].
    lamp_voltage : numpy.ndarray
        RMS lamp voltage [V] (0 when bypassed).
    filament_temperature : numpy.ndarray
        The hottest lamp filament's steady temperature at that lamp voltage [K] (NaN when
        bypassed).
    """

    time: np.ndarray
    heater_temperature: np.ndarray
    current: np.ndarray
    load_voltage: np.ndarray
    average_current: np.ndarray
    average_load_voltage: np.ndarray
    peak_current: np.ndarray
    lamp_voltage: np.ndarray
    filament_temperature: np.ndarray


class _HeldNetwork(Network):
    """The unit's network with its heaters held at a conductance, a rectifier at a warmth.

    Both are given per column; the heaters are then no unknowns of the shooting in
    :func:`shop.physics.waveform._solve`, which batches its columns by tiling them (checked
    at every call, so that a change there cannot go unnoticed).
    """

    def __init__(self, load, frequency, factor, conductance, warmth):
        super().__init__(load, frequency)
        self.held_heaters, self.heaters = self.heaters, []
        self._factor = factor
        self._held = conductance
        self._warmth = warmth

    def heater_conductance(self, voltage):
        """The held conductance of each column [S], whatever the voltage (time constants)."""
        return self._held

    def kernel(self, factor, series_resistance, heater_conductance, warm=1.0):
        repeats, rest = divmod(np.size(factor), self._factor.size)
        if rest or not np.array_equal(factor, np.tile(self._factor, repeats)):
            raise RuntimeError(
                "the steady-state shooting no longer tiles its columns: the held heaters "
                "cannot be matched to them"
            )
        return super().kernel(
            factor,
            series_resistance,
            heater_conductance + np.tile(self._held, repeats),
            np.tile(self._warmth, repeats),
        )


def _held_phasor(lamp, load, source, factor, conductance, source_resistance, frequency):
    """Held-heater steady state without a rectifier: one composite per held conductance."""
    parts = _flatten(load._copy_with_factor(np.array(1.0)))
    others = [part.scaled(share) for part, share in parts if not hasattr(part, "element")]
    rated_voltage = next(float(part.rated_voltage) for part, _ in parts if hasattr(part, "element"))
    figures = {name: np.empty(source.size) for name in FIGURES}
    solve = solve_bypassed if lamp is None else solve_series
    for value in np.unique(conductance):
        columns = conductance == value
        unit = CompositeLoad(
            [*others, ResistiveLoad(1.0 / value, rated_voltage=rated_voltage)],
            draw_factor=factor[columns],
        )
        result = solve(lamp, unit, source[columns], source_resistance, frequency)
        for name in FIGURES:
            figures[name][columns] = getattr(result, name)
    return figures


def _held_waveform(lamp, load, source, factor, conductance, warmth, source_resistance, frequency):
    """Held-heater steady state of a rectifying unit: one batched shooting of all columns."""
    figures = {name: np.zeros(source.size) for name in FIGURES}
    # An open unit (no copies of it) sees the whole source; no source, nothing at all.
    figures["load_voltage"] = np.where(factor == 0, source, 0.0)
    figures["average_load_voltage"] = figures["load_voltage"] * SINE_AVERAGE_PER_RMS
    active = (source > 0) & (factor > 0)
    if active.any():
        network = _HeldNetwork(load, frequency, factor[active], conductance[active], warmth[active])
        # The first guess takes the unit as drawing what it would with these heaters held,
        # as a composite with a resistance standing in for them would be rated.
        held = network.held_heaters
        heaters = sum(multiplier * heater.rated_power for heater, multiplier in held)
        rated_voltage = float(held[0][0].rated_voltage)
        solved = _solve(
            network,
            lamp,
            source[active],
            factor[active],
            source_resistance,
            float(load._copy_with_factor(np.array(1.0)).rated_power)
            - heaters
            + rated_voltage**2 * conductance[active],
        )
        for name in FIGURES:
            figures[name][active] = solved[name]
    return figures


def held_steady_state(
    lamp,
    load,
    source_voltage,
    heater_conductance,
    warmth=1.0,
    *,
    source_resistance=0.0,
    frequency=60.0,
    lamp_bypassed=False,
):
    """Periodic steady state of a unit whose heaters are held at a conductance, every column.

    Parameters
    ----------
    lamp : Lamp or LampBank
        The series lamp, at its steady state (a resistance set by its RMS current).
    load : load
        The unit, holding heaters (:class:`shop.physics.heater.HeaterLoad`), with a draw
        factor of shape ``P``.
    source_voltage : numeric
        RMS source voltage [V].
    heater_conductance : numeric
        Total conductance of one unit's heaters, held [S].
    warmth : numeric, default 1.0
        How far a valve rectifier conducts, ``(0, 1]``, as :meth:`Network.kernel` takes it.
    source_resistance, frequency, lamp_bypassed
        The rig's windings [ohm], the source frequency [Hz] and whether the lamp is
        switched out, as :func:`shop.physics.circuit.unit_operating_point` takes them.

    Returns
    -------
    dict
        ``FIGURES`` (RMS and rectified-mean current [A] and unit volts [V], peak current [A],
        lamp volts [V]), each shaped like the broadcast of the inputs and ``P``.

    Notes
    -----
    The heaters sit across the unit's terminals, so they reach the circuit only through
    their total conductance. Without a rectifier the held heaters are stood in for by a
    :class:`shop.physics.loads.ResistiveLoad` of that conductance inside a composite of the
    unit's other parts and :func:`shop.physics.circuit.solve_series` solves it (phasors);
    with one, the shooting of :mod:`shop.physics.waveform` solves every column in one batch
    with the conductance (and the rectifier's warmth) held per column.
    """
    network = Network(load, frequency)
    source = np.asarray(source_voltage, dtype=float)
    held = np.asarray(heater_conductance, dtype=float)
    warm = np.asarray(warmth, dtype=float)
    shape = np.broadcast_shapes(source.shape, network.factor.shape, held.shape, warm.shape)
    flat = [
        np.broadcast_to(values, shape).ravel() for values in (source, network.factor, held, warm)
    ]
    lamp = None if lamp_bypassed else lamp
    if network.rectifier is None:
        figures = _held_phasor(lamp, load, *flat[:3], source_resistance, frequency)
    else:
        figures = _held_waveform(lamp, load, *flat, source_resistance, frequency)
    return {name: values.reshape(shape) for name, values in figures.items()}


class _Heaters:
    """The heaters of a unit: resistance and heat loss from their tables, lumped capacities."""

    def __init__(self, heaters):
        self.tables = [heater.element.thermal_table() for heater, _ in heaters]
        self.multipliers = np.array([multiplier for _, multiplier in heaters]).reshape(-1, 1)
        self.capacity = np.array([heater.heat_capacity for heater, _ in heaters]).reshape(-1, 1)

    def read(self, temperatures):
        """Resistance [ohm] and heat loss [W] of each heater, ``(heaters, columns)``."""
        resistance = np.array(
            [
                np.interp(values, table.temperature, table.resistance)
                for values, table in zip(temperatures, self.tables, strict=True)
            ]
        )
        loss = np.array(
            [
                np.interp(values, table.temperature, table.power_loss)
                for values, table in zip(temperatures, self.tables, strict=True)
            ]
        )
        return resistance, loss

    def conductance(self, resistance):
        """Total conductance of one unit's heaters [S] per column."""
        return (self.multipliers / resistance).sum(axis=0)


def _conductance_nodes(heaters, source):
    """Log-spaced total heater conductances from the hottest the heaters reach to cold."""
    hottest = 0.0
    coldest = 0.0
    for heater, multiplier in heaters:
        element = heater.element
        top = min(
            HEATER_VOLTAGE_MARGIN * max(source.max(), element.rated_voltage), element.max_voltage
        )
        hottest += multiplier / float(element.resistance(top))
        coldest += multiplier / element.cold_resistance
    return np.geomspace(hottest, coldest, CONDUCTANCE_NODES)


def slow_phase(
    lamp,
    load,
    source_voltage,
    heater_temperature,
    *,
    start,
    duration,
    source_resistance=0.0,
    frequency=60.0,
    lamp_bypassed=False,
):
    """The heaters' warm-up from ``start`` to ``duration``, the circuit quasi-static.

    Parameters
    ----------
    lamp, load, source_resistance, frequency, lamp_bypassed
        As :func:`held_steady_state`.
    source_voltage : numeric
        RMS source voltage [V], broadcast against the load's draw factor: the columns.
    heater_temperature : numeric
        Each heater's temperature at ``start`` [K], shape ``(H,)`` or ``(H,)`` and the
        columns, in the order of :attr:`shop.physics.waveform.Network.heaters`.
    start : float
        Time since switch-on where the slow phase begins [s] (the end of the detailed part).
    duration : float
        Time since switch-on where it ends [s].

    Returns
    -------
    SlowPhase
        One row per step after ``start``, the last at ``duration`` or just after it.

    Notes
    -----
    Each heater (lumped heat capacity :math:`C_h`, :attr:`HeaterLoad.heat_capacity`) warms
    by its mean electrical power at the unit's RMS voltage :math:`V`,

    .. math:: C_h \\, dT_h/dt = V^2 / R_h(T_h) - P_{loss,h}(T_h),

    with :math:`V` (and every figure) read from the held-heater steady state
    (:func:`held_steady_state`) at the heaters' present total conductance
    :math:`G = \\sum_h m_h / R_h(T_h)` and the rectifier's warmth
    :math:`\\min(t / t_{warm}, 1)` at that instant (the detailed model's linear warm-up). The
    table holds ``CONDUCTANCE_NODES`` conductances (times ``WARMTH_NODES`` warmths while a
    valve rectifier still warms after ``start``), every column solved in one batch, and is
    read by cubic splines in the logarithms. Since the heaters share the unit's terminals
    they meet the circuit only through :math:`G`: any number of heaters, of any warm-up time,
    is followed exactly so, each by its own temperature. RK4 with at least
    ``STEPS_PER_TIME_CONSTANT`` steps per heater time constant, no step longer than
    ``SLOW_STEP_MAX`` and a whole number of steps a second.

    Limitations: the lamp's filament and the circuit's states are taken as settled around
    the heaters (their time constants, under 0.1 s for a lamp, are far shorter than the
    heaters'); a valve rectifier's warm-up is the detailed model's ramp in time, not a
    heater of its own.
    """
    network = Network(load, frequency)
    if not network.heaters:
        raise ValueError("load has no heaters: nothing warms slowly (follow it in detail)")
    source = np.asarray(source_voltage, dtype=float)
    shape = np.broadcast_shapes(source.shape, network.factor.shape)
    size = int(np.prod(shape))
    heaters = _Heaters(network.heaters)
    count = len(network.heaters)
    temperatures = np.asarray(heater_temperature, dtype=float)
    temperatures = temperatures.reshape(
        temperatures.shape + (1,) * (1 + len(shape) - temperatures.ndim)
    )
    temperatures = np.broadcast_to(temperatures, (count,) + shape).reshape(count, size)
    flat_source = np.broadcast_to(source, shape).ravel()
    factor = np.broadcast_to(network.factor, shape).ravel()

    rectifier = network.rectifier
    ramp = 0.0 if rectifier is None else rectifier.warm_up_time
    warmth_nodes = np.array([1.0])
    if ramp > start:
        warmth_nodes = np.geomspace(max(start / ramp, 1e-3), 1.0, WARMTH_NODES)
    conductance_nodes = _conductance_nodes(network.heaters, flat_source)
    grid = (warmth_nodes.size, conductance_nodes.size, size)
    table = held_steady_state(
        lamp,
        load._copy_with_factor(factor),
        np.broadcast_to(flat_source, grid),
        conductance_nodes[None, :, None],
        warmth_nodes[:, None, None],
        source_resistance=source_resistance,
        frequency=frequency,
        lamp_bypassed=lamp_bypassed,
    )
    # (conductance, warmth, column, figure), read by splines of the identity: weights.
    values = np.stack([table[name] for name in FIGURES], axis=-1).transpose(1, 0, 2, 3)
    by_conductance = CubicSpline(np.log(conductance_nodes), np.eye(conductance_nodes.size))
    by_warmth = (
        CubicSpline(np.log(warmth_nodes), np.eye(warmth_nodes.size))
        if warmth_nodes.size > 1
        else None
    )
    lowest, highest = np.log(conductance_nodes[[0, -1]])
    voltage_index = FIGURES.index("load_voltage")

    def figures_at(time, resistance):
        where = np.clip(np.log(heaters.conductance(resistance)), lowest, highest)
        weights = by_conductance(where)  # (columns, conductances)
        if by_warmth is None:
            return np.einsum("cg,gcf->cf", weights, values[:, 0])
        warmth = np.log(min(time / ramp, 1.0))
        return np.einsum("cg,w,gwcf->cf", weights, by_warmth(warmth), values)

    def rates(time, temperatures):
        resistance, loss = heaters.read(temperatures)
        figures = figures_at(time, resistance)
        voltage = figures[:, voltage_index]
        return (voltage * voltage / resistance - loss) / heaters.capacity, figures

    # A whole number of steps a second, so that round times since switch-on are rows.
    shortest = min(heater.warm_up_time for heater, _ in network.heaters)
    step = 1.0 / np.ceil(1.0 / min(SLOW_STEP_MAX, shortest / STEPS_PER_TIME_CONSTANT))
    # The first step only reaches the first whole multiple of the step after the start.
    first = np.floor(start / step + 1e-9) + 1
    last = max(np.ceil(duration / step - 1e-9), first - 1)
    instants = step * np.arange(first, last + 1)
    steps = instants.size
    kept_temperatures = np.empty((steps, count, size))
    kept_figures = np.empty((steps, size, len(FIGURES)))
    k1, _ = rates(start, temperatures)
    time = start
    for n in range(steps):
        h = instants[n] - time
        k2, _ = rates(time + h / 2, temperatures + h / 2 * k1)
        k3, _ = rates(time + h / 2, temperatures + h / 2 * k2)
        k4, _ = rates(time + h, temperatures + h * k3)
        temperatures = temperatures + h / 6 * (k1 + 2 * k2 + 2 * k3 + k4)
        time = instants[n]
        k1, kept_figures[n] = rates(time, temperatures)
        kept_temperatures[n] = temperatures

    def shaped(values):
        return values.reshape(values.shape[:-1] + shape)

    figures = {name: shaped(kept_figures[..., j]) for j, name in enumerate(FIGURES)}
    if lamp_bypassed:
        hottest = np.full(figures["lamp_voltage"].shape, np.nan)
    else:
        hottest = np.max(
            [
                np.asarray(filament.filament_temperature(figures["lamp_voltage"]), dtype=float)
                for filament, _ in lamp_filaments(lamp)
            ],
            axis=0,
        )
    return SlowPhase(
        time=instants,
        heater_temperature=shaped(kept_temperatures.transpose(1, 0, 2)),
        filament_temperature=hottest,
        **figures,
    )
