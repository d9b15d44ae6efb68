"""Tungsten filaments: lamps and banks of them in parallel as series current limiters."""

from typing import NamedTuple

import numpy as np
from scipy import constants
from scipy.interpolate import CubicHermiteSpline, PchipInterpolator
from scipy.optimize import least_squares

from shop.physics.glow import GLOW_CLASSES, glow_class_of_lamp, luminance
from shop.physics.materials import (
    TABLE_MAX_TEMPERATURE,
    TABLE_MIN_TEMPERATURE,
    TUNGSTEN_DENSITY,
    tungsten_emissivity,
    tungsten_emissivity_derivative,
    tungsten_heat_capacity,
    tungsten_resistivity,
    tungsten_resistivity_derivative,
)

FILLS = ("gas", "vacuum", "halogen")

RATED_VOLTAGE_RANGE = (6.0, 300.0)  # [V] from low-voltage lamps to 230-277 V mains lamps
# [K] The table starts at 300 K, so a colder bench is refused rather than extrapolated; 350 K
# (77 degC) is already hotter than any bench.
AMBIENT_TEMPERATURE_RANGE = (TABLE_MIN_TEMPERATURE, 350.0)
# [K] Below 1500 K tungsten gives almost no light; above 3400 K (photoflood lamps, from memory)
# the filament would be within 300 K of melting (3695 K) and the model would reach less than
# 1.2x rated voltage before the end of the resistivity table.
RATED_TEMPERATURE_RANGE = (1500.0, 3400.0)
# [K] Any tungsten filament the library models, lamps and valve heaters: heaters of
# oxide-cathode valves run at roughly 1300-1500 K (from memory), far cooler than a lamp.
FILAMENT_TEMPERATURE_RANGE = (1000.0, RATED_TEMPERATURE_RANGE[1])
CONDUCTION_FRACTION_RANGE = (0.0, 0.9)

# Filament temperature at rated voltage by fill, as (rated power [W], temperature [K]) pairs,
# interpolated in log power and held at the end values outside the pairs (no extrapolation).
# Gas: midpoints of 2700-2750 K at 40 W, 2750-2800 K at 60 W, 2850-2870 K at 100 W
# (from memory): larger filaments run hotter for the same life.
# Vacuum: general-service vacuum lamps (up to about 40 W) run near 2400-2600 K (from memory).
# Halogen: mains halogen lamps run at about 2900-3100 K (from memory).
# 230 V lamps have thinner filaments and run somewhat cooler than 120 V lamps of the same power;
# where that matters give rated_temperature, cold_resistance, or fit measured points.
DEFAULT_RATED_TEMPERATURE = {
    "gas": ((40.0, 2725.0), (60.0, 2775.0), (100.0, 2860.0)),
    "vacuum": ((25.0, 2500.0),),
    "halogen": ((100.0, 3000.0),),
}

# Share of the rated power lost by conduction at rated temperature, by fill (from memory, each
# uncertain by about a factor of 1.5; fit measured points where it matters). Gas: the fill
# gas carries 15-25 % of the input of 40-100 W coiled-coil lamps, more for thinner filaments
# (Langmuir 1912-1913 found gas loss the price of a gas fill, and coiling the filament to cut
# it; Elenbaas, "Light Sources", 1972). Vacuum: only the lead and support wires conduct, a few
# per cent. Halogen: a dense krypton or xenon fill, whose conductivity is a third to a half of
# argon's, in a small capsule: about 10-15 %.
DEFAULT_CONDUCTION_FRACTION = {"gas": 0.20, "vacuum": 0.05, "halogen": 0.12}

# Exponent n of the conduction loss G (T**n - T_amb**n), by fill. Gas (and halogen): Langmuir's
# stagnant-film model gives the loss as a fixed shape factor times the heat-conduction
# potential phi(T) = integral of k dT; the fill gases' conductivity k grows about as T**0.75
# (argon 0.018 W/(m K) at 300 K and about 0.043 at 1000 K; nitrogen 0.026 and 0.066; from
# memory), so phi(T) - phi(T_amb) goes as T**1.75 - T_amb**1.75. Vacuum: conduction along the
# metal leads, whose conductivity changes little with temperature: linear in T - T_amb.
CONDUCTION_EXPONENT = {"gas": 1.75, "vacuum": 1.0, "halogen": 1.75}

# Temperature grid of the lamp curve: dense, quadratic in a uniform parameter so that the
# voltage steps are nearly even near zero volts (V grows as sqrt(T - T_amb) there).
CURVE_POINTS = 2001
NEWTON_STEPS = 3
THERMAL_TABLE_STEP = 1.0  # [K]

# Lamp.fit searches the conduction fraction within FIT_CONDUCTION_FRACTION_RANGE (half the
# rated power by conduction is already beyond any lamp we know of) and accepts points up to
# FIT_MAX_VOLTAGE_RATIO times rated voltage, which every lamp in the search reaches before the
# end of the resistivity table.
FIT_CONDUCTION_FRACTION_RANGE = (0.0, 0.5)
FIT_MAX_VOLTAGE_RATIO = 1.1


class ThermalTable(NamedTuple):
    """A filament's properties tabulated against its temperature, for switch-on transients."""

    temperature: np.ndarray  # [K]
    resistance: np.ndarray  # [ohm]
    power_loss: np.ndarray  # [W]
    heat_capacity: np.ndarray  # [J/K]


