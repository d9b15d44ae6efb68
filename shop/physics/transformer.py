"""Mains transformers as the lamp sees them: windings, a saturating core and the load behind."""

from functools import cache

import numpy as np
from scipy.interpolate import CubicSpline

from shop.physics.loads import (
    ScalableLoad,
    check_scalar,
    factor_repr,
)
from shop.physics.roots import monotone_inverse

CORES = ("ei", "toroid")
CORE_WORDS = {"ei": "E-I laminated core", "toroid": "toroidal core"}
# No-load (magnetising) current at rated voltage and frequency as a fraction of rated current:
# small mains transformers on E-I laminations draw about 5-15 %, toroids a few per cent (from
# memory).
DEFAULT_MAGNETISING_FRACTION = {"ei": 0.10, "toroid": 0.03}
# Core (iron) loss at rated voltage and frequency as a fraction of the rated VA (from memory:
# 1-3 % for small mains transformers, less for toroids).
DEFAULT_CORE_LOSS_FRACTION = {"ei": 0.02, "toroid": 0.01}
# Regulation: the drop from no load to full load, as a fraction of rated voltage, set by the
# windings' resistance; 5-10 % for small mains transformers, less for toroids (from memory).
DEFAULT_REGULATION = {"ei": 0.08, "toroid": 0.05}
# The core's saturation flux as a multiple of the peak flux at rated voltage and frequency:
# grain-oriented silicon steel saturates near 1.9-2.0 T and mains transformers run at about
# 1.3-1.6 T (from memory).
DEFAULT_SATURATION_MARGIN = 1.3
# Inductance deep in saturation (the winding with the core no help) over the unsaturated
# inductance: about one over the core's effective relative permeability, a few thousand for
# interleaved E-I laminations with their joints, ten thousand or so for an ungapped toroid
# (from memory, order of magnitude).
AIR_CORE_RATIO = {"ei": 1.0 / 1500.0, "toroid": 1.0 / 8000.0}
# Residual flux after switch-off as a fraction of the saturation flux: E-I cores keep little
# through their joints' air gaps, toroids a good deal (from memory); used for switch-on inrush.
REMANENCE = {"ei": 0.3, "toroid": 0.7}
FREQUENCY_RANGE = (40.0, 70.0)  # [Hz] mains transformers this model is for
# Rated power of a transformer whose frequency is not known is quoted on this frequency; it
# then runs at its rated flux whatever the mains, so the choice does not change the figure.
DEFAULT_EVALUATION_FREQUENCY = 60.0  # [Hz]

# Tabulation of the RMS magnetising current under a sinusoidal flux, in the flux amplitude
# over the saturation flux: linear below and above the table (unsaturated, and deep in
# saturation where only the air-core inductance is left), so it is extended in log-log with
# slope one. The current turns sharply where the peak flux reaches saturation (amplitude 1),
# so the table is densest around it.
RMS_TABLE_SEGMENTS = ((1e-4, 0.3, 120), (0.3, 3.0, 3000), (3.0, 1e4, 200))
RMS_TABLE_RANGE = (RMS_TABLE_SEGMENTS[0][0], RMS_TABLE_SEGMENTS[-1][1])
QUADRATURE_POINTS = 256  # midpoints over a quarter period: about 2e-9 of the RMS
INVERSE_CURVE_ITERATIONS = 24
# Terminal and magnetising voltages are inverted on a table from 0 to this multiple of the
# rated voltage (far beyond any source: a unit drawing a thousandth of its current through a
# lamp) with this many log-spaced points.
VOLTAGE_TABLE_RANGE = (1e-10, 1e6)
VOLTAGE_TABLE_POINTS = 1601


def _air_core_slope(core):
    ratio = AIR_CORE_RATIO[core]
    return 2.0 / np.pi * ratio / (1.0 - ratio)


