"""Periodic steady state in the time domain: a unit that rectifies, behind the lamp and the rig.

The lamp's filament cannot follow the mains cycle at steady state, so over a cycle the lamp is
a fixed resistance, the one its RMS current holds it at; so are valve heaters at their RMS
voltage. Everything else (a rectifier's diodes and reservoir, a choke, a transformer's
saturating core) is integrated through the cycle. The steady state is found by shooting: the
states at the start of the cycle, the lamp's RMS voltage and the heaters' RMS voltage are the
unknowns of a Newton iteration whose residuals are the change of the states over one cycle and
the mismatch of the two RMS voltages; every source step and every draw is one column of the
same arrays, integrated together.
"""

from dataclasses import dataclass

import numpy as np

from shop.physics.loads import ResistiveLoad, ScalableLoad
from shop.physics.rectifier import LOWEST_DC_VOLTAGE
from shop.physics.roots import bracketed_root
from shop.physics.transformer import magnetising_current, magnetising_flux_slope

# Steps per mains cycle: at least PERIOD_STEPS_MIN (the diodes' kinks limit RK4 to second
# order there; 256 steps keep the RMS current within about 1e-4), more when a time constant
# of the circuit is shorter than 1 / STABILITY_STEPS of the cycle's step (RK4 is stable to
# about 2.8 steps per time constant).
PERIOD_STEPS_MIN = 256
PERIOD_STEPS_MAX = 16384
STEPS_PER_TIME_CONSTANT = 1.0
RELAXATION_CYCLES = 1
NEWTON_MAX_ITERATIONS = 40
# Converged once every residual is below this fraction of its scale (volts of the source,
# the reservoir's crest, a current typical of the unit).
NEWTON_TOLERANCE = 1e-10
JACOBIAN_STEP = 1e-7  # finite-difference step, as a fraction of each unknown's scale
LINE_SEARCH_HALVINGS = 8
# The lenient shooting (a unit that may have no periodic steady state: a capacitor input's
# converter through a lamp) stops sooner; the constant-power columns that converge at all
# did so by the 15th iteration on the 480 points of shop/physics/capacitor_input.py's check.
LENIENT_MAX_ITERATIONS = 20
GIVE_UP_ITERATIONS = 3
# ... and halves a failing Newton step twice before taking the cycle's own step: on those 480
# points as accurate as eight halvings (the same currents, one point fewer disagreeing on the
# edge), three to five times quicker.
LENIENT_LINE_SEARCH_HALVINGS = 2
# A rectifier's rated draw is quoted from a mains outlet of this resistance: the IEC 60725
# reference impedance of a 230 V supply is 0.4 + j0.25 ohm (from memory); a direct-fed
# rectifier would otherwise charge its reservoir through its diodes alone.
RATED_SOURCE_RESISTANCE = 0.4  # [ohm]


@dataclass
class WaveformFigures:
    """Figures of one cycle at periodic steady state, one element per column.

    Attributes
    ----------
    current : numpy.ndarray
        RMS current from the source [A].
    load_voltage : numpy.ndarray
        RMS voltage across the unit [V].
    load_power : numpy.ndarray
        Real power into the unit [W], the mean of ``v * i``.
    lamp_voltage : numpy.ndarray
        RMS voltage across the lamp [V] (0 when bypassed).
    peak_current : numpy.ndarray
        Largest instantaneous current magnitude [A].
    average_current : numpy.ndarray
        Mean of the rectified current, ``mean(|i|)`` [A].
    average_load_voltage : numpy.ndarray
        Mean of the rectified unit voltage, ``mean(|v|)`` [V].
    dc_voltage : numpy.ndarray
        Mean voltage of the rectifier's output [V] (NaN without a rectifier).
    ripple_voltage : numpy.ndarray
        Peak-to-peak ripple of the output [V] (NaN without a rectifier).
    conduction_angle : numpy.ndarray
        Conduction per pulse [degrees of the mains cycle] (NaN without a rectifier).
    """

    current: np.ndarray
    load_voltage: np.ndarray
    load_power: np.ndarray
    lamp_voltage: np.ndarray
    peak_current: np.ndarray
    average_current: np.ndarray
    average_load_voltage: np.ndarray
    dc_voltage: np.ndarray
    ripple_voltage: np.ndarray
    conduction_angle: np.ndarray


