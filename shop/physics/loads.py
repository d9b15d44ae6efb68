"""Unit (load) models behind the series lamp: the load protocol and the resistive load.

A *load* is the unit under test as the series circuit sees it. The solver
(:func:`shop.physics.circuit.solve_series`), the judgement and the lamp advice
reach every load through the small :class:`Load` protocol below and never
look inside a particular model, so a new model (transformer input, valve
heaters, rectifiers, constant power) plugs in by implementing it.

The protocol
------------
``rated_power`` : numeric
    The declared draw [W]: what a healthy unit should draw on the bench as
    configured for the test. Judgement sentences quote it and inferred draw is
    expressed as a multiple of it.
``impedance(current, frequency)`` -> complex ndarray
    The unit's complex impedance [ohm] seen at its terminals when an RMS
    current of magnitude ``current`` [A] flows through it at ``frequency``
    [Hz]. It is a function of the current so that nonlinear elements (a cold
    heater's positive temperature coefficient, a saturating core) fit. A
    passive load has a non-negative real part; ``inf`` means open (no
    current flows). The result broadcasts ``current`` against the model's
    own parameters: with array parameters of shape ``P`` and ``current`` of
    shape ``C`` the result has shape ``np.broadcast_shapes(C, P)``. The
    solver learns a model's parameter shape from ``impedance(0.0, f)``.
``scaled(factor)`` -> Load
    The same kind of unit drawing ``factor`` times as much (``factor`` >= 0,
    scalar or array; an array gives a load with array parameters). ``0``
    gives an open unit, ``inf`` a dead short of that kind. The judgement uses
    it for the declared-load tolerance band, the sensitivity (a doubling of
    draw) and the inferred draw (the factor that reproduces a reading).
``describe()`` -> dict
    The model and its parameters in plain words, for records and reports.
``may_cycle`` : bool
    Whether a healthy unit of this kind can make the lamp's glow cycle (a
    constant-power supply failing to start can; a resistor cannot).

For the solver to find a unique operating point the source voltage needed to
drive a current ``I``, ``I * |R_lamp(I) + R_source + Z(I)|``, must rise with
``I``. That holds for every passive load whose ``I * |Z(I)|`` does not fall
as the current rises; the solver checks it and refuses a load for which it
fails rather than pick one of several answers.
"""

from abc import ABC, abstractmethod
from typing import Any, Protocol, runtime_checkable

import numpy as np

DEFAULT_RATED_VOLTAGE = 120.0  # [V] the voltage a bare resistance's rated power is quoted at


@runtime_checkable
class Load(Protocol):
    """What the series solver, the judgement and the lamp advice need of a unit model."""

    may_cycle: bool

    @property
    def rated_power(self) -> Any:
        """Declared draw of the unit [W]."""

    def impedance(self, current: Any, frequency: float) -> np.ndarray:
        """Complex impedance [ohm] at an RMS current [A] and a frequency [Hz]."""

    def scaled(self, factor: Any) -> "Load":
        """The same kind of unit drawing ``factor`` times as much."""

    def describe(self) -> dict:
        """The model and its parameters in plain words."""


def _as_float_array(value, name, unit):
    """Return ``value`` as a float array, refusing NaN by name."""
    try:
        array = np.asarray(value, dtype=float)
    except (TypeError, ValueError) as error:
        raise ValueError(f"{name} must be a number in {unit} (got {value!r})") from error
    if np.isnan(array).any():
        raise ValueError(f"{name} must be a number in {unit}, not NaN")
    return array


def _value_for_record(array):
    """A float or a list of floats: plain values for ``describe``."""
    return array.item() if array.ndim == 0 else array.tolist()