class LampCurve(NamedTuple):
    """A lamp's steady-state curve: three strictly increasing 1-D arrays from zero volts."""

    voltage: np.ndarray  # [V]
    current: np.ndarray  # [A]
    temperature: np.ndarray  # [K]


def _check_scalar(value, name, unit, low=None, high=None, positive=False):
    try:
        number = float(value)
    except (TypeError, ValueError):
        raise ValueError(f"{name} must be a number (got {value!r})") from None
    unit = f" {unit}" if unit else ""
    if np.isnan(number) or np.isinf(number):
        raise ValueError(f"{name} must be a finite number (got {value!r})")
    if positive and number <= 0.0:
        raise ValueError(f"{name} must be positive (got {number:g}{unit})")
    if low is not None and not low <= number <= high:
        raise ValueError(
            f"{name} must lie between {low:g}{unit} and {high:g}{unit} (got {number:g}{unit})"
        )
    return number


def _check_fill(fill):
    if fill not in FILLS:
        allowed = ", ".join(repr(name) for name in FILLS)
        raise ValueError(f"fill must be one of {allowed} (got {fill!r})")
    return fill


def _check_voltage(voltage, maximum):
    values = np.asarray(voltage, dtype=float)
    if np.any(np.isnan(values)):
        raise ValueError("voltage must be a number (got NaN)")
    if np.any(values < 0.0):
        raise ValueError(f"voltage must not be negative (got {values.min():g} V)")
    if np.any(values > maximum):
        raise ValueError(
            f"voltage must not exceed {maximum:.4g} V, where the filament reaches "
            f"{TABLE_MAX_TEMPERATURE:g} K, the end of the resistivity table "
            f"(got {values.max():g} V)"
        )
    return values


def default_rated_temperature(rated_power, fill="gas"):
    """
    Default filament temperature at rated voltage for a lamp of this power and fill.

    Parameters
    ----------
    rated_power : float
        rated power of the lamp [W]
    fill : str
        one of ``FILLS``

    Returns
    -------
    rated_temperature : float
        filament temperature at rated voltage [K], from ``DEFAULT_RATED_TEMPERATURE``.
    """
    power = _check_scalar(rated_power, "rated_power", "W", positive=True)
    pairs = np.asarray(DEFAULT_RATED_TEMPERATURE[_check_fill(fill)])
    return float(np.interp(np.log(power), np.log(pairs[:, 0]), pairs[:, 1]))


def _rated_temperature_from_cold_resistance(cold_resistance, hot_resistance, ambient):
    """Solve rho(T_r) / rho(T_amb) = R_h / R_cold on the resistivity table."""
    target = tungsten_resistivity(ambient) * hot_resistance / cold_resistance
    grid = np.linspace(TABLE_MIN_TEMPERATURE, TABLE_MAX_TEMPERATURE, 3301)
    resistivity = tungsten_resistivity(grid)
    low, high = RATED_TEMPERATURE_RANGE
    if not tungsten_resistivity(low) <= target <= tungsten_resistivity(high):
        if target > resistivity[-1]:
            implied = f"above {TABLE_MAX_TEMPERATURE:g} K"
        elif target < resistivity[0]:
            implied = f"below {TABLE_MIN_TEMPERATURE:g} K"
        else:
            implied = f"of {np.interp(target, resistivity, grid):.0f} K"
        raise ValueError(
            f"cold_resistance {cold_resistance:g} ohm implies a rated filament temperature "
            f"{implied} (hot/cold ratio {hot_resistance / cold_resistance:.3g}), outside "
            f"{low:g}-{high:g} K: check the measurement, or that the lamp is tungsten"
        )
    temperature = float(np.interp(target, resistivity, grid))
    for _ in range(NEWTON_STEPS):
        temperature -= float(
            (tungsten_resistivity(temperature) - target)
            / tungsten_resistivity_derivative(temperature)
        )
    return temperature