def _flatten(load, multiplier=1.0):
    """(member with one draw, multiplier) pairs of a load, composites opened."""
    members = getattr(load, "members", None)
    if members is None:
        return [(load, multiplier)]
    pairs = []
    for member in members:
        factor = getattr(member, "draw_factor", np.array(1.0))
        if hasattr(member, "draw_factor"):
            member = member._copy_with_factor(np.array(1.0))
        pairs.extend(_flatten(member, multiplier * float(factor)))
    return pairs


class Network:
    """A unit as the time-domain solver sees it: branches at its terminals.

    Parameters
    ----------
    load : load
        A :class:`shop.physics.rectifier.RectifierLoad` or a
        :class:`shop.physics.composite.CompositeLoad` holding at most one, beside
        resistances, heaters and transformers.
    frequency : float
        Source frequency [Hz].

    Notes
    -----
    At the unit's terminals the branch currents add. Resistances and heaters (at the
    conductance of their RMS voltage) are conductances; a transformer's T circuit is
    :math:`i_T = (i_m + G' v)/(1 + R_1 G')` with its magnetising current a state,
    :math:`di_m/dt = v_m / L_d(i_m)`, :math:`v_m = v - R_1 i_T`; the rectifier's conducting
    path is piecewise linear in the terminal voltage. With the series resistance
    :math:`R` (lamp and rig) the terminal voltage follows in closed form at each instant,
    first taking the path as off and then, if its diode would conduct, as on.
    """

    def __init__(self, load, frequency):
        self.frequency = float(frequency)
        self.conductance = 0.0
        self.heaters = []
        self.transformers = []
        self.rectifier = None
        if getattr(load, "constant_power", False):
            raise ValueError(
                "a constant-power input has no time-domain model here: its steady state says "
                "whether it runs, cycles or does not start"
            )
        if isinstance(load, ScalableLoad):
            self.factor = np.asarray(load.draw_factor, dtype=float)
            members = _flatten(load._copy_with_factor(np.array(1.0)))
        elif not isinstance(load, ResistiveLoad):
            raise ValueError(
                f"{type(load).__name__} has no time-domain model: use the unit models of "
                "shop.physics"
            )
        else:
            # A plain resistance, one per column: a conductance of 1 S scaled by 1 / R.
            with np.errstate(divide="ignore"):
                self.factor = 1.0 / np.asarray(load.resistance, dtype=float)
            members = []
            self.conductance = 1.0
        self.shorted = np.isinf(self.factor)
        if self.shorted.any() and hasattr(load, "draw_factor"):
            raise ValueError(
                "factor must be finite for a unit of several parts: a dead short has none of "
                "them left; declare it as a resistance of 0 ohm"
            )
        for member, multiplier in members:
            if getattr(member, "waveform", False):
                if self.rectifier is not None:
                    raise ValueError("a unit may hold one rectifier for the time-domain solver")
                self.rectifier, self.rectifier_share = member, multiplier
            elif hasattr(member, "knee_current"):
                self.transformers.append((member, multiplier))
            elif hasattr(member, "element"):
                self.heaters.append((member, multiplier))
            elif hasattr(member, "resistance"):
                resistance = float(member.resistance)
                if resistance == 0:
                    raise ValueError("a dead short cannot share a unit with a rectifier")
                self.conductance += multiplier / resistance
            else:
                raise ValueError(
                    f"{type(member).__name__} cannot be solved in the time domain: use "
                    "resistances, heaters, transformers and one rectifier"
                )
        rectifier = self.rectifier
        self.caps = 0 if rectifier is None else 2 if rectifier.topology == "doubler" else 1
        self.choke = rectifier is not None and rectifier.choke_inductance is not None
        self.states = self.caps + int(self.choke) + len(self.transformers)
        self.turns = 1.0 if rectifier is None else rectifier.turns_ratio
        if rectifier is None:
            self.rectifier_share = 0.0
        # Per transformer: conductance seen through R_1, the share of i_m at the node, R_1,
        # and the flux-to-current scale of its core at this frequency.
        self.magnetising = []
        for transformer, multiplier in self.transformers:
            inner = transformer.core_conductance + transformer.load_conductance
            through = 1.0 / (1.0 + transformer.primary_resistance * inner)
            self.conductance += multiplier * inner * through
            self.magnetising.append(
                (
                    multiplier * through,
                    transformer.primary_resistance,
                    inner,
                    transformer.saturation_flux(self.frequency) / transformer.knee_current,
                    transformer.knee_current,
                    transformer.core,
                )
            )

    @property
    def period(self):
        """One mains cycle [s]."""
        return 1.0 / self.frequency

    @property
    def symmetric(self):
        """Whether the second half cycle mirrors the first (every full-wave rectifier)."""
        return self.rectifier is None or self.rectifier.topology != "half_wave"

    def mirror(self, states):
        """The states half a cycle on, in a symmetric circuit: EMF and core flux reversed.

        A doubler's reservoirs swap roles; a magnetising current changes sign; a single
        reservoir and a choke current are the same.
        """
        mirrored = states.copy()
        if self.caps == 2:
            mirrored[[0, 1]] = states[[1, 0]]
        first = self.caps + int(self.choke)
        mirrored[first:] = -states[first:]
        return mirrored

    def heater_conductance(self, voltage):
        """Conductance of the heaters of one unit at an RMS voltage [S] (numeric [V] in)."""
        voltage = np.asarray(voltage, dtype=float)
        total = np.zeros(voltage.shape)
        for heater, multiplier in self.heaters:
            total = total + multiplier * heater._admittance_of_one(voltage, self.frequency).real
        return total

    def output_voltage(self, states):
        """The rectifier's DC output [V]: its reservoir, or the doubler's two in series."""
        return states[0] + states[1] if self.caps == 2 else states[0]

    def time_constant(self, series_resistance, factor, voltage, saturated=False):
        """Shortest time constant of the circuit [s], for choosing the step.

        Parameters
        ----------
        series_resistance : numpy.ndarray
            Lamp and rig resistance per column [ohm].
        factor : numpy.ndarray
            Draw factor per column.
        voltage : numpy.ndarray
            Largest RMS voltage the unit may see per column [V].
        saturated : bool, default False
            Take each core deep in saturation (its air-core inductance), as at a switch-on.
        """
        rectifier = self.rectifier
        shortest = np.full(np.shape(factor), np.inf)
        if rectifier is not None:
            path = rectifier.path_resistance
            share = factor * self.rectifier_share
            # A conducting path charges the reservoir through itself and the series
            # resistance referred to the secondary, shared with the unit's other branches.
            linear = factor * (self.conductance + self.heater_conductance(0.0))
            referred = (
                self.turns**2 * series_resistance * share / (1.0 + series_resistance * linear)
            )
            shortest = rectifier.capacitance * (path + referred)
        if self.choke:
            shortest = np.minimum(
                shortest,
                rectifier.choke_inductance
                / (path + rectifier.choke_resistance + self.turns**2 * series_resistance * share),
            )
        for (_, primary, _, scale, knee, core), (_, multiplier) in zip(
            self.magnetising, self.transformers, strict=True
        ):
            flux = np.sqrt(2.0) * voltage / (2.0 * np.pi * self.frequency)
            peak = np.inf if saturated else magnetising_current(flux / (scale * knee), core)
            inductance = scale * magnetising_flux_slope(peak, core)
            resistance = primary + series_resistance * factor * multiplier
            shortest = np.minimum(shortest, inductance / resistance)
        return shortest

    def kernel(self, factor, series_resistance, heater_conductance, warm=1.0):
        """The state derivatives as a function of the source EMF, for fixed resistances.

        Parameters
        ----------
        factor, series_resistance, heater_conductance : numpy.ndarray
            Per column: draw factor, lamp and rig resistance [ohm], heaters' conductance of
            one unit [S].
        warm : float or numpy.ndarray, default 1.0
            How far the rectifier conducts, 0 (a cold valve) to 1.

        Returns
        -------
        callable
            ``evaluate(drive, states)`` -> ``(derivatives, voltage, current, path)``: the
            states' derivatives [V/s, A/s], shaped like ``states`` (reservoir voltage(s),
            choke current, magnetising current(s)), the unit's voltage [V], the source
            current [A] and one unit's rectifier path current [A], for the source EMF
            ``drive`` [V].

        Notes
        -----
        With :math:`a = 1 + R G` (series resistance R, the unit's linear conductance G) the
        terminal voltage with the path off is :math:`v_0 = e'/a`, where :math:`e'` is the EMF
        less the drop of the magnetising currents. The path conducts when
        :math:`t = n s v_0 - V_k - v_C > 0` (s the sign of :math:`e'`), and then carries
        :math:`i_k = a t / (a R_k + R k n^2)` (k copies), which lowers the terminal voltage to
        :math:`v_0 - R k n s i_k / a`.
        """
        rectifier = self.rectifier
        turns = self.turns
        # A dead short (a resistance of 0 ohm) holds the unit at 0 V: set apart below.
        shorted = np.isinf(factor)
        factor = np.where(shorted, 0.0, factor)
        linear = factor * (self.conductance + heater_conductance)
        damping = 1.0 + series_resistance * linear
        share = factor * self.rectifier_share
        doubler = self.caps == 2
        if rectifier is not None:
            path_resistance = rectifier.path_resistance / np.maximum(warm, 1e-12)
            path_gain = damping / (damping * path_resistance + series_resistance * share * turns**2)
            pull = series_resistance * share * turns / damping
            feed = share * turns
            drop = rectifier.path_drop
            inverse_capacitance = 1.0 / rectifier.capacitance
            half_wave = rectifier.topology == "half_wave"
            dc_resistance = rectifier.dc_resistance
            dc_current = rectifier.dc_current
            dc_power = rectifier.dc_power
        choke = self.choke
        first = self.caps + int(choke)
        magnetising = [
            (
                first + j,
                share_m,
                series_resistance * factor * share_m,
                primary,
                inner,
                share_m / multiplier,
                scale,
                knee,
                _air_slope(core),
            )
            for j, ((share_m, primary, inner, scale, knee, core), (_, multiplier)) in enumerate(
                zip(self.magnetising, self.transformers, strict=True)
            )
        ]
        if choke:
            choke_loss = path_resistance + rectifier.choke_resistance
            inverse_inductance = 1.0 / rectifier.choke_inductance

        def rectify(states, open_drive, off, magnetising_current, derivative):
            """The rectifier's path at this instant; its states' derivatives into place."""
            sign = np.copysign(1.0, open_drive)
            if choke:
                path = np.maximum(states[1], 0.0)
            else:
                reservoir = np.where(sign > 0, states[0], states[1]) if doubler else states[0]
                path = np.maximum(turns * sign * off - drop - reservoir, 0.0) * path_gain
                if half_wave:
                    path = path * (sign > 0)
            voltage = off - pull * sign * path
            current = linear * voltage + factor * magnetising_current + feed * sign * path
            output = states[0] + states[1] if doubler else states[0]
            if dc_power is not None:
                load = dc_power / np.maximum(output, LOWEST_DC_VOLTAGE)
            elif dc_current is None:
                load = output / dc_resistance
            else:
                load = dc_current * (output > 0)
            if choke:
                slope = (
                    turns * sign * voltage - drop - choke_loss * path - states[0]
                ) * inverse_inductance
                derivative[1] = np.where((states[1] <= 0) & (slope < 0), 0.0, slope)
                derivative[0] = (path - load) * inverse_capacitance
            elif doubler:
                derivative[0] = (path * (sign > 0) - load) * inverse_capacitance
                derivative[1] = (path * (sign < 0) - load) * inverse_capacitance
            else:
                derivative[0] = (path - load) * inverse_capacitance
            return voltage, current, path

        def evaluate(drive, states):
            open_drive = drive
            magnetising_current = 0.0
            for index, share_m, drop_m, *_ in magnetising:
                magnetising_current = magnetising_current + share_m * states[index]
                open_drive = open_drive - drop_m * states[index]
            off = open_drive / damping
            derivative = np.empty_like(states)
            if rectifier is None:
                voltage = off
                current = linear * voltage + factor * magnetising_current
                path = np.zeros(np.shape(voltage))
                if shorted.any():
                    voltage = np.where(shorted, 0.0, voltage)
                    current = np.where(shorted, drive / series_resistance, current)
            else:
                voltage, current, path = rectify(
                    states, open_drive, off, magnetising_current, derivative
                )
            for index, _, _, primary, inner, through, scale, knee, slope in magnetising:
                state = states[index]
                core_voltage = voltage - primary * (state + inner * voltage) * through
                ratio = state / knee
                derivative[index] = core_voltage / (
                    scale * (slope + 2.0 / np.pi / (1.0 + ratio * ratio))
                )
            return derivative, voltage, current, path

        return evaluate


