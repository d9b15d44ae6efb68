"""Switch-mode inputs: a unit that holds its power constant once its supply has started."""

import numpy as np

from shop.physics.loads import DEFAULT_RATED_VOLTAGE, ScalableLoad, check_scalar, factor_repr

# A switch-mode supply starts once its input reaches about 80 % of the lowest voltage on its
# nameplate and stops again below about 70 % (under-voltage lockout with hysteresis; common
# practice, no source). For a universal input rated 100-240 V that is about 80 V and 70 V.
START_FRACTION = 0.8
STOP_FRACTION = 0.7
# A capacitor-input (universal-input) switch-mode supply carries about 1-2 uF of reservoir per
# watt it draws, more for a 100-120 V only input and less for a 230 V only one (common
# practice, no source). The switch-on model (shop.physics.switch_mode_start) and a capacitor
# input's steady state (shop.physics.capacitor_input) use it.
RESERVOIR_PER_WATT = 1.5e-6  # [F/W]
# An off-line converter's controller runs from its own small supply, charged from the reservoir
# through a start-up resistor or current source: about 10-50 uF brought to its 10-16 V turn-on
# level by 1-3 mA takes about 0.1-1 s, before the first start and again after every stop
# (from memory). Only the switch-on model uses it.
DEFAULT_START_DELAY = 0.2  # [s]

# The input stage: an active power-factor-corrected input draws its power as a resistance
# would; a capacitor input (a bridge charging a reservoir, no correction) draws it in peaks
# near the crest. IEC 61000-3-2 limits the harmonics of equipment drawing more than 75 W,
# which most meet with correction; smaller supplies are mostly plain capacitor inputs
# (from memory).
POWER_FACTOR_CORRECTED = "power_factor_corrected"
CAPACITOR_INPUT = "capacitor"
INPUT_STAGES = (POWER_FACTOR_CORRECTED, CAPACITOR_INPUT)
CORRECTED_ABOVE = 75.0  # [W]

RUNNING = "running"
OFF = "off"
NO_OPERATING_POINT = "no_operating_point"
STATES = (RUNNING, OFF, NO_OPERATING_POINT)
CANNOT_RUN_SENTENCE = (
    "cannot draw its rated power through this lamp: expect it to cycle or not start"
)