class Filament:
    """
    A tungsten filament (a lamp's, or a valve heater's) in steady state, from its rating.

    Parameters
    ----------
    rated_voltage : float
        rated voltage [V], positive
    rated_power : float
        rated power at rated voltage [W]
    rated_temperature : float
        filament temperature at rated voltage, within ``FILAMENT_TEMPERATURE_RANGE`` [K]
    conduction_fraction : float
        share of rated power lost by conduction at rated temperature [-]
    conduction_exponent : float
        exponent n of the conduction loss ``G (T**n - T_amb**n)`` [-]
    ambient_temperature : float, default 300.0
        temperature of the surroundings and the cold filament, 300 to 350 [K]

    Notes
    -----
    The filament resistance scales with tungsten's resistivity,

    .. math:: R(T) = R_h \\rho(T) / \\rho(T_r), \\quad R_h = V_r^2 / P_r,

    and in steady state the electrical input equals the heat loss,

    .. math:: V^2 / R(T) = P_{loss}(T) = A \\sigma \\varepsilon(T) (T^4 - T_a^4)
              + G (T^n - T_a^n),

    radiation with tungsten's total hemispherical emissivity plus conduction to the fill gas
    and the leads. A and G follow from :math:`P_{loss}(T_r) = P_r` and the conduction
    fraction f: :math:`G (T_r^n - T_a^n) = f P_r`. Both sides of the balance rise with T, so
    every voltage (and every current) has one filament temperature. The solution interpolates
    a dense precomputed curve and polishes it with Newton steps on
    :math:`P_{loss}(T) R(T) = V^2` (or :math:`P_{loss}(T) = I^2 R(T)`).

    The filament's size follows from the rating: a round wire of diameter d and length L has
    :math:`R_h = 4 \\rho(T_r) L / (\\pi d^2)` and radiating area :math:`A = \\pi d L`, so

    .. math:: d^3 = 4 \\rho(T_r) A / (\\pi^2 R_h), \\quad L = A / (\\pi d),

    and its mass :math:`m = \\rho_m \\pi d^2 L / 4` with tungsten's density. A coiled
    filament shades itself, so A is an effective area and d, L those of the straight wire
    that radiates alike.

    References
    ----------
    .. [1] I. Langmuir, "Convection and conduction of heat in gases", Phys. Rev. 34, 401
       (1912).
    .. [2] W. E. Forsythe and A. G. Worthing, "The properties of tungsten and the
       characteristics of tungsten lamps", Astrophys. J. 61, 146 (1925).
    """

    def __init__(
        self,
        rated_voltage,
        rated_power,
        rated_temperature,
        conduction_fraction,
        conduction_exponent,
        ambient_temperature=300.0,
    ):
        self._rated_voltage = _check_scalar(rated_voltage, "rated_voltage", "V", positive=True)
        self._rated_power = _check_scalar(rated_power, "rated_power", "W", positive=True)
        self._ambient_temperature = _check_scalar(
            ambient_temperature, "ambient_temperature", "K", *AMBIENT_TEMPERATURE_RANGE
        )
        self._rated_temperature = _check_scalar(
            rated_temperature, "rated_temperature", "K", *FILAMENT_TEMPERATURE_RANGE
        )
        self._conduction_fraction = _check_scalar(
            conduction_fraction, "conduction_fraction", "", *CONDUCTION_FRACTION_RANGE
        )
        self._conduction_exponent = _check_scalar(
            conduction_exponent, "conduction_exponent", "", positive=True
        )

        ambient, rated = self._ambient_temperature, self._rated_temperature
        self._rated_resistivity = float(tungsten_resistivity(rated))
        # A * sigma and G of the Notes, fixed by P_loss(T_r) = P_r and the conduction fraction.
        self._radiation_coefficient = (
            (1.0 - self._conduction_fraction)
            * self._rated_power
            / (tungsten_emissivity(rated) * (rated**4 - ambient**4))
        )
        self._conduction_coefficient = (
            self._conduction_fraction
            * self._rated_power
            / (rated**self._conduction_exponent - ambient**self._conduction_exponent)
        )
        self._build_curve()
        self._thermal_table = None

    @property
    def rated_voltage(self):
        """Rated voltage [V]."""
        return self._rated_voltage

    @property
    def rated_power(self):
        """Rated power at rated voltage [W]."""
        return self._rated_power

    @property
    def rated_temperature(self):
        """Filament temperature at rated voltage [K]."""
        return self._rated_temperature

    @property
    def ambient_temperature(self):
        """Temperature of the bench and the cold filament [K]."""
        return self._ambient_temperature

    @property
    def conduction_fraction(self):
        """Share of rated power lost by conduction at rated temperature [-]."""
        return self._conduction_fraction

    @property
    def radiation_area(self):
        """Effective radiating area A of the filament implied by the rating [m^2]."""
        return self._radiation_coefficient / constants.Stefan_Boltzmann

    @property
    def hot_resistance(self):
        """Filament resistance at rated voltage, V_r**2 / P_r [ohm]."""
        return self._rated_voltage**2 / self._rated_power

    @property
    def cold_resistance(self):
        """Filament resistance at ambient temperature [ohm]."""
        return float(self.resistance_at_temperature(self._ambient_temperature))

    @property
    def max_voltage(self):
        """Voltage at which the filament reaches the end of the resistivity table [V]."""
        return float(self._curve.voltage[-1])

    @property
    def wire_diameter(self):
        """Diameter of the straight wire that radiates as the filament does [m] (see Notes)."""
        return float(
            (4.0 * self._rated_resistivity * self.radiation_area / (np.pi**2 * self.hot_resistance))
            ** (1.0 / 3.0)
        )

    @property
    def wire_length(self):
        """Length of that wire [m]: ``A / (pi d)``."""
        return self.radiation_area / (np.pi * self.wire_diameter)

    @property
    def mass(self):
        """Mass of the filament [kg]: tungsten's density times the wire's volume."""
        diameter = self.wire_diameter
        return TUNGSTEN_DENSITY * np.pi * diameter**2 / 4.0 * self.wire_length

    def heat_capacity(self, temperature):
        """
        Heat capacity of the whole filament at a filament temperature.

        Parameters
        ----------
        temperature : numeric
            filament temperature, 300 to 3600 [K]

        Returns
        -------
        heat_capacity : numpy.ndarray
            mass times tungsten's specific heat capacity, shaped like ``temperature`` [J/K]

        Notes
        -----
        :math:`C(T) = m \\, c_p(T)`, with :math:`c_p` from the NIST-JANAF Shomate equation
        (:func:`shop.physics.materials.tungsten_heat_capacity`).
        """
        return self.mass * tungsten_heat_capacity(temperature)

    def thermal_table(self):
        """
        Resistance, heat loss and heat capacity tabulated every kelvin, for fast transients.

        Returns
        -------
        table : ThermalTable
            ``temperature`` [K] from ambient to 3600 K every ``THERMAL_TABLE_STEP``,
            ``resistance`` [ohm], ``power_loss`` [W] and ``heat_capacity`` [J/K] there;
            read-only arrays, built once per filament. Linear interpolation between rows is
            good to about 1e-7 of each (the curves are smooth on a 1 K scale).
        """
        if self._thermal_table is None:
            temperature = np.arange(
                self._ambient_temperature, TABLE_MAX_TEMPERATURE, THERMAL_TABLE_STEP
            )
            temperature = np.append(temperature, TABLE_MAX_TEMPERATURE)
            table = ThermalTable(
                temperature,
                self.resistance_at_temperature(temperature),
                self.power_loss(temperature),
                self.heat_capacity(temperature),
            )
            for values in table:
                values.setflags(write=False)
            self._thermal_table = table
        return self._thermal_table

    def __repr__(self):
        return (
            f"{type(self).__name__}(rated_voltage={self._rated_voltage:g}, "
            f"rated_power={self._rated_power:g}, "
            f"rated_temperature={self._rated_temperature:.1f}, "
            f"conduction_fraction={self._conduction_fraction:g}, "
            f"conduction_exponent={self._conduction_exponent:g}, "
            f"ambient_temperature={self._ambient_temperature:g})"
        )

    def resistance_at_temperature(self, temperature):
        """
        Filament resistance at a filament temperature.

        Parameters
        ----------
        temperature : numeric
            filament temperature, 300 to 3600 [K]

        Returns
        -------
        resistance : numpy.ndarray
            shaped like ``temperature`` [ohm]

        Notes
        -----
        .. math:: R(T) = R_h \\rho(T) / \\rho(T_r)
        """
        return self.hot_resistance * tungsten_resistivity(temperature) / self._rated_resistivity

    def power_loss(self, temperature):
        """
        Heat lost by the filament at a filament temperature.

        Parameters
        ----------
        temperature : numeric
            filament temperature, 300 to 3600 [K]

        Returns
        -------
        power : numpy.ndarray
            radiation plus conduction, shaped like ``temperature`` [W]

        Notes
        -----
        .. math:: P_{loss}(T) = A \\sigma \\varepsilon(T) (T^4 - T_a^4) + G (T^n - T_a^n)

        References
        ----------
        .. [1] J. Stefan (1879) and L. Boltzmann (1884); sigma from CODATA via
           ``scipy.constants.Stefan_Boltzmann``.
        """
        values = np.asarray(temperature, dtype=float)
        ambient, exponent = self._ambient_temperature, self._conduction_exponent
        return self._radiation_coefficient * tungsten_emissivity(values) * (
            values**4 - ambient**4
        ) + self._conduction_coefficient * (values**exponent - ambient**exponent)

    def _power_loss_derivative(self, temperature):
        ambient, exponent = self._ambient_temperature, self._conduction_exponent
        return self._radiation_coefficient * (
            tungsten_emissivity_derivative(temperature) * (temperature**4 - ambient**4)
            + 4.0 * tungsten_emissivity(temperature) * temperature**3
        ) + self._conduction_coefficient * exponent * temperature ** (exponent - 1.0)

    def _build_curve(self):
        ambient = self._ambient_temperature
        parameter = np.linspace(0.0, 1.0, CURVE_POINTS)
        temperature = ambient + (TABLE_MAX_TEMPERATURE - ambient) * parameter**2
        resistance = self.resistance_at_temperature(temperature)
        squared_voltage = self.power_loss(temperature) * resistance
        voltage = np.sqrt(squared_voltage)
        current = voltage / resistance
        for name, values in (("voltage", voltage), ("current", current)):
            if not np.all(np.diff(values) > 0.0):
                raise ValueError(
                    f"the filament's {name} does not rise with filament temperature "
                    f"for these parameters: {self!r}"
                )
        for values in (voltage, current, temperature):
            values.setflags(write=False)
        self._curve = LampCurve(voltage, current, temperature)
        # The temperature at a lamp voltage is read from the curve: a cubic Hermite
        # interpolant in V^2 with the exact slope dT/d(V^2) at each point (within about
        # 1e-5 K of the power balance's root), then one step along the interpolated slope.
        self._temperature_of_squared_voltage = CubicHermiteSpline(
            squared_voltage, temperature, 1.0 / self._squared_voltage_slope(temperature)
        )
        self._temperature_slope_of_squared_voltage = (
            self._temperature_of_squared_voltage.derivative()
        )
        self._temperature_of_squared_current = PchipInterpolator(current**2, temperature)

    def curve(self):
        """
        The lamp's steady-state curve on a dense filament-temperature grid.

        Returns
        -------
        curve : LampCurve
            ``voltage`` [V], ``current`` [A] and ``temperature`` [K], strictly increasing
            from (0 V, 0 A, ambient) to the end of the resistivity table; read-only arrays,
            built once per lamp.
        """
        return self._curve

    def filament_temperature(self, voltage):
        """
        Steady-state filament temperature at a lamp voltage.

        Parameters
        ----------
        voltage : numeric
            RMS voltage across the lamp, 0 to ``max_voltage`` [V]

        Returns
        -------
        temperature : numpy.ndarray
            shaped like ``voltage``; ambient at zero volts [K]

        Notes
        -----
        Read from the lamp's curve (``curve()``, 2001 points) by cubic Hermite interpolation
        in :math:`V^2` with the exact slope :math:`dT/d(V^2)` of the power balance
        :math:`P_{loss}(T) R(T) = V^2` at every point (within about 1e-5 K of its root), then
        one Newton step with the interpolated slope, which brings the balance to about 1e-13.
        """
        values = _check_voltage(voltage, self.max_voltage)
        target = values**2
        ambient = self._ambient_temperature
        temperature = np.clip(
            self._temperature_of_squared_voltage(target), ambient, TABLE_MAX_TEMPERATURE
        )
        balance = self.power_loss(temperature) * self.resistance_at_temperature(temperature)
        return np.clip(
            temperature - (balance - target) * self._temperature_slope_of_squared_voltage(target),
            ambient,
            TABLE_MAX_TEMPERATURE,
        )

    def _squared_voltage_slope(self, temperature):
        """d(V^2)/dT along the curve, where ``V^2 = P_loss(T) R(T)`` [V^2/K]."""
        return (
            self._power_loss_derivative(temperature) * self.resistance_at_temperature(temperature)
            + self.power_loss(temperature)
            * self.hot_resistance
            * tungsten_resistivity_derivative(temperature)
            / self._rated_resistivity
        )

    def _filament_temperature_by_newton(self, voltage):
        """The power balance ``P_loss(T) R(T) = V^2`` solved by Newton steps from the curve.

        Three full Newton steps: slower than ``filament_temperature``, kept so that a test
        can show how little reading the curve moves the temperature.
        """
        values = _check_voltage(voltage, self.max_voltage)
        target = values**2
        temperature = np.clip(
            self._temperature_of_squared_voltage(target),
            self._ambient_temperature,
            TABLE_MAX_TEMPERATURE,
        )
        for _ in range(NEWTON_STEPS):
            loss = self.power_loss(temperature) * self.resistance_at_temperature(temperature)
            temperature = np.clip(
                temperature - (loss - target) / self._squared_voltage_slope(temperature),
                self._ambient_temperature,
                TABLE_MAX_TEMPERATURE,
            )
        return temperature

    def filament_temperature_at_current(self, current):
        """
        Steady-state filament temperature at an RMS current through the filament.

        Parameters
        ----------
        current : numeric
            RMS current through the filament, 0 to the current at ``max_voltage`` [A]

        Returns
        -------
        temperature : numpy.ndarray
            shaped like ``current``; ambient at zero current [K]

        Notes
        -----
        Interpolates the curve in :math:`I^2` and polishes with Newton steps on
        :math:`P_{loss}(T) = I^2 R(T)`; loss rises with T far faster than
        :math:`I^2 R(T)` at a fixed current, so the step is well defined.
        """
        values = np.asarray(current, dtype=float)
        if np.any(np.isnan(values)):
            raise ValueError("current must be a number (got NaN)")
        largest = float(self._curve.current[-1])
        if np.any(values < 0.0) or np.any(values > largest):
            worst = values.min() if np.any(values < 0.0) else values.max()
            raise ValueError(
                f"current must lie between 0 A and {largest:.4g} A, where the filament reaches "
                f"{TABLE_MAX_TEMPERATURE:g} K, the end of the resistivity table (got {worst:g} A)"
            )
        target = values**2
        temperature = self._temperature_of_squared_current(target)
        ambient = self._ambient_temperature
        for _ in range(NEWTON_STEPS):
            slope = self._power_loss_derivative(temperature) - target * (
                self.hot_resistance
                * tungsten_resistivity_derivative(temperature)
                / self._rated_resistivity
            )
            temperature = np.clip(
                temperature
                - (
                    self.power_loss(temperature)
                    - target * self.resistance_at_temperature(temperature)
                )
                / slope,
                ambient,
                TABLE_MAX_TEMPERATURE,
            )
        return temperature

    def resistance(self, voltage):
        """
        Steady-state filament resistance at a lamp voltage.

        Parameters
        ----------
        voltage : numeric
            RMS voltage across the lamp [V]

        Returns
        -------
        resistance : numpy.ndarray
            shaped like ``voltage``; the cold resistance at zero volts [ohm]
        """
        return self.resistance_at_temperature(self.filament_temperature(voltage))

    def current(self, voltage):
        """
        Steady-state RMS current through the lamp at a lamp voltage.

        Parameters
        ----------
        voltage : numeric
            RMS voltage across the lamp [V]

        Returns
        -------
        current : numpy.ndarray
            shaped like ``voltage``; zero at zero volts [A]
        """
        values = np.asarray(voltage, dtype=float)
        return values / self.resistance(values)

    def power(self, voltage):
        """
        Steady-state power drawn by the lamp at a lamp voltage.

        Parameters
        ----------
        voltage : numeric
            RMS voltage across the lamp [V]

        Returns
        -------
        power : numpy.ndarray
            shaped like ``voltage`` [W]
        """
        values = np.asarray(voltage, dtype=float)
        return values**2 / self.resistance(values)