def _air_slope(core):
    """The air-core slope c of :func:`shop.physics.transformer.magnetising_flux`."""
    return float(magnetising_flux_slope(np.inf, core))


def _rk4_cycle(network, states, amplitude, factor, series, heaters, steps, taken):
    """Integrate ``taken`` of a cycle's ``steps`` RK4 steps; means and extremes over them."""
    step = network.period / steps
    emf = np.sin(2.0 * np.pi * np.arange(2 * taken + 1) / (2 * steps))
    evaluate = network.kernel(factor, series, heaters)
    sums = dict.fromkeys(("i2", "v2", "vi", "ai", "av", "dc", "conducting"), 0.0)
    peak = np.zeros(amplitude.shape)
    high = np.full(amplitude.shape, -np.inf)
    low = np.full(amplitude.shape, np.inf)
    half = 0.5 * step
    sixth = step / 6.0
    for n in range(taken):
        k1, voltage, current, path = evaluate(amplitude * emf[2 * n], states)
        output = network.output_voltage(states)
        sums["i2"] = sums["i2"] + current * current
        sums["v2"] = sums["v2"] + voltage * voltage
        sums["vi"] = sums["vi"] + voltage * current
        sums["ai"] = sums["ai"] + np.abs(current)
        sums["av"] = sums["av"] + np.abs(voltage)
        sums["dc"] = sums["dc"] + output
        sums["conducting"] = sums["conducting"] + (path > 0)
        peak = np.maximum(peak, np.abs(current))
        high = np.maximum(high, output)
        low = np.minimum(low, output)
        middle = amplitude * emf[2 * n + 1]
        k2 = evaluate(middle, states + half * k1)[0]
        k3 = evaluate(middle, states + half * k2)[0]
        k4 = evaluate(amplitude * emf[2 * n + 2], states + step * k3)[0]
        states = states + sixth * (k1 + 2.0 * k2 + 2.0 * k3 + k4)
        if network.choke:
            states[1] = np.maximum(states[1], 0.0)
    means = {name: value / taken for name, value in sums.items()}
    means.update(peak=peak, ripple=high - low, lowest=low)
    return states, means


