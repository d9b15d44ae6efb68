"""Rectifiers with a reservoir capacitor (or a choke), solved in the time domain."""

import numpy as np

from shop.physics.loads import ScalableLoad, check_scalar, factor_repr

TOPOLOGIES = ("half_wave", "bridge", "centre_tap", "doubler")
TOPOLOGY_WORDS = {
    "half_wave": "half-wave rectifier",
    "bridge": "bridge rectifier",
    "centre_tap": "full-wave centre-tap rectifier",
    "doubler": "full-wave voltage doubler",
}
# Diodes in the conducting path of each topology, and conduction pulses per mains cycle.
DIODES_IN_PATH = {"half_wave": 1, "bridge": 2, "centre_tap": 1, "doubler": 1}
PULSES_PER_CYCLE = {"half_wave": 1, "bridge": 2, "centre_tap": 2, "doubler": 2}
RECTIFIERS = ("silicon", "valve")
# A silicon diode conducting a mains rectifier's current peaks drops about 0.8-1 V and adds a
# few tens of milliohms (from memory, typical 1N400x data-sheet curves).
SILICON_DROP = 0.9  # [V] per diode
SILICON_RESISTANCE = 0.05  # [ohm] per diode
# A valve rectifier behaves as a resistance of a few hundred ohms per anode at its rated
# current: a 5Y3 drops about 50-60 V at 125 mA, a 5U4 about 45 V at 225 mA (from memory).
VALVE_RESISTANCE = 200.0  # [ohm] per anode
# Indirectly heated valve rectifiers (EZ81, GZ34) take about 10-20 s to conduct, directly
# heated ones (5Y3, 5U4) a few seconds (from memory).
VALVE_WARM_UP_TIME = 10.0  # [s]
# A transformer feeding a capacitor-input rectifier is rated at about 1.6 VA per DC watt, and
# small mains transformers regulate by about 8 % (from memory); the default winding
# resistance, referred to the secondary, follows from both.
VA_PER_DC_WATT = 1.6
DEFAULT_REGULATION = 0.08
FILTERS = ("capacitor", "choke")
# Rated power is quoted from an ideal source at this frequency unless the unit says otherwise.
DEFAULT_RATED_FREQUENCY = 60.0  # [Hz]
# A constant-power DC load (a converter) never sees less than this: it draws P / v, and a
# discharged reservoir would otherwise ask an infinite current.
LOWEST_DC_VOLTAGE = 1.0  # [V]


