"""Valve heaters and other tungsten elements whose resistance rises with their own temperature."""

import numpy as np

from shop.physics.lamp import Filament
from shop.physics.loads import ScalableLoad, check_scalar, factor_repr
from shop.physics.materials import TABLE_MAX_TEMPERATURE

# Heaters of oxide-cathode receiving valves run at roughly 1300-1500 K (from memory), far
# cooler than a lamp's 2700-2900 K; 1400 K gives a cold resistance about a seventh of the hot,
# the "heaters start at a fraction of their hot resistance" of the trade.
DEFAULT_HEATER_TEMPERATURE = 1400.0  # [K]
# Share of the heater's rated power lost by conduction through its leads and the cathode's
# supports rather than radiated from the cathode (common practice, no source).
DEFAULT_HEATER_CONDUCTION_FRACTION = 0.10
# Conduction along metal leads, linear in the temperature difference (as for vacuum lamps).
HEATER_CONDUCTION_EXPONENT = 1.0
# Thermal time constant of an indirectly heated cathode at its rated temperature: the heater
# warms the cathode sleeve, whose mass dominates. Indirectly heated valves take 10-30 s to
# reach full emission (from memory); the heater's own resistance settles sooner.
DEFAULT_WARM_UP_TIME = 10.0  # [s]


class HeaterLoad(ScalableLoad):
    """A heater string or element whose resistance rises with its own temperature.

    Use it for the heaters of a valve set (a series string across the mains in a
    transformerless set, or the heater winding's load referred to the primary), for heating
    elements and for anything else made of tungsten that starts cold at a fraction of its hot
    resistance. A heater on a transformer's secondary is declared at the primary: its rated
    voltage is the primary's and its rated power the heater power.

    Parameters
    ----------
    rated_voltage : float
        Voltage across the heater (referred to the unit's terminals) at which it draws its
        rated power [V].
    rated_power : float
        Power of the heater (or the whole string) at rated voltage [W].
    rated_temperature : float, default ``DEFAULT_HEATER_TEMPERATURE`` (1400 K)
        Element temperature at rated voltage [K], 1000-3400 K.
    conduction_fraction : float, default ``DEFAULT_HEATER_CONDUCTION_FRACTION`` (0.1)
        Share of rated power lost by conduction at rated temperature [-].
    warm_up_time : float, default ``DEFAULT_WARM_UP_TIME`` (10 s)
        Thermal time constant at rated temperature [s]; sets the heat capacity for
        switch-on transients. Directly heated valves (and bare elements) are quicker, a
        second or two.
    ambient_temperature : float, default 300.0
        Temperature of the cold heater [K].

    Notes
    -----
    The element is a :class:`shop.physics.lamp.Filament` with tungsten's resistivity and
    total emissivity tables: in steady state :math:`I^2 R(T) = P_{loss}(T)` fixes its
    temperature at every current, and :math:`Z(I) = R(T(I))`, real. The heat capacity is
    :math:`C = \\tau \\, dP_{loss}/dT` at rated temperature, so that a small excursion from
    rating relaxes with the time constant :math:`\\tau` (``warm_up_time``). Beyond the end
    of the resistivity table (3600 K) the element would have melted; the resistance is held
    at its 3600 K value there so that the solver can still bracket a dead short's current.

    References
    ----------
    .. [1] W. E. Forsythe and A. G. Worthing, "The properties of tungsten and the
       characteristics of tungsten lamps", Astrophys. J. 61, 146 (1925).
    """

    def __init__(
        self,
        rated_voltage,
        rated_power,
        rated_temperature=DEFAULT_HEATER_TEMPERATURE,
        conduction_fraction=DEFAULT_HEATER_CONDUCTION_FRACTION,
        warm_up_time=DEFAULT_WARM_UP_TIME,
        ambient_temperature=300.0,
        draw_factor=1.0,
    ):
        super().__init__(draw_factor)
        self.element = Filament(
            rated_voltage,
            rated_power,
            rated_temperature,
            conduction_fraction,
            HEATER_CONDUCTION_EXPONENT,
            ambient_temperature=ambient_temperature,
        )
        self.warm_up_time = check_scalar(
            warm_up_time, "warm_up_time", "s", positive=True, allow_zero=False
        )
        self._largest_current = float(self.element.curve().current[-1])
        self._hottest_resistance = float(
            self.element.resistance_at_temperature(TABLE_MAX_TEMPERATURE)
        )

    @property
    def rated_voltage(self):
        """Rated voltage of the heater at the unit's terminals [V]."""
        return self.element.rated_voltage

    @property
    def heat_capacity(self):
        """Lumped heat capacity of heater and cathode [J/K]: ``tau * dP_loss/dT`` at rating."""
        element = self.element
        return self.warm_up_time * float(element._power_loss_derivative(element.rated_temperature))

    def temperature_at_current(self, current):
        """Steady element temperature [K] at an RMS current [A] through one heater.

        Parameters
        ----------
        current : numeric
            RMS current through one heater [A], ``>= 0``.

        Returns
        -------
        numpy.ndarray
            Shaped like ``current``; 3600 K (the end of the table) beyond its current there.
        """
        current = np.asarray(current, dtype=float)
        inside = np.minimum(current, self._largest_current)
        return self.element.filament_temperature_at_current(inside)

    def _impedance_of_one(self, current, frequency):
        current = np.asarray(current, dtype=float)
        inside = np.minimum(current, self._largest_current)
        resistance = self.element.resistance_at_temperature(
            self.element.filament_temperature_at_current(inside)
        )
        return np.where(current > self._largest_current, self._hottest_resistance, resistance)

    def _admittance_of_one(self, voltage, frequency):
        voltage = np.asarray(voltage, dtype=float)
        largest = self.element.max_voltage
        resistance = self.element.resistance(np.minimum(voltage, largest))
        return (1.0 / np.where(voltage > largest, self._hottest_resistance, resistance)).astype(
            complex
        )

    def _rated_power_of_one(self):
        return self.element.rated_power

    def _description(self):
        element = self.element
        ratio = element.hot_resistance / element.cold_resistance
        return {
            "model": "heater",
            "summary": (
                f"a heater of {element.rated_power:.3g} W at {element.rated_voltage:g} V "
                f"whose cold resistance is 1/{ratio:.2g} of its hot"
            ),
            "parameters": {
                "rated_voltage": {"value": element.rated_voltage, "unit": "V"},
                "rated_power": {"value": element.rated_power, "unit": "W"},
                "rated_temperature": {"value": element.rated_temperature, "unit": "K"},
                "conduction_fraction": {"value": element.conduction_fraction, "unit": ""},
                "warm_up_time": {"value": self.warm_up_time, "unit": "s"},
                "hot_resistance": {"value": element.hot_resistance, "unit": "ohm"},
                "cold_resistance": {"value": element.cold_resistance, "unit": "ohm"},
            },
            "assumptions": [
                f"The element is tungsten at {element.rated_temperature:.0f} K at rated voltage "
                "(valve heaters run at roughly 1300-1500 K, from memory).",
                f"It warms with a time constant of {self.warm_up_time:g} s (indirectly heated "
                "valves take 10-30 s to warm, from memory).",
            ],
        }

    def __repr__(self):
        element = self.element
        return (
            f"HeaterLoad(rated_voltage={element.rated_voltage:g}, "
            f"rated_power={element.rated_power:g}, "
            f"rated_temperature={element.rated_temperature:g}, "
            f"draw_factor={factor_repr(self.draw_factor)})"
        )