class _Lamp:
    """The lamp as a resistance at an RMS voltage: ``V / I(V)``, the cold resistance at 0."""

    def __init__(self, lamp):
        self.lamp = lamp
        curve = lamp.curve()
        self.cold = float(curve.voltage[1] / curve.current[1])
        self.smallest = float(curve.voltage[1])
        self.largest = float(curve.voltage[-1])

    def resistance(self, voltage):
        voltage = np.clip(voltage, 0.0, self.largest)
        safe = np.maximum(voltage, self.smallest)
        resistance = safe / np.asarray(self.lamp.current(safe), dtype=float)
        return np.where(voltage > self.smallest, resistance, self.cold)


def _equivalent_guess(lamp, source, source_resistance, equivalent):
    """Lamp and unit RMS volts with the unit taken as a resistance: a first guess."""
    if lamp is None:
        return np.zeros(source.shape), source * equivalent / (equivalent + source_resistance)
    upper = np.minimum(source, 0.999 * lamp.largest)

    def residual(volts):
        return volts + (volts / lamp.resistance(volts)) * (source_resistance + equivalent) - source

    lamp_voltage, _ = bracketed_root(
        residual,
        np.zeros(source.shape),
        upper,
        -source,
        residual(upper),
        1e-6 * np.maximum(source, 1.0),
    )
    current = lamp_voltage / lamp.resistance(lamp_voltage)
    return lamp_voltage, current * equivalent


