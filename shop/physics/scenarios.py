"""Independent power-up readings: scalar brentq solves, perturbed lamps, seeded meter noise.

Used by the judgement tests and by the demo shop. Nothing here uses ``shop.physics.circuit``:
the operating point is found point by point with ``scipy.optimize.brentq`` (the filament
temperature inside the circuit), from the lamp's own physical model
(``resistance_at_temperature`` and ``power_loss``), so the judgement is always tried on
readings it did not produce. A unit is a fixed complex impedance, or any load model, whose
impedance is then asked at each trial current (for a constant-power unit, the root on the
falling side of the source voltage needed, found after ``minimize_scalar`` locates the
minimum). A rectifying unit has no impedance and a scalar time-domain reference would take
seconds a reading, so its readings come from :func:`shop.physics.waveform.periodic_steady_state`
with the true (perturbed) lamp; that solver is checked on its own against ngspice and
scipy's ``solve_ivp``, and the judgement still sees readings of a lamp it was not told about,
with meter noise. A capacitor-input switch-mode unit's readings come from its own switch-on
(:func:`shop.physics.switch_mode_start.switch_mode_switch_on`, a step-by-step integration
from cold), where the judgement shoots for the periodic steady state.
"""

import numpy as np
from scipy.optimize import brentq, minimize_scalar

from shop.physics.judgement import BEFORE_RIG, Reading
from shop.physics.lamp import Lamp
from shop.physics.materials import TABLE_MAX_TEMPERATURE
from shop.physics.switch_mode_start import CYCLING, DOES_NOT_START, switch_mode_switch_on
from shop.physics.waveform import periodic_steady_state

# Spread of the lamp that "really" sat in the rig, against the nominal lamp the judgement is
# told about: +/-5 % rated power and +/-100 K rated filament temperature (from memory).
POWER_SPREAD = 0.05
TEMPERATURE_SPREAD = 100.0  # [K]
# The meter of the generated readings: within +/-(1 % + 0.5 V) and +/-(2 % + 5 mA), the
# judgement's default meter; noise is normal with half that as standard deviation, clipped at it.
METER = (0.01, 0.5)
AMMETER = (0.02, 0.005)
# An average-responding meter shows the rectified mean times a sine's form factor, pi / 2 sqrt 2.
SINE_FORM_FACTOR = np.pi / (2.0 * np.sqrt(2.0))
# A capacitor input's running state: its switch-on followed this long [s] (the start delay,
# the lamp's warming and the reservoir's settling take well under a second).
CAPACITOR_INPUT_RUN = 3.0


class SeriesInductance:
    """A test load: resistance and inductance in series, for checks of the phasor sum.

    Parameters
    ----------
    resistance : numeric
        Series resistance [ohm].
    inductance : numeric
        Series inductance [H].
    """

    may_cycle = False

    def __init__(self, resistance, inductance):
        self.resistance = np.asarray(resistance, dtype=float)
        self.inductance = np.asarray(inductance, dtype=float)

    @property
    def rated_power(self):
        """Real power [W] at 120 V, 60 Hz."""
        reactance = 2 * np.pi * 60.0 * self.inductance
        return 120.0**2 * self.resistance / (self.resistance**2 + reactance**2)

    def impedance(self, current, frequency):
        """``R + j 2 pi f L`` [ohm], whatever the current."""
        value = self.resistance + 2j * np.pi * frequency * self.inductance
        shape = np.broadcast_shapes(np.shape(current), value.shape)
        return np.broadcast_to(value, shape).astype(complex)

    def scaled(self, factor):
        """The same unit drawing ``factor`` times as much: impedance divided by it."""
        factor = np.asarray(factor, dtype=float)
        return SeriesInductance(self.resistance / factor, self.inductance / factor)

    def describe(self):
        return {"model": "series R-L (test)", "summary": "resistance and inductance in series"}