def magnetising_flux(current, core):
    """Normalised flux linkage of the core at a normalised magnetising current.

    Parameters
    ----------
    current : numeric
        Magnetising current over the knee current ``i_k`` [-].
    core : str
        One of ``CORES``.

    Returns
    -------
    numpy.ndarray
        Flux linkage over the saturation flux linkage ``lambda_k`` [-].

    Notes
    -----
    .. math:: \\lambda / \\lambda_k = c \\, u + \\frac{2}{\\pi} \\arctan u, \\quad u = i / i_k

    the core's contribution saturating at :math:`\\lambda_k` plus the winding's air-core
    inductance; :math:`c = (2/\\pi) \\, a / (1 - a)` with ``a = AIR_CORE_RATIO[core]``, the
    air-core over the unsaturated inductance.
    """
    current = np.asarray(current, dtype=float)
    return _air_core_slope(core) * current + 2.0 / np.pi * np.arctan(current)


def magnetising_flux_slope(current, core):
    """Derivative of :func:`magnetising_flux` with the normalised current [-]."""
    current = np.asarray(current, dtype=float)
    return _air_core_slope(core) + 2.0 / np.pi / (1.0 + current**2)


def magnetising_current(flux, core):
    """Normalised magnetising current at a normalised flux linkage: the inverse curve.

    Parameters
    ----------
    flux : numeric
        Flux linkage over the saturation flux linkage [-], any sign.
    core : str
        One of ``CORES``.

    Returns
    -------
    numpy.ndarray
        Magnetising current over the knee current [-], shaped like ``flux``.

    Notes
    -----
    Newton's method on :func:`magnetising_flux` from below: the curve is concave for
    positive currents, so iterates from a lower bound rise monotonically to the root. The
    bound is :math:`\\max(0, (|y| - 1) / c)`, since the arctangent part stays below one.
    """
    flux = np.asarray(flux, dtype=float)
    target = np.abs(flux)
    slope = _air_core_slope(core)
    current = np.maximum(0.0, (target - 1.0) / slope)
    for _ in range(INVERSE_CURVE_ITERATIONS):
        step = (magnetising_flux(current, core) - target) / magnetising_flux_slope(current, core)
        current = current - step
    return np.sign(flux) * current


@cache
def _rms_table(core):
    """Cubic spline of log(h / rho) against log(rho): RMS current over flux amplitude."""
    amplitude = np.unique(np.concatenate([np.geomspace(*part) for part in RMS_TABLE_SEGMENTS]))
    angle = (np.arange(QUADRATURE_POINTS) + 0.5) * (np.pi / 2) / QUADRATURE_POINTS
    current = magnetising_current(amplitude[:, None] * np.sin(angle), core)
    rms = np.sqrt(np.mean(current**2, axis=1))
    return CubicSpline(np.log(amplitude), np.log(rms / amplitude))


def rms_magnetising_ratio(amplitude, core):
    """RMS magnetising current over flux amplitude under a sinusoidal flux, normalised.

    Parameters
    ----------
    amplitude : numeric
        Peak flux linkage over the saturation flux linkage [-], ``>= 0``.
    core : str
        One of ``CORES``.

    Returns
    -------
    numpy.ndarray
        ``h(rho) / rho``: RMS of :func:`magnetising_current` over a sinusoid of amplitude
        ``rho``, divided by ``rho`` [-]; constant (linear behaviour) outside
        ``RMS_TABLE_RANGE``.
    """
    amplitude = np.asarray(amplitude, dtype=float)
    low, high = RMS_TABLE_RANGE
    log_amplitude = np.log(np.clip(amplitude, low, high))
    return np.exp(_rms_table(core)(log_amplitude))