class RectifierLoad(ScalableLoad):
    """A rectifier charging a reservoir capacitor, fed directly or through a transformer.

    Use it for the DC supply of valve gear (through its power transformer, with a valve or
    silicon rectifier), of solid-state amplifiers and linear bench supplies, of
    transformerless sets (half-wave straight off the mains), and inside a
    :class:`shop.physics.composite.CompositeLoad` beside heaters and a transformer's
    magnetising branch. It draws current in peaks near the crest of the mains, so its RMS
    current is far above its real power over the volts, and it is solved in the time domain
    (:mod:`shop.physics.waveform`), never as an impedance.

    Parameters
    ----------
    rated_voltage : float
        Mains voltage the unit is rated for [V].
    topology : str, default "bridge"
        ``"half_wave"``, ``"bridge"``, ``"centre_tap"`` (each half of the secondary feeds one
        diode) or ``"doubler"`` (two reservoirs in series, one charged on each half cycle).
    capacitance : float
        Reservoir capacitance [F] (each of the doubler's two).
    dc_resistance : float, optional
        DC load as a resistance [ohm].
    dc_current : float, optional
        DC load as a constant current [A].
    dc_power : float, optional
        DC load as a constant power [W]: a converter behind the reservoir (a switch-mode
        input), drawing ``dc_power / v_C``, never let see less than ``LOWEST_DC_VOLTAGE``.
        Give exactly one of ``dc_resistance``, ``dc_current`` and ``dc_power``. Through a
        lamp such a load may have no steady state, and
        :func:`shop.physics.waveform.periodic_steady_state` then raises; a switch-mode unit
        declared as :class:`shop.physics.switch_mode.ConstantPowerLoad` with a capacitor
        input answers "no operating point" instead (the service offers only that).
    turns_ratio : float, optional
        Secondary over primary voltage (each half of a centre-tapped secondary). ``None``:
        fed straight from the mains (ratio 1, no winding).
    winding_resistance : float, optional
        Resistance of the windings referred to the secondary [ohm]; default from
        ``DEFAULT_REGULATION`` and ``VA_PER_DC_WATT`` when fed through a transformer, 0 when
        fed directly.
    rectifier : str, default "silicon"
        ``"silicon"`` (``SILICON_DROP`` and ``SILICON_RESISTANCE`` per diode) or ``"valve"``
        (``VALVE_RESISTANCE`` per anode, no drop, and a warm-up delay).
    diode_drop, diode_resistance : float, optional
        Forward drop [V] and resistance [ohm] of each diode, overriding the rectifier's.
    warm_up_time : float, optional
        Time a valve rectifier takes to conduct [s]; default ``VALVE_WARM_UP_TIME`` for a
        valve, 0 for silicon.
    choke_inductance : float, optional
        A choke between rectifier and reservoir [H]: choke input (bridge or centre tap).
    choke_resistance : float, default 0.0
        The choke's resistance [ohm].
    rated_frequency : float, default 60.0
        Frequency at which :attr:`rated_power` is quoted [Hz].

    Notes
    -----
    In each half cycle the path of the polarity the source drives (``DIODES_IN_PATH``
    diodes, the windings and the diode resistance in series, :math:`R_k`) conducts while the
    secondary's EMF exceeds the reservoir plus the drops:

    .. math:: i_k = \\max(0, (n |v_u| - V_k - v_C) / R_k), \\quad
              C \\, dv_C / dt = i_k - i_{dc}(v_C),

    and the mains sees :math:`n \\, i_k`. With a choke the path current is the choke's,
    :math:`L \\, di / dt = n |v_u| - V_k - R_k i - R_L i - v_C`, held at zero when it would
    reverse. The unit's terminal voltage :math:`v_u` is solved with the rest of the circuit
    (lamp, rig and any other members) at every instant.

    References
    ----------
    .. [1] O. H. Schade, "Analysis of rectifier operation", Proc. IRE 31, 341-361 (1943).
    """

    waveform = True

    def __init__(
        self,
        rated_voltage,
        capacitance,
        topology="bridge",
        dc_resistance=None,
        dc_current=None,
        turns_ratio=None,
        winding_resistance=None,
        rectifier="silicon",
        diode_drop=None,
        diode_resistance=None,
        warm_up_time=None,
        choke_inductance=None,
        choke_resistance=0.0,
        rated_frequency=DEFAULT_RATED_FREQUENCY,
        dc_power=None,
        draw_factor=1.0,
    ):
        super().__init__(draw_factor)
        if topology not in TOPOLOGIES:
            raise ValueError(f"topology must be one of {', '.join(TOPOLOGIES)} (got {topology!r})")
        if rectifier not in RECTIFIERS:
            raise ValueError(
                f"rectifier must be one of {', '.join(RECTIFIERS)} (got {rectifier!r})"
            )
        self.topology = topology
        self.rectifier = rectifier
        self.rated_voltage = check_scalar(
            rated_voltage, "rated_voltage", "V", positive=True, allow_zero=False
        )
        self.capacitance = check_scalar(
            capacitance, "capacitance", "F", positive=True, allow_zero=False, high=1.0
        )
        given = [value is not None for value in (dc_resistance, dc_current, dc_power)]
        if sum(given) != 1:
            raise ValueError(
                "dc_resistance or dc_current or dc_power must be given: exactly one of them"
            )
        self.dc_resistance = None
        self.dc_current = None
        self.dc_power = None
        if dc_resistance is not None:
            self.dc_resistance = check_scalar(
                dc_resistance, "dc_resistance", "ohm", positive=True, allow_zero=False
            )
        elif dc_current is not None:
            self.dc_current = check_scalar(dc_current, "dc_current", "A", positive=True)
        else:
            self.dc_power = check_scalar(dc_power, "dc_power", "W", positive=True)
        self.direct = turns_ratio is None
        self.turns_ratio = (
            1.0
            if self.direct
            else check_scalar(
                turns_ratio, "turns_ratio", "", positive=True, allow_zero=False, high=100.0
            )
        )
        valve = rectifier == "valve"
        self.diode_drop = check_scalar(
            (0.0 if valve else SILICON_DROP) if diode_drop is None else diode_drop,
            "diode_drop",
            "V",
            positive=True,
            high=100.0,
        )
        self.diode_resistance = check_scalar(
            (VALVE_RESISTANCE if valve else SILICON_RESISTANCE)
            if diode_resistance is None
            else diode_resistance,
            "diode_resistance",
            "ohm",
            positive=True,
            allow_zero=False,
        )
        self.warm_up_time = check_scalar(
            (VALVE_WARM_UP_TIME if valve else 0.0) if warm_up_time is None else warm_up_time,
            "warm_up_time",
            "s",
            positive=True,
        )
        if winding_resistance is None:
            winding_resistance = 0.0 if self.direct else self._default_winding_resistance()
        self.winding_resistance = check_scalar(
            winding_resistance, "winding_resistance", "ohm", positive=True
        )
        self.choke_inductance = None
        if choke_inductance is not None:
            if topology not in ("bridge", "centre_tap"):
                raise ValueError(
                    f"choke_inductance needs a bridge or centre-tap rectifier (got {topology!r})"
                )
            self.choke_inductance = check_scalar(
                choke_inductance, "choke_inductance", "H", positive=True, allow_zero=False
            )
        self.choke_resistance = check_scalar(
            choke_resistance, "choke_resistance", "ohm", positive=True
        )
        self.rated_frequency = check_scalar(
            rated_frequency, "rated_frequency", "Hz", low=40.0, high=70.0
        )
        self._rated_power = None

    @property
    def filter(self):
        """``"choke"`` when a choke feeds the reservoir, else ``"capacitor"``."""
        return "capacitor" if self.choke_inductance is None else "choke"

    @property
    def path_drop(self):
        """Forward drop of the conducting path [V]: the diodes in it times each one's drop."""
        return DIODES_IN_PATH[self.topology] * self.diode_drop

    @property
    def path_resistance(self):
        """Resistance of the conducting path [ohm]: windings and diodes, secondary side."""
        return self.winding_resistance + DIODES_IN_PATH[self.topology] * self.diode_resistance

    @property
    def nominal_dc_voltage(self):
        """The reservoir charged to the secondary's crest less the drops [V] (a doubler twice)."""
        crest = np.sqrt(2.0) * self.turns_ratio * self.rated_voltage - self.path_drop
        return max(crest, 0.0) * (2.0 if self.topology == "doubler" else 1.0)

    def nominal_dc_power(self):
        """DC power at :attr:`nominal_dc_voltage` [W], for defaults and first guesses."""
        volts = self.nominal_dc_voltage
        if self.dc_resistance is not None:
            return volts**2 / self.dc_resistance
        if self.dc_power is not None:
            return self.dc_power
        return volts * self.dc_current

    def _default_winding_resistance(self):
        secondary = self.turns_ratio * self.rated_voltage
        power = max(self.nominal_dc_power(), 1e-3)
        return DEFAULT_REGULATION * secondary**2 / (VA_PER_DC_WATT * power)

    def dc_load_current(self, voltage):
        """Current the DC load draws at a reservoir voltage [A] (numeric [V] in)."""
        voltage = np.asarray(voltage, dtype=float)
        if self.dc_resistance is not None:
            return voltage / self.dc_resistance
        if self.dc_power is not None:
            return self.dc_power / np.maximum(voltage, LOWEST_DC_VOLTAGE)
        return np.where(voltage > 0, self.dc_current, 0.0)

    def _impedance_of_one(self, current, frequency):
        raise ValueError(
            "a rectifier has no impedance: it draws its current in peaks and is solved in the "
            "time domain (shop.physics.waveform)"
        )

    def _admittance_of_one(self, voltage, frequency):
        return self._impedance_of_one(voltage, frequency)

    def _rated_power_of_one(self):
        if self._rated_power is None:
            from shop.physics.waveform import rated_input_power

            self._rated_power = rated_input_power(self, self.rated_frequency)
        return self._rated_power

    def _description(self):
        feed = (
            "fed straight from the mains"
            if self.direct
            else f"through a transformer of ratio {self.turns_ratio:.3g}"
        )
        if self.dc_resistance is not None:
            dc = f"a {self.dc_resistance:.4g} ohm DC load"
        elif self.dc_power is not None:
            dc = f"a converter drawing {self.dc_power:.3g} W"
        else:
            dc = f"a {1000 * self.dc_current:.3g} mA DC load"
        choke = (
            "" if self.choke_inductance is None else f", {self.choke_inductance:g} H choke input"
        )
        part = "anode" if self.rectifier == "valve" else "diode"
        assumptions = [
            f"The {self.rectifier} rectifier drops {self.diode_drop:g} V and adds "
            f"{self.diode_resistance:g} ohm per {part} (typical figures, from memory).",
        ]
        if not self.direct:
            assumptions.append(
                f"Windings of {self.winding_resistance:.3g} ohm referred to the secondary "
                "(about 8 % regulation, from memory); leakage reactance neglected."
            )
        if self.rectifier == "valve":
            assumptions.append(
                f"The valve rectifier conducts after {self.warm_up_time:g} s of warm-up "
                "(from memory)."
            )
        parameters = {
            "rated_voltage": {"value": self.rated_voltage, "unit": "V"},
            "topology": {"value": self.topology, "unit": ""},
            "capacitance": {"value": self.capacitance, "unit": "F"},
            "dc_resistance": {"value": self.dc_resistance, "unit": "ohm"},
            "dc_current": {"value": self.dc_current, "unit": "A"},
            "turns_ratio": {"value": None if self.direct else self.turns_ratio, "unit": ""},
            "winding_resistance": {"value": self.winding_resistance, "unit": "ohm"},
            "rectifier": {"value": self.rectifier, "unit": ""},
            "diode_drop": {"value": self.diode_drop, "unit": "V"},
            "diode_resistance": {"value": self.diode_resistance, "unit": "ohm"},
            "warm_up_time": {"value": self.warm_up_time, "unit": "s"},
            "choke_inductance": {"value": self.choke_inductance, "unit": "H"},
            "choke_resistance": {"value": self.choke_resistance, "unit": "ohm"},
        }
        if self.dc_power is not None:
            parameters["dc_power"] = {"value": self.dc_power, "unit": "W"}
        return {
            "model": "rectifier",
            "summary": (
                f"a {self.rectifier} {TOPOLOGY_WORDS[self.topology]} {feed}, "
                f"{1e6 * self.capacitance:.4g} uF reservoir and {dc}{choke}, drawing "
                f"{self._rated_power_of_one():.3g} W at {self.rated_voltage:g} V"
            ),
            "parameters": parameters,
            "assumptions": assumptions,
        }

    def __repr__(self):
        load = (
            f"dc_resistance={self.dc_resistance!r}"
            if self.dc_resistance is not None
            else f"dc_power={self.dc_power!r}"
            if self.dc_power is not None
            else f"dc_current={self.dc_current!r}"
        )
        return (
            f"RectifierLoad(rated_voltage={self.rated_voltage:g}, "
            f"capacitance={self.capacitance!r}, topology={self.topology!r}, {load}, "
            f"turns_ratio={None if self.direct else self.turns_ratio!r}, "
            f"rectifier={self.rectifier!r}, draw_factor={factor_repr(self.draw_factor)})"
        )
