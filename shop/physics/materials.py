"""Thermophysical properties of tungsten read from the published tables in fixtures/physics."""

import hashlib
from functools import cache
from pathlib import Path

import numpy as np
from scipy.interpolate import PchipInterpolator

DATA_DIRECTORY = Path(__file__).resolve().parents[2] / "fixtures" / "physics"
RESISTIVITY_FILE = "tungsten_resistivity.csv"
EMISSIVITY_FILE = "tungsten_emissivity_fit.csv"
SHOMATE_FILE = "tungsten_shomate.csv"

TABLE_MIN_TEMPERATURE = 300.0  # [K] first row of the resistivity table
TABLE_MAX_TEMPERATURE = 3600.0  # [K] last row of the resistivity table

# 1 microohm centimetre = 1e-8 ohm metre.
MICROOHM_CM = 1e-8

# Emissivity fit origin [K] (Tolias 2017 writes the fit in powers of T - 300 K).
EMISSIVITY_REFERENCE_TEMPERATURE = 300.0

# Density 19.25 g/cm^3 and molar mass 183.84 g/mol (CRC Handbook of Chemistry and Physics,
# as quoted in a secondary copy).
TUNGSTEN_DENSITY = 19250.0  # [kg/m^3]
TUNGSTEN_MOLAR_MASS = 0.18384  # [kg/mol]


def _read_table(name):
    return np.loadtxt(DATA_DIRECTORY / name, delimiter=",", skiprows=1, ndmin=2)


def _check_temperature(
    temperature, name="temperature", low=TABLE_MIN_TEMPERATURE, high=TABLE_MAX_TEMPERATURE
):
    """
    Return ``temperature`` as a float array after checking it lies in [low, high].

    Parameters
    ----------
    temperature : numeric
        temperature to check [K]
    name : str
        argument name used in the error message
    low, high : float
        inclusive limits [K]

    Raises
    ------
    ValueError
        naming the argument if any value is NaN or outside the limits.
    """
    values = np.asarray(temperature, dtype=float)
    if np.any(np.isnan(values)):
        raise ValueError(f"{name} must be a number (got NaN)")
    if np.any(values < low) or np.any(values > high):
        worst = values.min() if np.any(values < low) else values.max()
        raise ValueError(
            f"{name} must lie between {low:g} K and {high:g} K, the range of the tungsten data "
            f"(got {worst:g} K); the tables are not extrapolated"
        )
    return values


@cache
def _resistivity_interpolator():
    table = _read_table(RESISTIVITY_FILE)
    return PchipInterpolator(table[:, 0], table[:, 1] * MICROOHM_CM, extrapolate=False)


@cache
def _resistivity_slope_interpolator():
    # Built once: PchipInterpolator.derivative() makes a new piecewise polynomial every call.
    return _resistivity_interpolator().derivative()


@cache
def _emissivity_coefficients():
    table = _read_table(EMISSIVITY_FILE)
    coefficients = np.zeros(int(table[:, 0].max()) + 1)
    coefficients[table[:, 0].astype(int)] = table[:, 1]
    return coefficients


@cache
def _shomate_table():
    return _read_table(SHOMATE_FILE)


def tungsten_resistivity(temperature):
    """
    Electrical resistivity of tungsten.

    Parameters
    ----------
    temperature : numeric
        temperature of the metal, 300 to 3600 [K]

    Returns
    -------
    resistivity : numpy.ndarray
        resistivity, shaped like ``temperature`` [ohm m]

    Raises
    ------
    ValueError
        if ``temperature`` is NaN or outside 300-3600 K (no extrapolation).

    Notes
    -----
    Shape-preserving piecewise cubic Hermite interpolation (PCHIP) of the tabulated values
    every 100 K, so the curve is smooth and keeps the table's monotonicity.

    References
    ----------
    .. [1] W. E. Forsythe and A. G. Worthing, "The properties of tungsten and the
       characteristics of tungsten lamps", Astrophys. J. 61, 146 (1925).
    .. [2] H. A. Jones and I. Langmuir, "The characteristics of tungsten filaments as
       functions of temperature", Gen. Electr. Rev. 30 (1927). See fixtures/physics/SOURCES.md
       for what is and is not known about the provenance of the table.
    """
    values = _check_temperature(temperature)
    return _resistivity_interpolator()(values)