def filament_temperature(lamp, voltage):
    """Filament temperature [K] at a lamp voltage [V]: brentq on V**2 / R(T) = P_loss(T)."""
    if voltage == 0:
        return lamp.ambient_temperature

    def balance(temperature):
        return voltage**2 / lamp.resistance_at_temperature(temperature) - lamp.power_loss(
            temperature
        )

    return brentq(balance, lamp.ambient_temperature, TABLE_MAX_TEMPERATURE, xtol=1e-12, rtol=1e-15)


def lamp_current(lamp, voltage):
    """Lamp current [A] at a lamp voltage [V], from the scalar filament temperature."""
    if voltage == 0:
        return 0.0
    return voltage / float(lamp.resistance_at_temperature(filament_temperature(lamp, voltage)))


def operating_point(lamp, impedance, source_voltage, source_resistance=0.0, lamp_bypassed=False):
    """Unit volts [V], current [A] and lamp volts [V] for a unit of fixed complex impedance.

    brentq over the lamp voltage of ``|V_lamp + I (R_s + Z)| = V_s`` (phasors; the lamp is a
    resistance). ``impedance`` inf is an open unit. With the lamp bypassed the current is
    ``V_s / |R_s + Z|``.
    """
    impedance = complex(impedance)
    if np.isinf(abs(impedance)) or source_voltage == 0:
        return source_voltage if np.isinf(abs(impedance)) else 0.0, 0.0, 0.0
    if lamp_bypassed:
        current = source_voltage / abs(source_resistance + impedance)
        return current * abs(impedance), current, 0.0

    def circuit(lamp_voltage):
        current = lamp_current(lamp, lamp_voltage)
        return abs(lamp_voltage + current * (source_resistance + impedance)) - source_voltage

    lamp_voltage = brentq(circuit, 0.0, source_voltage, xtol=1e-13, rtol=1e-15)
    current = lamp_current(lamp, lamp_voltage)
    return current * abs(impedance), current, lamp_voltage


def _load_impedance(load, current, frequency):
    return complex(np.asarray(load.impedance(current, frequency)).item())


def load_operating_point(
    lamp, load, source_voltage, frequency=60.0, source_resistance=0.0, lamp_bypassed=False
):
    """Unit volts [V], current [A] and lamp volts [V] for a load model, point by point.

    brentq over the lamp voltage of ``|V_lamp + I (R_s + Z(I))| = V_s``, ``Z`` asked of the
    load at each trial current. A constant-power load (``load.constant_power``) is off below
    its start voltage (no current, full source); running, its root is the one at the lower
    current, and where there is none, or its volts fall below the stop voltage, the unit has
    no operating point: ``(nan, nan, nan)``.
    """
    if source_voltage == 0:
        return 0.0, 0.0, 0.0
    if getattr(load, "waveform", False):
        figures = periodic_steady_state(
            None if lamp_bypassed else lamp,
            load,
            np.array([source_voltage]),
            source_resistance,
            frequency,
        )
        return (
            float(figures.load_voltage[0]),
            float(figures.current[0]),
            float(figures.lamp_voltage[0]),
        )
    if getattr(load, "input_stage", None) == "capacitor":
        return capacitor_input_point(
            lamp, load, source_voltage, frequency, source_resistance, lamp_bypassed
        )[:3]
    if getattr(load, "constant_power", False):
        return _constant_power_point(lamp, load, source_voltage, source_resistance, lamp_bypassed)
    if np.isinf(abs(_load_impedance(load, 0.0, frequency))):
        return source_voltage, 0.0, 0.0
    if lamp_bypassed:

        def bypassed(current):
            impedance = _load_impedance(load, current, frequency)
            return current * abs(source_resistance + impedance) - source_voltage

        upper = 1.0
        while bypassed(upper) < 0:
            upper *= 2.0
        current = brentq(bypassed, 0.0, upper, xtol=1e-15, rtol=1e-15)
        return current * abs(_load_impedance(load, current, frequency)), current, 0.0

    def circuit(lamp_voltage):
        current = lamp_current(lamp, lamp_voltage)
        impedance = _load_impedance(load, current, frequency)
        return abs(lamp_voltage + current * (source_resistance + impedance)) - source_voltage

    lamp_voltage = brentq(circuit, 0.0, source_voltage, xtol=1e-13, rtol=1e-15)
    current = lamp_current(lamp, lamp_voltage)
    return current * abs(_load_impedance(load, current, frequency)), current, lamp_voltage