class Lamp(Filament):
    """
    A tungsten filament lamp in steady state, from its rating.

    Parameters
    ----------
    rated_voltage : float
        rated voltage, 6 to 300 [V]
    rated_power : float
        rated power at rated voltage [W]
    fill : str, default "gas"
        "gas" (argon-nitrogen), "vacuum" or "halogen"
    rated_temperature : float, optional
        filament temperature at rated voltage [K]; default from ``DEFAULT_RATED_TEMPERATURE``
        or, if ``cold_resistance`` is given, solved from it. Give one or the other.
    cold_resistance : float, optional
        measured filament resistance at ambient temperature [ohm]; refused if the rated
        temperature it implies lies outside ``RATED_TEMPERATURE_RANGE``
    ambient_temperature : float, default 300.0
        temperature of the bench and the cold filament, 300 to 350 [K]
    conduction_fraction : float, optional
        share of rated power lost by conduction at rated temperature [-]; default from
        ``DEFAULT_CONDUCTION_FRACTION``

    Notes
    -----
    The filament model of :class:`Filament`, with the conduction exponent of the fill
    (``CONDUCTION_EXPONENT``) and a rated temperature within ``RATED_TEMPERATURE_RANGE``.
    """

    def __init__(
        self,
        rated_voltage,
        rated_power,
        fill="gas",
        rated_temperature=None,
        cold_resistance=None,
        ambient_temperature=300.0,
        conduction_fraction=None,
    ):
        voltage = _check_scalar(rated_voltage, "rated_voltage", "V", *RATED_VOLTAGE_RANGE)
        power = _check_scalar(rated_power, "rated_power", "W", positive=True)
        self._fill = _check_fill(fill)
        ambient = _check_scalar(
            ambient_temperature, "ambient_temperature", "K", *AMBIENT_TEMPERATURE_RANGE
        )
        if rated_temperature is not None and cold_resistance is not None:
            raise ValueError(
                "give rated_temperature or cold_resistance, not both: the cold "
                "resistance fixes the rated temperature"
            )
        if cold_resistance is not None:
            cold = _check_scalar(cold_resistance, "cold_resistance", "ohm", positive=True)
            rated_temperature = _rated_temperature_from_cold_resistance(
                cold, voltage**2 / power, ambient
            )
        elif rated_temperature is None:
            rated_temperature = default_rated_temperature(power, fill)
        rated_temperature = _check_scalar(
            rated_temperature, "rated_temperature", "K", *RATED_TEMPERATURE_RANGE
        )
        if conduction_fraction is None:
            conduction_fraction = DEFAULT_CONDUCTION_FRACTION[fill]
        super().__init__(
            voltage,
            power,
            rated_temperature,
            conduction_fraction,
            CONDUCTION_EXPONENT[fill],
            ambient_temperature=ambient,
        )

    @property
    def fill(self):
        """Fill of the bulb: one of ``FILLS``."""
        return self._fill

    def __repr__(self):
        return (
            f"Lamp(rated_voltage={self._rated_voltage:g}, rated_power={self._rated_power:g}, "
            f"fill={self._fill!r}, rated_temperature={self._rated_temperature:.1f}, "
            f"ambient_temperature={self._ambient_temperature:g}, "
            f"conduction_fraction={self._conduction_fraction:g})"
        )

    def relative_light(self, voltage):
        """
        Luminous output relative to the same lamp at rated voltage.

        Parameters
        ----------
        voltage : numeric
            RMS voltage across the lamp [V]

        Returns
        -------
        light : numpy.ndarray
            shaped like ``voltage``; 1 at rated voltage [-]

        Notes
        -----
        The filament's area does not change, so the light output scales with its luminance
        (:func:`shop.physics.glow.luminance`).
        """
        return luminance(self.filament_temperature(voltage)) / luminance(self._rated_temperature)

    def glow(self, voltage):
        """
        Glow class of the filament at a lamp voltage.

        Parameters
        ----------
        voltage : numeric
            RMS voltage across the lamp [V]

        Returns
        -------
        glow : numpy.ndarray of str
            one of ``GLOW_CLASSES`` per element, shaped like ``voltage``
        """
        return glow_class_of_lamp(self.filament_temperature(voltage), self._rated_temperature)

    @classmethod
    def fit(
        cls,
        rated_voltage,
        rated_power,
        points=None,
        cold_resistance=None,
        fill="gas",
        ambient_temperature=300.0,
    ):
        """
        Calibrate a lamp's rated temperature and conduction fraction to measurements.

        Parameters
        ----------
        rated_voltage : float
            rated voltage [V]
        rated_power : float
            rated power [W]
        points : array-like of shape (n, 2), optional
            measured steady-state (voltage [V], current [A]) pairs, voltages up to
            ``FIT_MAX_VOLTAGE_RATIO`` times rated voltage
        cold_resistance : float, optional
            measured filament resistance at ambient temperature [ohm]
        fill : str, default "gas"
            one of ``FILLS``
        ambient_temperature : float, default 300.0
            temperature of the bench [K]

        Returns
        -------
        fit : LampFit

        Notes
        -----
        Least squares (``scipy.optimize.least_squares``, trust region within
        ``RATED_TEMPERATURE_RANGE`` and ``FIT_CONDUCTION_FRACTION_RANGE``) of the current
        residuals at the points; a cold resistance adds one residual, its relative error times
        the rated current, so a 1 % miss in cold resistance weighs as a 1 % miss in current at
        rating. A cold resistance alone fixes the rated temperature exactly and leaves the
        conduction fraction at its default.
        """
        if points is None and cold_resistance is None:
            raise ValueError("give points, cold_resistance or both to fit a lamp")
        reference = cls(
            rated_voltage, rated_power, fill=fill, ambient_temperature=ambient_temperature
        )
        if cold_resistance is not None:
            cold = _check_scalar(cold_resistance, "cold_resistance", "ohm", positive=True)
            start = cls(
                rated_voltage,
                rated_power,
                fill=fill,
                cold_resistance=cold,
                ambient_temperature=ambient_temperature,
            )
        else:
            cold, start = None, reference
        volts, amps = _check_points(points, reference.rated_voltage, cold is not None)
        if volts.size == 0:
            return LampFit(start, np.zeros(0), 0.0, 0.0)

        rated_current = reference.rated_power / reference.rated_voltage

        def lamp_for(parameters):
            return cls(
                rated_voltage,
                rated_power,
                fill=fill,
                rated_temperature=parameters[0],
                conduction_fraction=parameters[1],
                ambient_temperature=ambient_temperature,
            )

        def residuals(parameters):
            lamp = lamp_for(parameters)
            misses = lamp.current(volts) - amps
            if cold is None:
                return misses
            return np.append(misses, (lamp.cold_resistance / cold - 1.0) * rated_current)

        result = least_squares(
            residuals,
            x0=[start.rated_temperature, start.conduction_fraction],
            bounds=(
                [RATED_TEMPERATURE_RANGE[0], FIT_CONDUCTION_FRACTION_RANGE[0]],
                [RATED_TEMPERATURE_RANGE[1], FIT_CONDUCTION_FRACTION_RANGE[1]],
            ),
            x_scale=[100.0, 0.05],
            xtol=1e-12,
        )
        lamp = lamp_for(result.x)
        misses = lamp.current(volts) - amps
        cold_miss = None if cold is None else lamp.cold_resistance - cold
        return LampFit(lamp, misses, float(np.sqrt(np.mean(misses**2))), cold_miss)