class TransformerLoad(ScalableLoad):
    """A unit with a mains power transformer: windings, a saturating core and its load.

    Use it for gear with a power transformer whose secondary load can be taken as a
    resistance: linear supplies with a light load, amplifiers' heater windings, a
    transformer on no load (``load_power=0``), and the transformer part of a composite
    valve set (:class:`shop.physics.composite.CompositeLoad`), where heaters and rectifier
    are their own members.

    Parameters
    ----------
    rated_voltage : float
        Primary rated voltage [V].
    rated_va : float
        The transformer's rating [VA]; sets the defaults below.
    load_power : float, default 0.0
        Power of the secondary load at rated voltage [W], a resistance referred to the
        primary (``0``: no load).
    rated_frequency : float or None, default 60.0
        The frequency the transformer was built for [Hz], 40-70 Hz. Run below it, the core
        carries more flux and draws far more magnetising current. ``None``: not known, taken
        as built for whatever frequency it runs on.
    core : str, default "ei"
        ``"ei"`` (laminations) or ``"toroid"``.
    magnetising_fraction : float, optional
        No-load RMS current at rated voltage and frequency over rated current
        (``rated_va / rated_voltage``) [-]; default ``DEFAULT_MAGNETISING_FRACTION[core]``
        (0.10 E-I, 0.03 toroid).
    core_loss_fraction : float, optional
        Core loss at rated voltage over the rated VA [-]; default
        ``DEFAULT_CORE_LOSS_FRACTION[core]`` (0.02 E-I, 0.01 toroid).
    regulation : float, optional
        Full-load drop from the windings' resistance over rated voltage [-]; default
        ``DEFAULT_REGULATION[core]`` (0.08 E-I, 0.05 toroid), split equally between the
        primary and the secondary referred to it.
    saturation_margin : float, default ``DEFAULT_SATURATION_MARGIN`` (1.3)
        Saturation flux over the peak flux at rated voltage and frequency [-].

    Notes
    -----
    The T equivalent circuit without leakage reactance: the primary winding
    :math:`R_1` in series with the magnetising branch (core loss :math:`G_c` in parallel
    with a saturating inductance) in parallel with the secondary winding :math:`R_2'` and
    the load :math:`R_L'`, both referred to the primary:

    .. math:: Y_m(V_m) = G_c + \\frac{1}{R_2' + R_L'} - j \\frac{I_\\mu(V_m)}{V_m}, \\quad
              Z = R_1 + 1 / Y_m(V_m), \\quad I = V_m |Y_m(V_m)|.

    The magnetising current is that of the flux curve of :func:`magnetising_flux` under
    the sinusoidal flux :math:`\\sqrt{2} V_m / (2 \\pi f)`, taken as its RMS value in
    quadrature with :math:`V_m` (the equivalent sinusoid): the lamp heats on the RMS
    current, and the unit's volts are the phasor magnitude :math:`|Z| I`. The knee
    current :math:`i_k` is set so that the RMS magnetising current at rated voltage and
    frequency is ``magnetising_fraction`` of rated current. Core loss is taken as a fixed
    conductance, :math:`G_c = P_c / V_r^2`. For a given current the magnetising voltage is
    found on a table and polished (:func:`shop.physics.roots.monotone_inverse`).

    References
    ----------
    .. [1] A. E. Fitzgerald, C. Kingsley and S. D. Umans, "Electric Machinery", 6th ed.,
       McGraw-Hill (2003), chapter 2 (the transformer's equivalent circuit, from memory).
    """

    def __init__(
        self,
        rated_voltage,
        rated_va,
        load_power=0.0,
        rated_frequency=60.0,
        core="ei",
        magnetising_fraction=None,
        core_loss_fraction=None,
        regulation=None,
        saturation_margin=DEFAULT_SATURATION_MARGIN,
        draw_factor=1.0,
    ):
        super().__init__(draw_factor)
        if core not in CORES:
            raise ValueError(f"core must be one of {', '.join(CORES)} (got {core!r})")
        self.core = core
        self.rated_voltage = check_scalar(
            rated_voltage, "rated_voltage", "V", positive=True, allow_zero=False
        )
        self.rated_va = check_scalar(rated_va, "rated_va", "VA", positive=True, allow_zero=False)
        self.load_power = check_scalar(load_power, "load_power", "W", positive=True)
        if self.load_power > self.rated_va:
            raise ValueError(
                f"load_power must not exceed rated_va ({self.load_power:g} W > "
                f"{self.rated_va:g} VA): declare a larger transformer"
            )
        self.rated_frequency = (
            None
            if rated_frequency is None
            else check_scalar(
                rated_frequency,
                "rated_frequency",
                "Hz",
                low=FREQUENCY_RANGE[0],
                high=FREQUENCY_RANGE[1],
            )
        )
        self.magnetising_fraction = check_scalar(
            DEFAULT_MAGNETISING_FRACTION[core]
            if magnetising_fraction is None
            else magnetising_fraction,
            "magnetising_fraction",
            "(of rated current)",
            low=1e-4,
            high=1.0,
        )
        self.core_loss_fraction = check_scalar(
            DEFAULT_CORE_LOSS_FRACTION[core] if core_loss_fraction is None else core_loss_fraction,
            "core_loss_fraction",
            "(of rated VA)",
            low=0.0,
            high=0.2,
        )
        self.regulation = check_scalar(
            DEFAULT_REGULATION[core] if regulation is None else regulation,
            "regulation",
            "(of rated voltage)",
            low=0.0,
            high=0.5,
        )
        self.saturation_margin = check_scalar(
            saturation_margin, "saturation_margin", "(of rated flux)", low=1.0, high=5.0
        )

        winding = self.regulation * self.rated_voltage**2 / self.rated_va
        self.primary_resistance = winding / 2.0  # [ohm]
        self.secondary_resistance = winding / 2.0  # [ohm] referred to the primary
        self.core_conductance = self.core_loss_fraction * self.rated_va / self.rated_voltage**2
        # The load's conductance through the secondary winding (none on no load).
        self.load_conductance = self.load_power / (
            self.rated_voltage**2 + self.secondary_resistance * self.load_power
        )
        rated_current = self.rated_va / self.rated_voltage
        # Knee current i_k from the no-load RMS current at rated voltage and frequency.
        rated_amplitude = 1.0 / self.saturation_margin
        rms = rated_amplitude * float(rms_magnetising_ratio(rated_amplitude, core))
        self.knee_current = self.magnetising_fraction * rated_current / rms  # [A]
        self._tables = {}

    def design_frequency(self, frequency):
        """The frequency the core was built for [Hz]: as rated, or ``frequency`` if unknown."""
        return frequency if self.rated_frequency is None else self.rated_frequency

    def rated_flux(self, frequency):
        """Peak flux linkage at rated voltage on the design frequency [Wb].

        Parameters
        ----------
        frequency : float
            Source frequency [Hz], used only when the rated frequency is not known.

        Returns
        -------
        float
            :math:`\\sqrt{2} V_r / (2 \\pi f_r)`.
        """
        design = self.design_frequency(frequency)
        return np.sqrt(2.0) * self.rated_voltage / (2.0 * np.pi * design)

    def saturation_flux(self, frequency):
        """Saturation flux linkage ``lambda_k`` [Wb]: the margin times :meth:`rated_flux`."""
        return self.saturation_margin * self.rated_flux(frequency)

    @property
    def remanence(self):
        """Residual flux after switch-off as a fraction of the saturation flux [-]."""
        return REMANENCE[self.core]

    def magnetising_admittance(self, voltage, frequency):
        """Admittance of the magnetising branch and the referred load [S] at its voltage.

        Parameters
        ----------
        voltage : numeric
            RMS voltage across the magnetising branch, :math:`V_m` [V].
        frequency : float
            Source frequency [Hz].

        Returns
        -------
        numpy.ndarray
            :math:`Y_m(V_m)` of the Notes, complex, shaped like ``voltage``.
        """
        voltage = np.asarray(voltage, dtype=float)
        scale = self.design_frequency(frequency) / (
            frequency * self.rated_voltage * self.saturation_margin
        )
        susceptance = self.knee_current * scale * rms_magnetising_ratio(voltage * scale, self.core)
        return self.core_conductance + self.load_conductance - 1j * susceptance

    def _table(self, frequency):
        """Magnetising voltage against branch current and terminal voltage, per frequency."""
        if frequency not in self._tables:
            voltage = np.concatenate(
                [
                    [0.0],
                    self.rated_voltage * np.geomspace(*VOLTAGE_TABLE_RANGE, VOLTAGE_TABLE_POINTS),
                ]
            )
            admittance = self.magnetising_admittance(voltage, frequency)
            current = voltage * np.abs(admittance)
            terminal = voltage * np.abs(1.0 + self.primary_resistance * admittance)
            self._tables[frequency] = (voltage, current, terminal)
        return self._tables[frequency]

    def magnetising_voltage(self, current, frequency):
        """RMS magnetising-branch voltage [V] at an RMS current [A] into one transformer."""
        voltage, current_table, _ = self._table(frequency)
        return monotone_inverse(
            lambda v: v * np.abs(self.magnetising_admittance(v, frequency)),
            current,
            voltage,
            current_table,
        )

    def _impedance_of_one(self, current, frequency):
        voltage = self.magnetising_voltage(current, frequency)
        return self.primary_resistance + 1.0 / self.magnetising_admittance(voltage, frequency)

    def _admittance_of_one(self, voltage, frequency):
        table, _, terminal = self._table(frequency)
        inner = monotone_inverse(
            lambda v: (
                v
                * np.abs(1.0 + self.primary_resistance * self.magnetising_admittance(v, frequency))
            ),
            voltage,
            table,
            terminal,
        )
        admittance = self.magnetising_admittance(inner, frequency)
        return admittance / (1.0 + self.primary_resistance * admittance)

    def _rated_power_of_one(self):
        frequency = self.design_frequency(DEFAULT_EVALUATION_FREQUENCY)
        admittance = self._admittance_of_one(np.array(self.rated_voltage), frequency)
        return float(self.rated_voltage**2 * admittance.real)

    def _description(self):
        words = CORE_WORDS[self.core]
        built = (
            "frequency not known, taken as the mains it runs on"
            if self.rated_frequency is None
            else f"built for {self.rated_frequency:g} Hz"
        )
        load = (
            "on no load"
            if self.load_power == 0
            else f"with {self.load_power:.3g} W of load on its secondary"
        )
        return {
            "model": "transformer",
            "summary": (
                f"a {self.rated_va:.3g} VA transformer ({words}, {built}) {load}, drawing "
                f"{self._rated_power_of_one():.3g} W at {self.rated_voltage:g} V"
            ),
            "parameters": {
                "rated_voltage": {"value": self.rated_voltage, "unit": "V"},
                "rated_va": {"value": self.rated_va, "unit": "VA"},
                "load_power": {"value": self.load_power, "unit": "W"},
                "rated_frequency": {"value": self.rated_frequency, "unit": "Hz"},
                "core": {"value": self.core, "unit": ""},
                "magnetising_fraction": {"value": self.magnetising_fraction, "unit": ""},
                "core_loss_fraction": {"value": self.core_loss_fraction, "unit": ""},
                "regulation": {"value": self.regulation, "unit": ""},
                "saturation_margin": {"value": self.saturation_margin, "unit": ""},
                "primary_resistance": {"value": self.primary_resistance, "unit": "ohm"},
            },
            "assumptions": [
                f"No-load current {100 * self.magnetising_fraction:.3g} % of rated current "
                "at rated voltage and frequency (small mains transformers draw about 5-15 %, "
                "toroids a few per cent, from memory).",
                f"Core loss {100 * self.core_loss_fraction:.3g} % and winding drop "
                f"{100 * self.regulation:.3g} % of rating (from memory).",
                f"The core saturates at {self.saturation_margin:g} times its rated flux, so on "
                "a lower frequency than it was built for it draws far more magnetising current.",
                "The secondary load is a resistance; leakage reactance is neglected.",
            ],
        }

    def __repr__(self):
        return (
            f"TransformerLoad(rated_voltage={self.rated_voltage:g}, rated_va={self.rated_va:g}, "
            f"load_power={self.load_power:g}, rated_frequency={self.rated_frequency!r}, "
            f"core={self.core!r}, draw_factor={factor_repr(self.draw_factor)})"
        )