def capacitor_input_point(
    lamp, load, source_voltage, frequency=60.0, source_resistance=0.0, lamp_bypassed=False
):
    """A capacitor-input switch-mode unit's running state, from its own switch-on.

    :func:`shop.physics.switch_mode_start.switch_mode_switch_on` followed for
    ``CAPACITOR_INPUT_RUN`` seconds (its own step-by-step integration, not the shooting the
    judgement solves with); its last half cycle is the running state. Returns unit volts
    [V], current [A], lamp volts [V] and the rectified means of unit volts and current
    [V, A]; all NaN where the unit cycles or never starts; no current and the source's volts
    where the source is below the start voltage.
    """
    if source_voltage < load.start_voltage:
        return source_voltage, 0.0, 0.0, source_voltage / SINE_FORM_FACTOR, 0.0
    run = switch_mode_switch_on(
        lamp,
        load,
        np.array([source_voltage]),
        source_resistance=source_resistance,
        frequency=frequency,
        duration=CAPACITOR_INPUT_RUN,
        lamp_bypassed=lamp_bypassed,
    )
    if str(run.behaviour[0]) in (CYCLING, DOES_NOT_START):
        return (np.nan,) * 5
    current = float(run.current[-1, 0])
    lamp_voltage = 0.0
    if not lamp_bypassed:
        resistance = lamp.resistance_at_temperature(float(run.filament_temperature[-1, 0]))
        lamp_voltage = current * float(resistance)
    return (
        float(run.load_voltage[-1, 0]),
        current,
        lamp_voltage,
        float(run.average_load_voltage[-1, 0]),
        float(run.average_current[-1, 0]),
    )


def _constant_power_point(lamp, load, source_voltage, source_resistance, lamp_bypassed):
    power = float(load.rated_power)
    missing = (np.nan, np.nan, np.nan)
    if source_voltage < load.start_voltage:
        return source_voltage, 0.0, 0.0
    if lamp_bypassed:
        discriminant = source_voltage**2 - 4.0 * power * source_resistance
        if discriminant < 0:
            return missing
        current = 2.0 * power / (source_voltage + np.sqrt(discriminant))
        lamp_voltage = 0.0
    else:
        smallest = 1e-9 * lamp.rated_voltage

        def needed(lamp_voltage):
            current = lamp_current(lamp, lamp_voltage)
            return lamp_voltage + source_resistance * current + power / current

        lowest = minimize_scalar(
            needed,
            bounds=(smallest, 0.999 * lamp.max_voltage),
            method="bounded",
            options={"xatol": 1e-10},
        )
        if lowest.fun > source_voltage:
            return missing
        lamp_voltage = brentq(
            lambda volts: needed(volts) - source_voltage, smallest, lowest.x, xtol=1e-14
        )
        current = lamp_current(lamp, lamp_voltage)
    load_voltage = power / current
    if load_voltage < load.stop_voltage:
        return missing
    return load_voltage, current, lamp_voltage


def perturbed_lamp(lamp, power_factor, temperature_shift):
    """The lamp that "really" sat in the rig: rated power and rated temperature moved."""
    return Lamp(
        lamp.rated_voltage,
        lamp.rated_power * power_factor,
        fill=lamp.fill,
        rated_temperature=lamp.rated_temperature + temperature_shift,
        ambient_temperature=lamp.ambient_temperature,
    )