def _check_points(points, rated_voltage, have_cold_resistance):
    if points is None:
        return np.zeros(0), np.zeros(0)
    values = np.asarray(points, dtype=float)
    if values.size == 0:
        raise ValueError("points must not be empty: give (volts, amps) pairs or leave it out")
    if values.ndim != 2 or values.shape[1] != 2:
        raise ValueError(
            f"points must be (volts, amps) pairs, shape (n, 2) (got shape {values.shape})"
        )
    if np.any(np.isnan(values)) or np.any(np.isinf(values)):
        raise ValueError("points must be finite numbers (got NaN or infinity)")
    if np.any(values < 0.0):
        raise ValueError(f"points must not be negative (got {values.min():g})")
    if np.any(values[:, 0] > FIT_MAX_VOLTAGE_RATIO * rated_voltage):
        raise ValueError(
            f"points must not exceed {FIT_MAX_VOLTAGE_RATIO:g}x rated voltage "
            f"({FIT_MAX_VOLTAGE_RATIO * rated_voltage:g} V; got {values[:, 0].max():g} V)"
        )
    if values.shape[0] + have_cold_resistance < 2:
        raise ValueError(
            "points must hold at least 2 (volts, amps) pairs to fit rated "
            "temperature and conduction fraction, or add cold_resistance"
        )
    return values[:, 0], values[:, 1]


