"""Switch-on transients: a cold filament, cold heaters, a discharged reservoir, a core's inrush."""

from dataclasses import dataclass

import numpy as np

from shop.physics.circuit import solve_bypassed, solve_series
from shop.physics.glow import GLOW_CLASSES, glow_class
from shop.physics.heater import HeaterLoad
from shop.physics.transformer import magnetising_current
from shop.physics.warm_up import DETAILED_SECONDS, lamp_filaments, slow_phase
from shop.physics.waveform import Network

# RK4 steps per mains cycle: the filament's temperature and the circuit's states are smooth
# between a rectifier's kinks, and 64 steps keep the half-cycle RMS current within about 1e-4
# of a step four times finer; more when a time constant of the circuit demands it.
STEPS_PER_CYCLE = 64
STEPS_PER_CYCLE_MAX = 4096
DEFAULT_DURATION = 1.0  # [s]
# Switched at the crest by default: the worst case for a lamp (the cold filament meets the
# full crest voltage); a transformer's worst is at a zero crossing (phase 0).
DEFAULT_PHASE = 90.0  # [degrees]
# Settled once every later half cycle's RMS current is within this fraction of the periodic
# steady state's (the time until the current is within 10 % of steady state).
SETTLE_FRACTION = 0.10
FLASH_THEN_DIMS = "flash_then_dims"
STEADY = "steady"


# How long a switch-on is worth following (follow_time): a lamp settles within a tenth of a
# second, a capacitor input within a few mains cycles; a valve set's heaters and valve
# rectifier take their time constants several times over (settling within 10 % takes two to
# three heater time constants through a lamp at full draw, shop/physics/judgement.py's
# SWITCH_ON_SECONDS notes, but six to eight where the heaters are most of the draw: the
# nameplate guitar amplifier with its output valves pulled, 61-78 s at 230-180 V through a
# 60 W lamp for a 10 s heater); a
# switch-mode unit shows several restarts, if it restarts, in two seconds at its default
# start delay.
QUICK_FOLLOW = 0.5  # [s]
# A unit with heaters followed for longer than this goes over to the slow phase after
# DETAILED_SECONDS; up to it the detailed integration is cheaper than the slow phase's table
# (the nameplate radio followed for 1 s: 0.68 s in detail, 0.76 s with the handover, measured
# on the dev machine).
SLOW_PHASE_AFTER = 2.0  # [s]
SLOW_SPANS = 8.0
SWITCH_MODE_FOLLOW = 2.0  # [s]
LONGEST_FOLLOW = 180.0  # [s]


def follow_time(load):
    """How long to follow a unit's switch-on to see it settle [s].

    ``QUICK_FOLLOW`` for lamps, resistances, transformers and silicon rectifiers;
    ``SLOW_SPANS`` times the slowest heater's warm-up time or valve rectifier's warm-up
    (at most ``LONGEST_FOLLOW``) for a valve set; ``SWITCH_MODE_FOLLOW`` for a switch-mode
    input, long enough to show it restarting. A valve rectifier declared without heaters
    is followed ``SLOW_PHASE_AFTER`` at most: only heaters go over to the cheap slow phase,
    and following a warm-up of seconds cycle by cycle costs seconds.
    """
    if getattr(load, "constant_power", False):
        return SWITCH_MODE_FOLLOW
    parts = list(_parts(load))
    slowest = max(float(getattr(part, "warm_up_time", 0.0) or 0.0) for part in parts)
    heated = any(isinstance(part, HeaterLoad) for part in parts)
    longest = LONGEST_FOLLOW if heated else SLOW_PHASE_AFTER
    return float(np.clip(SLOW_SPANS * slowest, QUICK_FOLLOW, max(longest, QUICK_FOLLOW)))


def _parts(load):
    """The models a unit is built of, composites opened."""
    members = getattr(load, "members", None)
    if members is None:
        yield load
        return
    for member in members:
        yield from _parts(member)