def _initial_states(network, unit_voltage):
    """States near the steady state: reservoirs charged, flux at its negative crest."""
    rectifier = network.rectifier
    crest = np.sqrt(2.0) * network.turns * unit_voltage
    charged = np.maximum(0.9 * (crest - rectifier.path_drop), 0.0)
    states = np.zeros((network.states, unit_voltage.size))
    states[: network.caps] = charged
    if network.choke:
        states[1] = rectifier.dc_load_current(charged)
    index = network.caps + int(network.choke)
    for j, (*_, scale, knee, core) in enumerate(network.magnetising):
        flux = np.sqrt(2.0) * unit_voltage / (2.0 * np.pi * network.frequency)
        states[index + j] = -knee * magnetising_current(flux / (scale * knee), core)
    return states


def periodic_steady_state(lamp, load, source_voltage, source_resistance, frequency):
    """Periodic steady state of a rectifying unit behind a lamp (or none), every column at once.

    Parameters
    ----------
    lamp : Lamp, LampBank or None
        The series lamp; ``None`` when it is bypassed.
    load : load
        A rectifier or a composite holding one (see :class:`Network`), with a draw factor of
        shape ``P``.
    source_voltage : numpy.ndarray
        RMS source voltage [V], broadcast against ``P``.
    source_resistance : float
        The rig's windings [ohm].
    frequency : float
        Source frequency [Hz].

    Returns
    -------
    WaveformFigures
        Arrays shaped like the broadcast of ``source_voltage`` and ``P``.

    Raises
    ------
    RuntimeError
        If the Newton iteration fails to converge (named, with the worst residual).

    Notes
    -----
    Unknowns per column: the states at the start of the cycle, the lamp's RMS voltage
    :math:`u_L` and the heaters' RMS voltage :math:`u_h`. Residuals: the change of every
    state over one cycle (RK4 with ``PERIOD_STEPS_MIN`` or more steps), the lamp's
    :math:`R_L(u_L) I_{rms} - u_L` and the heaters' :math:`V_{rms} - u_h`, each over its
    scale. Newton steps with a forward-difference Jacobian (all columns and all
    perturbations in one batch) and a halving line search, from a first guess that takes the
    unit as a resistance of its rated draw and lets the states relax for
    ``RELAXATION_CYCLES`` cycles.
    """
    network = Network(load, frequency)
    if network.rectifier is None:
        raise ValueError(
            "load has no rectifier: its steady state is a phasor solution (solve_series)"
        )
    shape = np.broadcast_shapes(np.shape(source_voltage), network.factor.shape)
    source = np.broadcast_to(np.asarray(source_voltage, dtype=float), shape).ravel()
    factor = np.broadcast_to(network.factor, shape).ravel()
    size = source.size
    figures = {
        name: np.zeros(size)
        for name in (
            "current",
            "load_voltage",
            "load_power",
            "lamp_voltage",
            "peak_current",
            "average_current",
            "average_load_voltage",
            "dc_voltage",
            "ripple_voltage",
            "conduction_angle",
        )
    }
    active = (source > 0) & (factor > 0)
    figures["load_voltage"] = np.where(factor == 0, source, 0.0)
    figures["average_load_voltage"] = figures["load_voltage"] * 2.0 * np.sqrt(2.0) / np.pi
    if active.any():
        rated = float(load._rated_power_of_one())
        solved = _solve(network, lamp, source[active], factor[active], source_resistance, rated)
        for name, values in solved.items():
            figures[name][active] = values
    return WaveformFigures(**{name: values.reshape(shape) for name, values in figures.items()})