class LampFit(NamedTuple):
    """A lamp calibrated to measurements, with how far it misses them."""

    lamp: Lamp
    residuals: np.ndarray  # [A] model minus measured current at each point, in point order
    rms_residual: float  # [A] root mean square of residuals; 0.0 when no points were given
    cold_resistance_residual: float | None  # [ohm] model minus measured; None if not given

    @property
    def rated_temperature(self):
        """Fitted filament temperature at rated voltage [K]."""
        return self.lamp.rated_temperature

    @property
    def conduction_fraction(self):
        """Fitted share of rated power lost by conduction at rated temperature [-]."""
        return self.lamp.conduction_fraction


class LampBank:
    """
    Lamps switched in parallel, behaving as one lamp.

    Parameters
    ----------
    lamps : sequence of Lamp or LampBank
        the lamps in the bank; nested banks are flattened

    Notes
    -----
    Every lamp sees the same voltage: the bank's current is the sum of the lamps' currents,
    its filament temperature the hottest filament's and its glow the brightest lamp's class.
    Rated voltages may differ; the bank's ``rated_voltage`` is the highest.
    """

    def __init__(self, lamps):
        flat = []
        for lamp in lamps:
            if isinstance(lamp, LampBank):
                flat.extend(lamp.lamps)
            elif isinstance(lamp, Lamp):
                flat.append(lamp)
            else:
                raise ValueError(f"lamps must be Lamp or LampBank objects (got {lamp!r})")
        if not flat:
            raise ValueError("lamps must hold at least one lamp")
        self._lamps = tuple(flat)
        self._curve = None

    @property
    def lamps(self):
        """The lamps of the bank [tuple of Lamp]."""
        return self._lamps

    @property
    def rated_voltage(self):
        """Highest rated voltage of the lamps [V]."""
        return max(lamp.rated_voltage for lamp in self._lamps)

    @property
    def rated_power(self):
        """Sum of the lamps' rated powers [W]."""
        return sum(lamp.rated_power for lamp in self._lamps)

    @property
    def hot_resistance(self):
        """Parallel combination of the lamps' resistances at their rated voltages [ohm]."""
        return 1.0 / sum(1.0 / lamp.hot_resistance for lamp in self._lamps)

    @property
    def cold_resistance(self):
        """Parallel combination of the lamps' cold resistances [ohm]."""
        return 1.0 / sum(1.0 / lamp.cold_resistance for lamp in self._lamps)

    @property
    def max_voltage(self):
        """Voltage at which the first filament reaches the end of the resistivity table [V]."""
        return min(lamp.max_voltage for lamp in self._lamps)

    def __repr__(self):
        return f"LampBank([{', '.join(repr(lamp) for lamp in self._lamps)}])"

    def _check(self, voltage):
        return _check_voltage(voltage, self.max_voltage)

    def current(self, voltage):
        """
        Sum of the lamps' steady-state currents at a common voltage.

        Parameters
        ----------
        voltage : numeric
            RMS voltage across the bank [V]

        Returns
        -------
        current : numpy.ndarray
            shaped like ``voltage`` [A]
        """
        values = self._check(voltage)
        return sum(lamp.current(values) for lamp in self._lamps)

    def resistance(self, voltage):
        """
        Resistance of the bank, the lamps' resistances in parallel.

        Parameters
        ----------
        voltage : numeric
            RMS voltage across the bank [V]

        Returns
        -------
        resistance : numpy.ndarray
            shaped like ``voltage``; the parallel cold resistance at zero volts [ohm]
        """
        values = self._check(voltage)
        return 1.0 / sum(1.0 / lamp.resistance(values) for lamp in self._lamps)

    def filament_temperature(self, voltage):
        """
        Temperature of the hottest filament in the bank.

        Parameters
        ----------
        voltage : numeric
            RMS voltage across the bank [V]

        Returns
        -------
        temperature : numpy.ndarray
            shaped like ``voltage`` [K]
        """
        values = self._check(voltage)
        return np.max([lamp.filament_temperature(values) for lamp in self._lamps], axis=0)

    def power(self, voltage):
        """
        Steady-state power drawn by the bank.

        Parameters
        ----------
        voltage : numeric
            RMS voltage across the bank [V]

        Returns
        -------
        power : numpy.ndarray
            shaped like ``voltage`` [W]
        """
        values = self._check(voltage)
        return values * self.current(values)

    def relative_light(self, voltage):
        """
        Luminous output of the bank relative to every lamp at its own rated voltage.

        Parameters
        ----------
        voltage : numeric
            RMS voltage across the bank [V]

        Returns
        -------
        light : numpy.ndarray
            shaped like ``voltage`` [-]

        Notes
        -----
        Each lamp's relative light weighted by its rated power, taking lamps of one kind to
        give light in proportion to their rated power at rating.
        """
        values = self._check(voltage)
        return (
            sum(lamp.rated_power * lamp.relative_light(values) for lamp in self._lamps)
            / self.rated_power
        )

    def glow(self, voltage):
        """
        Glow class of the brightest lamp in the bank.

        Parameters
        ----------
        voltage : numeric
            RMS voltage across the bank [V]

        Returns
        -------
        glow : numpy.ndarray of str
            one of ``GLOW_CLASSES`` per element, shaped like ``voltage``
        """
        values = self._check(voltage)
        classes = np.asarray(GLOW_CLASSES)
        rank = np.max(
            [
                np.argmax(lamp.glow(values)[..., np.newaxis] == classes, axis=-1)
                for lamp in self._lamps
            ],
            axis=0,
        )
        return np.asarray(classes[rank])

    def curve(self):
        """
        The bank's steady-state curve on the union of its lamps' voltage grids.

        Returns
        -------
        curve : LampCurve
            ``voltage`` [V], ``current`` [A] (sum) and ``temperature`` [K] (hottest),
            strictly increasing from zero volts to ``max_voltage``; read-only arrays, built
            once per bank.
        """
        if self._curve is None:
            maximum = self.max_voltage
            grids = [lamp.curve().voltage for lamp in self._lamps]
            # Points closer than a part in 1e9 of the range are dropped: their currents could
            # tie in floating point.
            spacing = 1e-9 * maximum
            voltage = np.unique(np.concatenate(grids))
            voltage = np.append(voltage[voltage < maximum - spacing], maximum)
            voltage = voltage[np.concatenate([[True], np.diff(voltage) > spacing])]
            current = self.current(voltage)
            temperature = self.filament_temperature(voltage)
            for values in (voltage, current, temperature):
                values.setflags(write=False)
            self._curve = LampCurve(voltage, current, temperature)
        return self._curve