@dataclass(frozen=True)
class SwitchOnTransient:
    """A switch-on, row by row over time, and the figures the verdict and the plot use.

    Arrays over time have the rows on their first axis and the columns (source voltages
    broadcast against the load's draw factor) after it. Up to ``detailed_until`` a row is a
    half cycle followed in detail; after it (a unit with heaters followed for longer than
    :data:`shop.physics.warm_up.DETAILED_SECONDS`) a row is an instant of the heaters' slow
    warm-up, its figures those of the cycle at that instant, the circuit at its periodic
    steady state around the heaters as they are then (:func:`shop.physics.warm_up.slow_phase`).

    Attributes
    ----------
    time : numpy.ndarray
        Since switch-on [s], shape ``(H,)``: the end of each half cycle up to
        ``detailed_until``, then the instant of each step of the slow phase.
    current, load_voltage : numpy.ndarray
        RMS current [A] and unit voltage [V] over each row's half cycle (or cycle).
    average_current, average_load_voltage : numpy.ndarray
        Rectified means over each row's half cycle (or cycle) [A, V]: what an
        average-responding meter senses.
    peak_current : numpy.ndarray
        Largest instantaneous current in each row's half cycle (or cycle) [A].
    filament_temperature : numpy.ndarray
        The hottest lamp filament at its hottest in each half cycle [K]; in the slow phase
        its steady temperature at that instant.
    glow : numpy.ndarray
        Glow class (str) of that hottest filament: the glow over time.
    inrush_peak : numpy.ndarray
        Largest instantaneous current of the whole switch-on [A], per column.
    steady_current : numpy.ndarray
        RMS current of the periodic steady state [A], per column.
    settle_time : numpy.ndarray
        Time from which every row's RMS current stays within ``SETTLE_FRACTION`` of the
        steady state's [s]; NaN if not within the duration.
    steady_glow : numpy.ndarray
        Glow class at steady state, per column.
    behaviour : numpy.ndarray
        ``"flash_then_dims"`` where the lamp glows brighter at switch-on than at steady
        state, else ``"steady"``, per column.
    detailed_until : float
        End of the part followed half cycle by half cycle [s]: the last row's time unless
        a slow phase follows.
    """

    time: np.ndarray
    current: np.ndarray
    load_voltage: np.ndarray
    average_current: np.ndarray
    average_load_voltage: np.ndarray
    peak_current: np.ndarray
    filament_temperature: np.ndarray
    glow: np.ndarray
    inrush_peak: np.ndarray
    steady_current: np.ndarray
    settle_time: np.ndarray
    steady_glow: np.ndarray
    behaviour: np.ndarray
    detailed_until: float = np.inf

    def at(self, seconds):
        """Row of each time since switch-on (numeric [s] in).

        The half cycle holding it; in the slow phase the nearest instant.
        """
        seconds = np.asarray(seconds, dtype=float)
        index = np.clip(np.searchsorted(self.time, seconds, side="left"), 0, self.time.size - 1)
        earlier = np.maximum(index - 1, 0)
        nearer = (self.time[earlier] >= self.detailed_until) & (
            seconds - self.time[earlier] < self.time[index] - seconds
        )
        return np.where(nearer, earlier, index)


class _Tables:
    """Resistance, heat loss and heat capacity of several filaments, read in one call.

    Each filament's three columns are laid end to end on one temperature axis, every block
    shifted by ``BLOCK`` kelvin, so that one ``numpy.interp`` reads them all.
    """

    BLOCK = 10000.0  # [K] wider than any table

    def __init__(self, tables):
        self.count = len(tables)
        axis, values = [], []
        columns = [
            (each.temperature, column)
            for each in tables
            for column in (each.resistance, each.power_loss, each.heat_capacity)
        ]
        for position, (temperature, column) in enumerate(columns):
            axis.append(temperature + position * self.BLOCK)
            values.append(column)
        self.axis = np.concatenate(axis) if axis else np.zeros(0)
        self.values = np.concatenate(values) if values else np.zeros(0)
        self.offsets = (np.arange(3 * self.count) * self.BLOCK).reshape(self.count, 3, 1)

    def read(self, temperatures):
        """Resistance [ohm], heat loss [W] and heat capacity [J/K], each (filaments, columns)."""
        query = temperatures[:, None, :] + self.offsets
        read = np.interp(query, self.axis, self.values)
        return read[:, 0], read[:, 1], read[:, 2]