class ResistiveLoad:
    """A unit that behaves as a plain resistance: heaters, lamps already hot, dummy loads.

    Parameters
    ----------
    resistance : numeric
        Resistance of the unit [ohm]; ``0`` is a dead short, ``inf`` an open
        unit. Arrays give one load per element (used for sweeps of draw).
    rated_voltage : float, default 120.0
        Voltage [V] at which :attr:`rated_power` is quoted.

    Notes
    -----
    The impedance is real and independent of current and frequency,
    :math:`Z = R`. Scaling the draw by :math:`k` divides the resistance:
    :math:`R_k = R / k`. The declared draw is the power at the rated voltage
    straight from the source, :math:`P = V_r^2 / R`.

    Typical use: a resistive dummy load, a heater, or a unit declared by its
    nameplate when nothing better is known (``ResistiveLoad.from_rating``).
    A 620 ohm resistor on 120 V stands in for a unit of about 23 W.
    """

    may_cycle = False

    def __init__(self, resistance, rated_voltage=DEFAULT_RATED_VOLTAGE):
        resistance = _as_float_array(resistance, "resistance", "ohm")
        if (resistance < 0).any():
            raise ValueError(
                f"resistance must not be negative (got {resistance.min():g} ohm); "
                "use 0 for a dead short"
            )
        rated_voltage = _as_float_array(rated_voltage, "rated_voltage", "V")
        if rated_voltage.ndim != 0 or not np.isfinite(rated_voltage) or rated_voltage <= 0:
            raise ValueError(
                f"rated_voltage must be one positive finite number of volts (got {rated_voltage})"
            )
        self.resistance = resistance
        self.rated_voltage = float(rated_voltage)

    @classmethod
    def from_rating(cls, voltage, power):
        """A resistive unit that draws ``power`` [W] at ``voltage`` [V]: ``R = V**2 / P``.

        Parameters
        ----------
        voltage : float
            Rated voltage of the unit [V].
        power : numeric
            Rated (declared) power of the unit [W]; must be positive.

        Returns
        -------
        ResistiveLoad
        """
        power = _as_float_array(power, "power", "W")
        if (power <= 0).any() or not np.isfinite(power).all():
            raise ValueError(f"power must be positive and finite (got {power} W)")
        voltage = _as_float_array(voltage, "voltage", "V")
        if voltage.ndim != 0 or not np.isfinite(voltage) or voltage <= 0:
            raise ValueError(f"voltage must be one positive finite number of volts (got {voltage})")
        return cls(voltage**2 / power, rated_voltage=float(voltage))

    @property
    def rated_power(self):
        """Declared draw [W]: ``rated_voltage**2 / resistance`` (inf for a short, 0 for open)."""
        with np.errstate(divide="ignore"):
            return self.rated_voltage**2 / self.resistance

    def impedance(self, current, frequency):
        """Complex impedance [ohm]: the resistance, whatever the current [A] or frequency [Hz].

        Parameters
        ----------
        current : numeric
            RMS current through the unit [A].
        frequency : float
            Source frequency [Hz]; a resistor does not depend on it.

        Returns
        -------
        numpy.ndarray
            Complex impedance [ohm], shaped like ``current`` broadcast against
            :attr:`resistance`.
        """
        shape = np.broadcast_shapes(np.shape(current), self.resistance.shape)
        return np.broadcast_to(self.resistance, shape).astype(complex)

    def admittance(self, voltage, frequency):
        """Complex admittance [S]: one over the resistance, whatever the voltage [V].

        Parameters
        ----------
        voltage : numeric
            RMS voltage across the unit [V].
        frequency : float
            Source frequency [Hz]; a resistor does not depend on it.

        Returns
        -------
        numpy.ndarray
            ``1 / R`` as complex, shaped like ``voltage`` broadcast against
            :attr:`resistance` (``inf`` for a dead short, ``0`` for an open unit).
        """
        shape = np.broadcast_shapes(np.shape(voltage), self.resistance.shape)
        with np.errstate(divide="ignore"):
            conductance = 1.0 / self.resistance
        return np.broadcast_to(conductance, shape).astype(complex)

    def scaled(self, factor):
        """The resistive unit drawing ``factor`` times as much: ``R / factor``.

        Parameters
        ----------
        factor : numeric
            Multiple of the present draw, ``>= 0``; ``0`` gives an open unit and
            ``inf`` a dead short.

        Returns
        -------
        ResistiveLoad
        """
        factor = _as_float_array(factor, "factor", "(a multiple of the draw)")
        if (factor < 0).any():
            raise ValueError(f"factor must not be negative (got {factor.min():g})")
        with np.errstate(divide="ignore", invalid="ignore"):
            resistance = np.where(factor == 0, np.inf, self.resistance / factor)
        return ResistiveLoad(resistance, rated_voltage=self.rated_voltage)

    def describe(self):
        """The model and its parameters in plain words.

        Returns
        -------
        dict
            ``model``, a ``summary`` sentence and ``parameters`` (value and
            unit of the resistance, rated voltage and rated power).
        """
        if self.resistance.ndim == 0:
            resistance = float(self.resistance)
            if resistance == 0:
                summary = "a dead short"
            elif np.isinf(resistance):
                summary = "an open unit (draws nothing)"
            else:
                summary = (
                    f"a resistance of {resistance:.4g} ohm, drawing "
                    f"{float(self.rated_power):.3g} W at {self.rated_voltage:g} V"
                )
        else:
            summary = f"{self.resistance.size} resistive units (a sweep of draw)"
        return {
            "model": "resistive",
            "summary": summary,
            "parameters": {
                "resistance": {"value": _value_for_record(self.resistance), "unit": "ohm"},
                "rated_voltage": {"value": self.rated_voltage, "unit": "V"},
                "rated_power": {
                    "value": _value_for_record(np.asarray(self.rated_power)),
                    "unit": "W",
                },
            },
        }

    def __repr__(self):
        if self.resistance.ndim == 0:
            resistance = repr(float(self.resistance))
        else:
            resistance = f"<{self.resistance.size} resistances>"
        return f"ResistiveLoad({resistance}, rated_voltage={self.rated_voltage!r})"