def _solve(
    network,
    lamp,
    source,
    factor,
    source_resistance,
    rated,
    strict=True,
    floor=None,
    steps_min=PERIOD_STEPS_MIN,
):
    """The Newton shooting of :func:`periodic_steady_state` on active columns.

    With ``strict`` false a column that does not converge is no error: the figures then
    add ``converged`` (bool per column) and ``lowest_dc_voltage`` (the reservoir's lowest
    over the cycle [V]), for a unit that may have no periodic steady state at all; a
    column whose reservoir keeps below ``floor`` [V] (where its converter would stop) is
    given up early.
    """
    lamp = None if lamp is None else _Lamp(lamp)
    rectifier = network.rectifier
    equivalent = rectifier.rated_voltage**2 / np.maximum(factor * rated, 1e-9)
    lamp_guess, unit_guess = _equivalent_guess(lamp, source, source_resistance, equivalent)
    steps = int(_steps_per_cycle(network, lamp, source, factor, source_resistance, steps_min).max())
    amplitude = np.sqrt(2.0) * source
    has_heaters = bool(network.heaters)
    unknowns = network.states + int(lamp is not None) + int(has_heaters)
    scales = np.empty((unknowns, source.size))
    crest = np.maximum(np.sqrt(2.0) * network.turns * source, 1.0)
    scales[: network.caps] = crest
    if network.choke:
        scales[1] = np.maximum(rectifier.dc_load_current(crest), 1e-6)
    index = network.caps + int(network.choke)
    for j, (*_, knee, _core) in enumerate(network.magnetising):
        scales[index + j] = knee
    extra = network.states
    if lamp is not None:
        scales[extra] = np.maximum(source, 1.0)
        extra += 1
    if has_heaters:
        scales[extra] = np.maximum(source, 1.0)

    def split(values):
        states = values[: network.states]
        position = network.states
        lamp_voltage = np.zeros(values.shape[1])
        if lamp is not None:
            lamp_voltage = np.clip(values[position], 0.0, 0.999 * lamp.largest)
            position += 1
        unit_voltage = np.maximum(values[position], 0.0) if has_heaters else None
        return states, lamp_voltage, unit_voltage

    # A symmetric circuit repeats, mirrored, after half a cycle: shoot over half of it.
    taken = steps // 2 if network.symmetric else steps

    def run(values, columns):
        states, lamp_voltage, unit_voltage = split(values)
        series = source_resistance + (
            0.0 if lamp is None else lamp.resistance(lamp_voltage)
        ) * np.ones(values.shape[1])
        heaters = (
            network.heater_conductance(unit_voltage) if has_heaters else np.zeros(values.shape[1])
        )
        end, means = _rk4_cycle(
            network,
            states.copy(),
            amplitude[columns],
            factor[columns],
            series,
            heaters,
            steps,
            taken,
        )
        residual = np.empty_like(values)
        residual[: network.states] = end - (network.mirror(states) if network.symmetric else states)
        position = network.states
        if lamp is not None:
            residual[position] = (series - source_resistance) * np.sqrt(means["i2"]) - lamp_voltage
            position += 1
        if has_heaters:
            residual[position] = np.sqrt(means["v2"]) - unit_voltage
        return residual / scales[:, columns], means, series

    def run_with_jacobian(values, chosen=None):
        """Residual, figures and forward-difference Jacobian at ``values``: one batch.

        ``values`` holds the ``chosen`` columns (all by default).
        """
        chosen = columns if chosen is None else chosen
        size = chosen.size
        stacked = np.repeat(values[:, None, :], unknowns + 1, axis=1)
        stacked[np.arange(unknowns), np.arange(1, unknowns + 1), :] += (
            JACOBIAN_STEP * scales[:, chosen]
        )
        stacked = stacked.reshape(unknowns, (unknowns + 1) * size)
        residual, means, series = run(stacked, np.tile(chosen, unknowns + 1))
        residual = residual.reshape(unknowns, unknowns + 1, size)
        base = residual[:, 0, :]
        # J[i, j] = d residual_i / d unknown_j, the unknowns in units of their scales.
        jacobian = (residual[:, 1:, :] - base[:, None, :]) / JACOBIAN_STEP
        means = {name: value[:size] for name, value in means.items()}
        return base, jacobian, means, series[:size]

    columns = np.arange(source.size)
    values = np.empty((unknowns, source.size))
    initial = _initial_states(network, unit_guess)
    values[: network.states] = initial
    position = network.states
    if lamp is not None:
        values[position] = lamp_guess
        position += 1
    if has_heaters:
        values[position] = unit_guess
    # Let the states settle with the first guess of the lamp and heaters held.
    for _ in range(RELAXATION_CYCLES):
        residual, _, _ = run(values, columns)
        start = values[: network.states]
        change = residual[: network.states] * scales[: network.states]
        if network.symmetric:
            # The residual is end - mirror(start); the next start mirrors the end back.
            values[: network.states] = network.mirror(network.mirror(start) + change)
        else:
            values[: network.states] = start + change
    residual, jacobian, means, series = run_with_jacobian(values)

    def merit(values):
        return np.sum(values * values, axis=0)

    def picard(values, residual, chosen):
        """One cycle's own step: the states to where the cycle took them, the lamp and
        heater voltages to what the cycle gave them."""
        change = residual * scales[:, chosen]
        stepped = values + change
        if network.symmetric:
            stepped[: network.states] = values[: network.states] + network.mirror(
                change[: network.states]
            )
        return stepped

    def bounded(values, chosen):
        """The unknowns kept where a steady state can be: no reservoir above the crest of
        what charges it (a doubler's two in series, each its own), none below zero, the
        lamp's volts between none and the source's."""
        kept = values.copy()
        kept[: network.caps] = np.clip(kept[: network.caps], 0.0, crest[chosen])
        if lamp is not None:
            kept[network.states] = np.clip(kept[network.states], 0.0, source[chosen])
        return kept

    norm = np.abs(residual).max(axis=0)
    # Without strictness a column is given up once its reservoir has stood below ``floor``
    # for GIVE_UP_ITERATIONS iterations running, and every column after
    # LENIENT_MAX_ITERATIONS: a unit that may have no steady state spends no more on it.
    abandoned = np.zeros(source.size, dtype=bool)
    below = np.zeros(source.size, dtype=int)
    iterations = NEWTON_MAX_ITERATIONS if strict else LENIENT_MAX_ITERATIONS
    halvings = LINE_SEARCH_HALVINGS if strict else LENIENT_LINE_SEARCH_HALVINGS
    for _ in range(iterations):
        if floor is not None:
            below = np.where(means["lowest"] < floor, below + 1, 0)
            abandoned |= below >= GIVE_UP_ITERATIONS
        if ((norm <= NEWTON_TOLERANCE) | abandoned).all():
            break
        # The lenient shooting iterates only the columns still open.
        chosen = columns if strict else np.flatnonzero(~((norm <= NEWTON_TOLERANCE) | abandoned))
        chosen_values, chosen_residual = values[:, chosen], residual[:, chosen]
        chosen_jacobian, chosen_norm = jacobian[..., chosen], norm[chosen]
        delta = _newton_step(chosen_jacobian, chosen_residual)
        fraction = np.ones(chosen.size)
        better = np.zeros(chosen.size, dtype=bool)
        current_merit = merit(chosen_residual)
        for halving in range(halvings + 1):
            trial = chosen_values + fraction * delta * scales[:, chosen]
            if halving == halvings:
                # Newton has stalled on a kink (a diode or a choke switching): take the
                # cycle's own step there instead.
                trial = np.where(better, trial, picard(chosen_values, chosen_residual, chosen))
            if not strict:
                trial = bounded(trial, chosen)
            trial_residual, trial_jacobian, trial_means, trial_series = run_with_jacobian(
                trial, chosen
            )
            better = (merit(trial_residual) < current_merit) | (chosen_norm <= NEWTON_TOLERANCE)
            if better.all() or halving == halvings:
                better = better | (halving == halvings)
                break
            fraction = np.where(better, fraction, 0.5 * fraction)
        values[:, chosen] = np.where(better, trial, chosen_values)
        residual[:, chosen] = np.where(better, trial_residual, chosen_residual)
        jacobian[..., chosen] = np.where(better, trial_jacobian, chosen_jacobian)
        norm = np.abs(residual).max(axis=0)
        for name in means:
            means[name][chosen] = np.where(better, trial_means[name], means[name][chosen])
        series[chosen] = np.where(better, trial_series, series[chosen])
    if strict and not (norm <= NEWTON_TOLERANCE).all():
        worst = int(np.argmax(norm))
        raise RuntimeError(
            f"periodic steady state did not converge: residual {norm[worst]:.3g} of scale at "
            f"{source[worst]:g} V source (limit {NEWTON_TOLERANCE:g})"
        )
    current = np.sqrt(means["i2"])
    pulses = 2 if network.symmetric else 1  # conduction pulses per cycle
    figures = {
        "current": current,
        "load_voltage": np.sqrt(means["v2"]),
        "load_power": means["vi"],
        "lamp_voltage": (series - source_resistance) * current,
        "peak_current": means["peak"],
        "average_current": means["ai"],
        "average_load_voltage": means["av"],
        "dc_voltage": means["dc"],
        "ripple_voltage": means["ripple"],
        "conduction_angle": 360.0 * means["conducting"] / pulses,
    }
    if not strict:
        figures["converged"] = norm <= NEWTON_TOLERANCE
        figures["lowest_dc_voltage"] = means["lowest"]
    return figures