class ConstantPowerLoad(ScalableLoad):
    """A switch-mode input above its start voltage: it draws a fixed power whatever the volts.

    Use it for switch-mode power supplies, chargers, laptop adapters and modern gear with an
    active power-factor-corrected input, declared at the power it should draw as configured
    on the bench (idle, a few watts, unless a load is fitted). Below its start voltage it
    draws nothing; once started it holds its power, so it draws *more* current as its volts
    fall. Through a lamp that can leave it no operating point at all: the lamp's drop grows
    faster than the unit can make up, the unit stops, the lamp cools, it restarts, and the
    glow cycles; or it never starts. The solver reports that as a distinct state
    (``no_operating_point``), never as an error.

    Parameters
    ----------
    power : float
        Power the unit draws once running [W].
    rated_voltage : float, default 120.0
        The lowest input voltage on the nameplate [V] (100 V for a "100-240 V" input).
    start_voltage : float, optional
        Input voltage at which it starts [V]; default ``START_FRACTION`` (0.8) of
        ``rated_voltage``.
    stop_voltage : float, optional
        Input voltage below which a running unit stops [V]; default ``STOP_FRACTION`` (0.7)
        of ``rated_voltage``; at most ``start_voltage``.
    reservoir : float, optional
        Reservoir capacitor behind its bridge rectifier [F], for the switch-on model
        (:func:`shop.physics.switch_mode_start.switch_mode_switch_on`) and a capacitor
        input's steady state; default ``RESERVOIR_PER_WATT`` times ``power``, which
        understates it for a large supply declared at its idle draw: give it where known
        (the nameplate builder sizes it to the nameplate).
    start_delay : float, default 0.2
        Time the reservoir must stand above the start threshold before the converter runs [s]
        (its controller's own supply charging up), at the first start and at every restart;
        default ``DEFAULT_START_DELAY``; switch-on model only.
    input_stage : str, default "power_factor_corrected"
        ``"power_factor_corrected"``: the steady state draws the power as a resistance would.
        ``"capacitor"``: the steady state is the bridge and ``reservoir`` feeding a converter
        that draws the power (:mod:`shop.physics.capacitor_input`), whose current comes in
        peaks: through a lamp its RMS reads 1.4 to 1.9 times the corrected input's.

    Notes
    -----
    Running, the unit is a resistance that adjusts itself to hold its power:

    .. math:: Z(I) = P / I^2, \\quad V = P / I.

    In series with the lamp and the rig's windings the source voltage needed,
    :math:`V_s(I) = V_{lamp}(I) + R_s I + P / I`, falls with the current and then rises.
    The operating point is the root on the falling side (the lower current and higher unit
    volts: the state a running supply settles in); a source voltage below the minimum of
    :math:`V_s(I)`, or a root whose unit volts are below ``stop_voltage``, leaves no
    operating point. That is the power-factor-corrected input; a capacitor input is solved
    as a rectifier with a constant-power DC load in the time domain
    (:func:`shop.physics.capacitor_input.capacitor_input_solution`).
    """

    may_cycle = True
    constant_power = True

    def __init__(
        self,
        power,
        rated_voltage=DEFAULT_RATED_VOLTAGE,
        start_voltage=None,
        stop_voltage=None,
        draw_factor=1.0,
        reservoir=None,
        start_delay=None,
        input_stage=None,
    ):
        super().__init__(draw_factor)
        self.power = check_scalar(power, "power", "W", positive=True, allow_zero=False)
        self.rated_voltage = check_scalar(
            rated_voltage, "rated_voltage", "V", positive=True, allow_zero=False
        )
        self.start_voltage = check_scalar(
            START_FRACTION * self.rated_voltage if start_voltage is None else start_voltage,
            "start_voltage",
            "V",
            positive=True,
        )
        self.stop_voltage = check_scalar(
            STOP_FRACTION * self.rated_voltage if stop_voltage is None else stop_voltage,
            "stop_voltage",
            "V",
            positive=True,
            high=self.start_voltage,
        )
        self.reservoir_given = reservoir is not None
        self.reservoir = check_scalar(
            RESERVOIR_PER_WATT * self.power if reservoir is None else reservoir,
            "reservoir",
            "F",
            positive=True,
            allow_zero=False,
            high=1.0,
        )
        self.input_stage_given = input_stage is not None
        self.input_stage = POWER_FACTOR_CORRECTED if input_stage is None else input_stage
        if self.input_stage not in INPUT_STAGES:
            raise ValueError(
                f"input_stage must be one of {', '.join(INPUT_STAGES)} (got {input_stage!r})"
            )
        self.start_delay_given = start_delay is not None
        self.start_delay = check_scalar(
            DEFAULT_START_DELAY if start_delay is None else start_delay,
            "start_delay",
            "s",
            positive=True,
            high=60.0,
        )

    def _impedance_of_one(self, current, frequency):
        current = np.asarray(current, dtype=float)
        with np.errstate(divide="ignore"):
            return (self.power / current**2).astype(complex)

    def _admittance_of_one(self, voltage, frequency):
        voltage = np.asarray(voltage, dtype=float)
        with np.errstate(divide="ignore"):
            return (self.power / voltage**2).astype(complex)

    def _rated_power_of_one(self):
        return self.power

    def _description(self):
        description = self._steady_description()
        if self.input_stage_given:
            description["parameters"]["input_stage"] = {"value": self.input_stage, "unit": ""}
        # The switch-on model's figures are listed only where given, so that a unit declared
        # as before is described as before.
        if self.reservoir_given:
            description["parameters"]["reservoir"] = {"value": self.reservoir, "unit": "F"}
        if self.start_delay_given:
            description["parameters"]["start_delay"] = {"value": self.start_delay, "unit": "s"}
        return description

    def _steady_description(self):
        limits = (
            f"It starts at {self.start_voltage:.3g} V and stops below "
            f"{self.stop_voltage:.3g} V (about 80 % and 70 % of the lowest nameplate "
            "voltage: common practice, no source)."
        )
        if self.input_stage == CAPACITOR_INPUT:
            summary = (
                f"a switch-mode input drawing {self.power:.3g} W once started through a bridge "
                f"and a {1e6 * self.reservoir:.3g} uF reservoir (starts at "
                f"{self.start_voltage:.3g} V, stops below {self.stop_voltage:.3g} V)"
            )
            stage = [
                "A capacitor input without power-factor correction: a bridge charges the "
                f"{1e6 * self.reservoir:.3g} uF reservoir in peaks near the crest and the "
                "converter draws its power from the reservoir, stopping where the reservoir "
                "falls below the stop voltage's crest.",
            ]
            if not self.reservoir_given:
                stage.append(
                    f"Reservoir of {1e6 * RESERVOIR_PER_WATT:.3g} uF per watt drawn (common "
                    "practice, no source)."
                )
        else:
            summary = (
                f"a switch-mode input drawing {self.power:.3g} W once started "
                f"(starts at {self.start_voltage:.3g} V, stops below {self.stop_voltage:.3g} V)"
            )
            stage = [
                "Once running it holds its power whatever its volts, drawing it as a "
                "resistance would: an input with active power-factor correction.",
                # The capacitor input's steady state against this one for 5-20 W inputs
                # through 60-100 W lamps at 105-230 V (measured in this project).
                "A capacitor input without power-factor correction draws the same power in "
                "peaks near the crest: through a lamp a healthy one reads about 1.4 to 1.9 "
                "times this current on a true-RMS ammeter; declare its input stage as "
                "capacitor.",
            ]
        return {
            "model": "constant_power",
            "summary": summary,
            "parameters": {
                "power": {"value": self.power, "unit": "W"},
                "rated_voltage": {"value": self.rated_voltage, "unit": "V"},
                "start_voltage": {"value": self.start_voltage, "unit": "V"},
                "stop_voltage": {"value": self.stop_voltage, "unit": "V"},
            },
            "assumptions": [limits, *stage],
        }

    def __repr__(self):
        return (
            f"ConstantPowerLoad(power={self.power:g}, rated_voltage={self.rated_voltage:g}, "
            f"start_voltage={self.start_voltage:g}, stop_voltage={self.stop_voltage:g}, "
            f"input_stage={self.input_stage!r}, draw_factor={factor_repr(self.draw_factor)})"
        )