def factor_repr(factor):
    """A draw factor for ``repr``: the number, or how many there are."""
    return repr(float(factor)) if factor.ndim == 0 else f"<{factor.size} factors>"


def check_scalar(value, name, unit, *, low=None, high=None, positive=False, allow_zero=True):
    """Return ``value`` as a float, refusing NaN, infinity and values out of range by name."""
    try:
        number = float(value)
    except (TypeError, ValueError) as error:
        raise ValueError(f"{name} must be one number of {unit} (got {value!r})") from error
    if not np.isfinite(number):
        raise ValueError(f"{name} must be a finite number of {unit} (got {value!r})")
    if positive and (number < 0 or (number == 0 and not allow_zero)):
        relation = "positive" if not allow_zero else "zero or positive"
        raise ValueError(f"{name} must be {relation} (got {number:g} {unit})")
    if low is not None and number < low:
        raise ValueError(f"{name} must be at least {low:g} {unit} (got {number:g} {unit})")
    if high is not None and number > high:
        raise ValueError(f"{name} must be at most {high:g} {unit} (got {number:g} {unit})")
    return number


class ScalableLoad(ABC):
    """Shared behaviour of the unit models: a draw factor as identical copies in parallel.

    A model describes one unit (scalar parameters) through ``_impedance_of_one``,
    ``_admittance_of_one``, ``_rated_power_of_one`` and ``_description``. Scaling the draw
    by ``k`` stands for ``k`` identical units in parallel: each carries ``I / k`` at the
    same terminal voltage, so

    .. math:: Z_k(I) = Z_1(I / k) / k, \\quad Y_k(V) = k \\, Y_1(V), \\quad P_k = k P_1.

    That holds for nonlinear units too (a cold heater, a saturating core), so the
    judgement's "draws k times as much" means the same thing for every model. ``k = 0``
    is an open unit and ``k = inf`` a dead short; an array ``k`` gives a load with array
    parameters, one per element.
    """

    may_cycle = False
    # Whether the unit holds its power as its volts fall (the solver treats it apart).
    constant_power = False

    def __init__(self, draw_factor=1.0):
        factor = _as_float_array(draw_factor, "factor", "(a multiple of the draw)")
        if (factor < 0).any():
            raise ValueError(f"factor must not be negative (got {factor.min():g})")
        self.draw_factor = factor
        self.assumptions = ()

    @abstractmethod
    def _impedance_of_one(self, current, frequency):
        """Complex impedance [ohm] of one unit at an RMS current [A] and frequency [Hz]."""

    @abstractmethod
    def _admittance_of_one(self, voltage, frequency):
        """Complex admittance [S] of one unit at an RMS voltage [V] and frequency [Hz]."""

    @abstractmethod
    def _rated_power_of_one(self):
        """Declared draw of one unit [W]."""

    @abstractmethod
    def _description(self):
        """Model, summary, parameters with units and assumptions of one unit."""

    def _copy_with_factor(self, factor):
        clone = object.__new__(type(self))
        clone.__dict__.update(self.__dict__)
        clone.draw_factor = factor
        return clone

    @property
    def rated_power(self):
        """Declared draw [W]: the draw factor times one unit's draw at its rating."""
        with np.errstate(invalid="ignore"):
            power = self.draw_factor * self._rated_power_of_one()
        return np.where(self.draw_factor == 0, 0.0, power)

    def impedance(self, current, frequency):
        """Complex impedance [ohm] at an RMS current [A] and a frequency [Hz].

        Parameters
        ----------
        current : numeric
            RMS current through the unit [A], ``>= 0``.
        frequency : float
            Source frequency [Hz].

        Returns
        -------
        numpy.ndarray
            Complex impedance [ohm], shaped like ``current`` broadcast against the draw
            factor; ``inf`` where the factor is 0 (open), ``0`` where it is infinite.
        """
        current = np.asarray(current, dtype=float)
        factor = self.draw_factor
        shape = np.broadcast_shapes(current.shape, factor.shape)
        current, factor = np.broadcast_to(current, shape), np.broadcast_to(factor, shape)
        running = (factor > 0) & np.isfinite(factor)
        impedance = np.where(factor == 0, complex(np.inf, 0.0), 0j).astype(complex)
        if running.any():
            one = self._impedance_of_one(current[running] / factor[running], frequency)
            # Real and imaginary parts apart: a complex division would turn an infinite
            # resistance (an open copy) into NaN.
            parts = np.empty(one.shape, dtype=complex)
            parts.real = one.real / factor[running]
            parts.imag = one.imag / factor[running]
            impedance[running] = parts
        return impedance

    def admittance(self, voltage, frequency):
        """Complex admittance [S] at an RMS terminal voltage [V] and a frequency [Hz].

        Parameters
        ----------
        voltage : numeric
            RMS voltage across the unit [V], ``>= 0``.
        frequency : float
            Source frequency [Hz].

        Returns
        -------
        numpy.ndarray
            Complex admittance [S] (current phasor over voltage phasor), shaped like
            ``voltage`` broadcast against the draw factor.
        """
        voltage = np.asarray(voltage, dtype=float)
        factor = self.draw_factor
        shape = np.broadcast_shapes(voltage.shape, factor.shape)
        voltage, factor = np.broadcast_to(voltage, shape), np.broadcast_to(factor, shape)
        admittance = np.where(np.isinf(factor), complex(np.inf, 0.0), 0j).astype(complex)
        running = (factor > 0) & np.isfinite(factor)
        if running.any():
            admittance[running] = factor[running] * self._admittance_of_one(
                voltage[running], frequency
            )
        return admittance

    def scaled(self, factor):
        """The same kind of unit drawing ``factor`` times as much (``factor`` copies in parallel).

        Parameters
        ----------
        factor : numeric
            Multiple of the present draw, ``>= 0``; ``0`` gives an open unit and ``inf`` a
            dead short.

        Returns
        -------
        ScalableLoad
            Of the same class, with the draw factor multiplied.
        """
        factor = _as_float_array(factor, "factor", "(a multiple of the draw)")
        if (factor < 0).any():
            raise ValueError(f"factor must not be negative (got {factor.min():g})")
        with np.errstate(invalid="ignore"):
            combined = np.where(factor == 0, 0.0, self.draw_factor * factor)
        return self._copy_with_factor(combined)

    def with_assumptions(self, assumptions):
        """The same load, saying how it was chosen.

        Parameters
        ----------
        assumptions : sequence of str
            Sentences listed first in ``describe()["assumptions"]``.

        Returns
        -------
        ScalableLoad
            A copy carrying the assumptions.
        """
        clone = self._copy_with_factor(self.draw_factor)
        clone.assumptions = tuple(self.assumptions) + tuple(str(item) for item in assumptions)
        return clone

    def describe(self):
        """The model, its parameters and its assumptions in plain words.

        Returns
        -------
        dict
            ``model``, a ``summary`` sentence, ``parameters`` (each a value and a unit),
            ``assumptions`` (sentences) and ``draw_factor``.
        """
        description = self._description()
        description["assumptions"] = list(self.assumptions) + list(
            description.get("assumptions", [])
        )
        factor = self.draw_factor
        if factor.ndim == 0:
            if float(factor) != 1.0:
                description["summary"] = (
                    f"{float(factor):.3g} times {description['summary']} (copies in parallel)"
                )
        else:
            description["summary"] = f"{factor.size} multiples of {description['summary']}"
        description["draw_factor"] = _value_for_record(factor)
        return description