def _steps_per_cycle(network, lamp, source, factor, source_resistance, steps_min):
    """RK4 steps a cycle each column needs: its shortest time constant with a cold lamp.

    ``lamp`` is a :class:`_Lamp` or None; at least ``steps_min``, at most
    ``PERIOD_STEPS_MAX``.
    """
    least_series = source_resistance + (0.0 if lamp is None else lamp.cold)
    constant = network.time_constant(np.full(source.size, least_series), factor, source)
    return np.clip(
        np.ceil(network.period / (STEPS_PER_TIME_CONSTANT * constant)),
        steps_min,
        PERIOD_STEPS_MAX,
    ).astype(int)


def _newton_step(jacobian, residual):
    """Newton's step of every column; none for a column whose Jacobian is singular.

    A column that does not move fails the line search and then takes the cycle's own step.
    """
    matrices = np.moveaxis(jacobian, -1, 0)
    right = -np.moveaxis(residual, -1, 0)[..., None]
    try:
        return np.linalg.solve(matrices, right)[..., 0].T
    except np.linalg.LinAlgError:
        step = np.zeros(right.shape[:-1])
        for column, (matrix, vector) in enumerate(zip(matrices, right, strict=True)):
            try:
                step[column] = np.linalg.solve(matrix, vector)[:, 0]
            except np.linalg.LinAlgError:
                pass
        return step.T


def rated_input_power(rectifier, frequency):
    """Real power [W] one rectifier draws at its rated voltage from the mains.

    Parameters
    ----------
    rectifier : RectifierLoad
        The rectifier (its draw factor is ignored).
    frequency : float
        Source frequency [Hz].

    Returns
    -------
    float
        The mean of ``v * i`` over a cycle at periodic steady state, no lamp and no rig,
        from a source of ``RATED_SOURCE_RESISTANCE``.
    """
    network = Network(rectifier._copy_with_factor(np.array(1.0)), frequency)
    solved = _solve(
        network,
        None,
        np.array([rectifier.rated_voltage]),
        np.array([1.0]),
        RATED_SOURCE_RESISTANCE,
        max(rectifier.nominal_dc_power(), 1e-6),
    )
    return float(solved["load_power"][0])