def random_perturbed_lamp(lamp, rng):
    """A lamp drawn uniformly within +/-POWER_SPREAD and +/-TEMPERATURE_SPREAD of ``lamp``."""
    return perturbed_lamp(
        lamp,
        1.0 + rng.uniform(-POWER_SPREAD, POWER_SPREAD),
        rng.uniform(-TEMPERATURE_SPREAD, TEMPERATURE_SPREAD),
    )


def _meter_reading(value, accuracy, rng):
    limit = accuracy[0] * value + accuracy[1]
    return max(value + float(np.clip(rng.normal(0.0, limit / 2), -limit, limit)), 0.0)


def readings(
    lamp,
    impedance,
    steps,
    rng,
    *,
    source_resistance=0.0,
    frequency=60.0,
    with_current=False,
    bypassed_steps=(),
    behaviour="steady",
    glow_seen=True,
    seconds_since_switch_on=None,
    average_responding=False,
):
    """Readings of a unit through ``lamp`` at each source step [V].

    ``impedance`` is the unit: a fixed complex impedance [ohm] or a load model
    (``shop.physics.loads``), solved by :func:`load_operating_point` at ``frequency`` [Hz].
    Source and unit volts (and current, if ``with_current``) carry seeded meter noise; the
    glow seen is the true lamp's glow class at its true voltage; readings at the source steps
    listed in ``bypassed_steps`` are taken with the lamp switched out. Where a constant-power
    unit has no operating point the glow is recorded as cycling, seen bright at its flashes,
    and the unit's volts as its stop voltage, about where a meter's needle hovers. The
    readings are of the steady state; ``seconds_since_switch_on`` [s] is recorded as given.
    With ``average_responding`` the meters show a rectifying unit's rectified means times the
    sine's form factor (a phasor unit's currents and volts are sines: no difference).
    """
    taken = []
    for source in steps:
        bypassed = source in bypassed_steps
        if average_responding and getattr(impedance, "input_stage", None) == "capacitor":
            load_voltage, current, lamp_voltage, average_volts, average_amps = (
                capacitor_input_point(
                    lamp, impedance, source, frequency, source_resistance, lamp_bypassed=bypassed
                )
            )
            load_voltage = average_volts * SINE_FORM_FACTOR
            current = average_amps * SINE_FORM_FACTOR
        elif average_responding and getattr(impedance, "waveform", False):
            figures = periodic_steady_state(
                None if bypassed else lamp,
                impedance,
                np.array([source]),
                source_resistance,
                frequency,
            )
            load_voltage = float(figures.average_load_voltage[0]) * SINE_FORM_FACTOR
            current = float(figures.average_current[0]) * SINE_FORM_FACTOR
            lamp_voltage = float(figures.lamp_voltage[0])
        elif hasattr(impedance, "impedance"):
            load_voltage, current, lamp_voltage = load_operating_point(
                lamp, impedance, source, frequency, source_resistance, lamp_bypassed=bypassed
            )
        else:
            load_voltage, current, lamp_voltage = operating_point(
                lamp, impedance, source, source_resistance, lamp_bypassed=bypassed
            )
        seen = behaviour
        if np.isnan(load_voltage):
            seen, load_voltage, current = "cycling", impedance.stop_voltage, 0.0
            lamp_voltage = lamp.rated_voltage
        glow = str(lamp.glow(lamp_voltage)) if glow_seen and not bypassed else None
        taken.append(
            Reading(
                source_voltage=_meter_reading(source, METER, rng),
                load_voltage=_meter_reading(load_voltage, METER, rng),
                current=_meter_reading(current, AMMETER, rng) if with_current else None,
                glow_seen=glow,
                behaviour_seen=None if bypassed else seen,
                lamp_bypassed=bypassed,
                seconds_held=10.0,
                seconds_since_switch_on=seconds_since_switch_on,
                # The source here is the supply ahead of the rig's windings.
                source_point=BEFORE_RIG,
            )
        )
    return taken