def switch_on(
    lamp,
    load,
    source_voltage,
    *,
    source_resistance=0.0,
    frequency=60.0,
    phase=DEFAULT_PHASE,
    duration=DEFAULT_DURATION,
    lamp_bypassed=False,
    remanence=True,
):
    """The switch-on of a unit through the lamp (or bypassed), every column at once.

    Parameters
    ----------
    lamp : Lamp or LampBank
        The series lamp, cold at the bench's ambient at switch-on.
    load : load
        The unit: resistive, heater, transformer, rectifier or a composite of them, or a
        constant-power (switch-mode) input, which is handed to
        :func:`shop.physics.switch_mode_start.switch_mode_switch_on` (a bridge and reservoir
        behind the lamp; it may cycle or not start) with the same arguments but
        ``remanence``, which it has no core for.
    source_voltage : numeric
        RMS source voltage switched on [V], broadcast against the load's draw factor.
    source_resistance : float, default 0.0
        The rig's windings [ohm].
    frequency : float, default 60.0
        Source frequency [Hz].
    phase : float, default 90.0
        Phase of the source at switch-on [degrees]: 90 is the crest, 0 a zero crossing.
    duration : float, default 1.0
        How long to follow it [s]. A unit with heaters followed for longer than
        ``SLOW_PHASE_AFTER`` is followed in detail for
        :data:`shop.physics.warm_up.DETAILED_SECONDS` and then through its heaters' slow
        warm-up (:func:`shop.physics.warm_up.slow_phase`), so that a valve set's tens of
        seconds cost little more than its first second.
    lamp_bypassed : bool, default False
        Whether the lamp is switched out.
    remanence : bool, default True
        Whether a transformer's core starts with its residual flux (the worst case of a core
        inrush); without it the core starts where its steady flux would be at that phase, so
        no inrush (what the judgement follows: readings are taken seconds later).

    Returns
    -------
    SwitchOnTransient

    Notes
    -----
    The lamp's filament (each filament of a bank) heats by its instantaneous power and
    loses heat as in steady state,

    .. math:: C(T) \\, dT/dt = v_L^2 / R(T) - P_{loss}(T), \\quad C(T) = m \\, c_p(T),

    with the filament's mass from its rating (:attr:`shop.physics.lamp.Filament.mass`) and
    tungsten's heat capacity from the NIST-JANAF tables; a heater likewise with its lumped
    heat capacity (:attr:`shop.physics.heater.HeaterLoad.heat_capacity`). Everything else is
    the circuit of :class:`shop.physics.waveform.Network`: the reservoir starts discharged,
    the core with its residual flux in the direction the first half cycle drives it (the
    worst case), a valve rectifier conducting in proportion to how far it has warmed. RK4
    with ``STEPS_PER_CYCLE`` steps a cycle or more, all columns at once. After
    ``DETAILED_SECONDS`` a unit's heaters are followed alone, quasi-statically (see
    :mod:`shop.physics.warm_up`), from the temperatures the detailed part left them at.
    """
    if getattr(load, "constant_power", False):
        # Imported here: that module builds on this one's result type.
        from shop.physics.switch_mode_start import switch_mode_switch_on

        return switch_mode_switch_on(
            lamp,
            load,
            source_voltage,
            source_resistance=source_resistance,
            frequency=frequency,
            phase=phase,
            duration=duration,
            lamp_bypassed=lamp_bypassed,
        )
    network = Network(load, frequency)
    source = np.asarray(source_voltage, dtype=float)
    shape = np.broadcast_shapes(source.shape, network.factor.shape)
    amplitude = np.sqrt(2.0) * np.broadcast_to(source, shape).ravel()
    factor = np.broadcast_to(network.factor, shape).ravel()
    size = amplitude.size
    filaments = [] if lamp_bypassed else lamp_filaments(lamp)
    lamp_tables = [filament.thermal_table() for filament, _ in filaments]
    heater_tables = [heater.element.thermal_table() for heater, _ in network.heaters]
    ambient = [table.temperature[0] for table in lamp_tables + heater_tables]

    cold = (
        0.0
        if not filaments
        else 1.0
        / sum(
            multiplier / table.resistance[0]
            for (_, multiplier), table in zip(filaments, lamp_tables, strict=True)
        )
    )
    hottest = (
        0.0
        if not filaments
        else 1.0
        / sum(
            multiplier / table.resistance[-1]
            for (_, multiplier), table in zip(filaments, lamp_tables, strict=True)
        )
    )
    # With no state in the circuit (resistances, heaters) only the filaments' smooth heating
    # is integrated: half the steps do.
    steps = STEPS_PER_CYCLE if network.states else STEPS_PER_CYCLE // 2
    if network.rectifier is not None or network.transformers:
        # A cold lamp with a core deep in saturation (the inrush, with remanence), or a hot
        # lamp with the core at its working flux: the shortest time constants met.
        rms = amplitude / np.sqrt(2.0)
        shortest = np.minimum(
            network.time_constant(np.full(size, source_resistance + cold), factor, rms, remanence),
            network.time_constant(np.full(size, source_resistance + hottest), factor, rms),
        ).min()
        steps = int(
            np.clip(np.ceil(network.period / shortest), STEPS_PER_CYCLE, STEPS_PER_CYCLE_MAX)
        )
    steps += steps % 2  # whole half cycles
    half_steps = steps // 2
    step = network.period / steps
    # Beyond DETAILED_SECONDS heaters warm on their own slow time: the warm-up module follows,
    # once the run is long enough to repay its table of held steady states.
    slow = bool(network.heaters) and duration > max(SLOW_PHASE_AFTER, DETAILED_SECONDS)
    detailed = DETAILED_SECONDS if slow else duration
    halves = max(int(np.ceil(detailed / (network.period / 2))), 1)

    electrical = np.zeros((network.states, size))
    first = network.caps + int(network.choke)
    for j, (transformer, _) in enumerate(network.transformers):
        # With remanence the flux starts at its residual value; without, where the steady
        # flux, lagging the voltage a quarter cycle, stands at this phase.
        flux = transformer.remanence
        if not remanence:
            crest = amplitude / (2.0 * np.pi * network.frequency)
            flux = -np.cos(np.radians(phase)) * crest / transformer.saturation_flux(frequency)
        electrical[first + j] = transformer.knee_current * magnetising_current(
            flux, transformer.core
        )
    temperatures = np.array([np.full(size, value) for value in ambient]).reshape(-1, size)
    lamp_count = len(filaments)
    warm_up = 0.0 if network.rectifier is None else network.rectifier.warm_up_time
    start = np.radians(phase)
    omega = 2.0 * np.pi * network.frequency

    tables = _Tables(lamp_tables + heater_tables)
    lamp_multipliers = np.array([multiplier for _, multiplier in filaments]).reshape(-1, 1)
    heater_multipliers = np.array([multiplier for _, multiplier in network.heaters]).reshape(-1, 1)
    # A heater's lumped capacity (its cathode's) stands in for its bare element's.
    heater_capacity = np.array([heater.heat_capacity for heater, _ in network.heaters]).reshape(
        -1, 1
    )

    def rates(time, electrical, temperatures):
        if tables.count:
            resistance, loss, capacity = tables.read(temperatures)
        if network.heaters:
            capacity[lamp_count:] = heater_capacity
        series = source_resistance
        if lamp_count:
            series = series + 1.0 / (lamp_multipliers / resistance[:lamp_count]).sum(axis=0)
        heater_conductance = 0.0
        if network.heaters:
            heater_conductance = (heater_multipliers / resistance[lamp_count:]).sum(axis=0)
        warm = 1.0 if warm_up == 0 else min(time / warm_up, 1.0)
        evaluate = network.kernel(factor, series, heater_conductance, warm)
        derivative, voltage, current, _ = evaluate(
            amplitude * np.sin(omega * time + start), electrical
        )
        if not tables.count:
            return derivative, temperatures, voltage, current
        lamp_voltage = current * (series - source_resistance)
        across = np.empty_like(temperatures)
        across[:lamp_count] = lamp_voltage
        across[lamp_count:] = voltage
        heat = (across * across / resistance - loss) / capacity
        return derivative, heat, voltage, current

    total = halves * half_steps
    currents = np.empty((total + 1, size))
    voltages = np.empty((total + 1, size))
    hottest_filament = np.full((total + 1, size), np.nan)
    for n in range(total + 1):
        time = n * step
        k1, h1, voltages[n], currents[n] = rates(time, electrical, temperatures)
        if lamp_count:
            hottest_filament[n] = temperatures[:lamp_count].max(axis=0)
        if n == total:
            break
        k2, h2, *_ = rates(
            time + step / 2, electrical + step / 2 * k1, temperatures + step / 2 * h1
        )
        k3, h3, *_ = rates(
            time + step / 2, electrical + step / 2 * k2, temperatures + step / 2 * h2
        )
        k4, h4, *_ = rates(time + step, electrical + step * k3, temperatures + step * h3)
        electrical = electrical + step / 6 * (k1 + 2 * k2 + 2 * k3 + k4)
        temperatures = temperatures + step / 6 * (h1 + 2 * h2 + 2 * h3 + h4)
        if network.choke:
            electrical[1] = np.maximum(electrical[1], 0.0)

    def per_half(samples):
        """Trapezoidal mean over each half cycle of samples taken at every step."""
        ends = samples[half_steps::half_steps]
        starts = samples[:-1:half_steps]
        inner = samples[:-1].reshape(halves, half_steps, size).sum(axis=1)
        return (inner - 0.5 * starts + 0.5 * ends) / half_steps

    figures = {
        "current": np.sqrt(per_half(currents**2)),
        "load_voltage": np.sqrt(per_half(voltages**2)),
        "average_current": per_half(np.abs(currents)),
        "average_load_voltage": per_half(np.abs(voltages)),
        "peak_current": np.abs(currents[1:]).reshape(halves, half_steps, size).max(axis=1),
        "filament_temperature": hottest_filament[1:].reshape(halves, half_steps, size).max(axis=1),
    }
    figures["peak_current"] = np.maximum(figures["peak_current"], np.abs(currents[:-1:half_steps]))

    solve = solve_bypassed if lamp_bypassed else solve_series
    steady = solve(lamp, load, np.broadcast_to(source, shape), source_resistance, frequency)
    steady_current = np.asarray(steady.current, dtype=float).ravel()
    times = (np.arange(halves) + 1) * network.period / 2
    detailed_until = float(times[-1])
    if slow:
        later = slow_phase(
            lamp,
            load,
            np.broadcast_to(source, shape),
            temperatures[lamp_count:].reshape((-1,) + shape),
            start=detailed_until,
            duration=duration,
            source_resistance=source_resistance,
            frequency=frequency,
            lamp_bypassed=lamp_bypassed,
        )
        for name in figures:
            figures[name] = np.concatenate(
                [figures[name], getattr(later, name).reshape(later.time.size, size)]
            )
        times = np.concatenate([times, later.time])
    rows = times.size
    outside = np.abs(figures["current"] - steady_current) > SETTLE_FRACTION * steady_current
    last_outside = np.where(outside.any(axis=0), rows - 1 - np.argmax(outside[::-1], axis=0), -1)
    settle = np.where(
        last_outside < 0,
        0.0,
        np.where(last_outside >= rows - 1, np.nan, times[np.clip(last_outside, 0, None)]),
    )
    if lamp_count:
        rated = max(filament.rated_temperature for filament, _ in filaments)
        glow = glow_class(np.maximum(figures["filament_temperature"], ambient[0]), rated)
        steady_glow = np.asarray(steady.glow).ravel()
        rank = np.array([GLOW_CLASSES.index(name) for name in glow.ravel()]).reshape(glow.shape)
        steady_rank = np.array([GLOW_CLASSES.index(name) for name in steady_glow])
        behaviour = np.where(rank.max(axis=0) > steady_rank, FLASH_THEN_DIMS, STEADY)
    else:
        glow = np.full((rows, size), GLOW_CLASSES[0])
        steady_glow = np.full(size, GLOW_CLASSES[0])
        behaviour = np.full(size, STEADY)

    def shaped(values):
        return values.reshape(values.shape[:-1] + shape)

    return SwitchOnTransient(
        time=times,
        current=shaped(figures["current"]),
        load_voltage=shaped(figures["load_voltage"]),
        average_current=shaped(figures["average_current"]),
        average_load_voltage=shaped(figures["average_load_voltage"]),
        peak_current=shaped(figures["peak_current"]),
        filament_temperature=shaped(figures["filament_temperature"]),
        glow=shaped(glow),
        inrush_peak=shaped(figures["peak_current"].max(axis=0)),
        steady_current=shaped(steady_current),
        settle_time=shaped(settle),
        steady_glow=shaped(steady_glow),
        behaviour=shaped(behaviour),
        detailed_until=detailed_until,
    )