def tungsten_resistivity_derivative(temperature):
    """
    Temperature derivative of :func:`tungsten_resistivity`.

    Parameters
    ----------
    temperature : numeric
        temperature of the metal, 300 to 3600 [K]

    Returns
    -------
    slope : numpy.ndarray
        d(resistivity)/dT, shaped like ``temperature`` [ohm m / K]
    """
    values = _check_temperature(temperature)
    return _resistivity_slope_interpolator()(values)


def tungsten_emissivity(temperature):
    """
    Total hemispherical emissivity of tungsten.

    Parameters
    ----------
    temperature : numeric
        temperature of the metal, 300 to 3600 [K]

    Returns
    -------
    emissivity : numpy.ndarray
        total hemispherical emissivity, shaped like ``temperature`` [-]

    Notes
    -----
    .. math:: \\varepsilon = 0.0185 + 1.6048 \\times 10^{-4} (T - 300)
              - 1.7626 \\times 10^{-8} (T - 300)^2

    References
    ----------
    .. [1] P. Tolias, "Analytical expressions for thermophysical properties of solid and
       liquid tungsten relevant for fusion applications", Nucl. Mater. Energy 13, 42 (2017).
    .. [2] T. Matsumoto, A. Cezairliyan and D. Basak, "Hemispherical total emissivity of
       niobium, molybdenum, and tungsten at high temperatures using a combined
       transient and brief steady-state technique", Int. J. Thermophys. 20, 943 (1999).
    """
    values = _check_temperature(temperature)
    return np.polynomial.polynomial.polyval(
        values - EMISSIVITY_REFERENCE_TEMPERATURE, _emissivity_coefficients()
    )


def tungsten_emissivity_derivative(temperature):
    """
    Temperature derivative of :func:`tungsten_emissivity`.

    Parameters
    ----------
    temperature : numeric
        temperature of the metal, 300 to 3600 [K]

    Returns
    -------
    slope : numpy.ndarray
        d(emissivity)/dT, shaped like ``temperature`` [1/K]
    """
    values = _check_temperature(temperature)
    return np.polynomial.polynomial.polyval(
        values - EMISSIVITY_REFERENCE_TEMPERATURE,
        np.polynomial.polynomial.polyder(_emissivity_coefficients()),
    )


def tungsten_heat_capacity(temperature):
    """
    Specific heat capacity of solid tungsten at constant pressure.

    Parameters
    ----------
    temperature : numeric
        temperature of the metal, 298 to 3680 [K]

    Returns
    -------
    heat_capacity : numpy.ndarray
        specific heat capacity, shaped like ``temperature`` [J/(kg K)]

    Notes
    -----
    Shomate equation with ``t = T / 1000``:

    .. math:: c_p M = A + B t + C t^2 + D t^3 + E / t^2

    with one coefficient set for 298-1900 K and another for 1900-3680 K.

    References
    ----------
    .. [1] M. W. Chase, Jr., "NIST-JANAF Thermochemical Tables", 4th ed.,
       J. Phys. Chem. Ref. Data, Monograph 9 (1998); Shomate coefficients for W(cr)
       as given in the NIST Chemistry WebBook.
    """
    table = _shomate_table()
    values = _check_temperature(temperature, low=table[0, 0], high=table[-1, 1])
    upper = values > table[0, 1]
    coefficients = np.where(upper[..., np.newaxis], table[1, 2:], table[0, 2:])
    t = values / 1000.0
    a, b, c, d, e = np.moveaxis(coefficients, -1, 0)
    molar = a + b * t + c * t**2 + d * t**3 + e / t**2
    return molar / TUNGSTEN_MOLAR_MASS


def data_fingerprint():
    """
    SHA-256 over the physics data files, for stamping results with the data they used.

    Returns
    -------
    fingerprint : str
        hex digest over the name and bytes of every ``*.csv`` file directly in
        fixtures/physics, taken in name order.
    """
    digest = hashlib.sha256()
    for path in sorted(DATA_DIRECTORY.glob("*.csv")):
        digest.update(path.name.encode())
        digest.update(b"\0")
        digest.update(path.read_bytes())
    return digest.hexdigest()
