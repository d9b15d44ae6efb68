"""What a technician sees of a tungsten filament: its luminance, glow class and colour."""

from functools import cache

import numpy as np
from scipy import constants

from shop.physics.materials import DATA_DIRECTORY

CMF_FILE = "cie1931_2deg_5nm.csv"

# Maximum luminous efficacy of photopic vision [lm/W] (CIE; SI definition of the candela).
MAXIMUM_LUMINOUS_EFFICACY = 683.0

# Second radiation constant c2 = h c / k [m K] and first radiation constant for spectral
# radiance c1L = 2 h c^2 [W m^2 / sr], from CODATA via scipy.constants.
SECOND_RADIATION_CONSTANT = constants.h * constants.c / constants.k
FIRST_RADIATION_CONSTANT_RADIANCE = 2.0 * constants.h * constants.c**2

# Spectral emissivity of tungsten in the visible, taken as grey across the visible. De Vos
# (Physica 20, 690, 1954) measured about 0.42-0.47 over the visible at 1600-2800 K, falling
# slowly with temperature and wavelength (from memory). The total hemispherical emissivity of
# materials.py is not used here: it is an infrared-weighted average that rises threefold from
# 1000 K to 3000 K, while the visible emissivity barely moves. The value sets only the
# absolute luminance; the glow classes are ratios and do not depend on it.
VISIBLE_EMISSIVITY = 0.45

# Draper point [K]: where heated solids begin to glow visibly in the dark
# (J. W. Draper, Phil. Mag. 30, 345, 1847).
DRAPER_POINT = 798.0

GLOW_CLASSES = ("dark", "faint", "dull", "medium", "bright")

# Class limits as luminance relative to the same lamp at its rated temperature. By this module
# a filament at 2700-2900 K has a luminance of 6e6-1e7 cd/m^2, so for a lamp rated at 2775 K
# the limits fall at the absolute luminances and temperatures below. Each limit rests on an
# outside figure and a trade fact, and tests/physics/test_glow.py checks it against them:
# - FAINT_LIMIT 1e-4, about 700 cd/m^2 (about 1360 K), dull red. Outside figures (from
#   memory): fine bench work is lit to about 500 lx (EN 12464-1, lighting of indoor work
#   places), and white paper reflects about 0.8 of it, so the bench's bright surfaces sit near
#   130 cd/m^2. Trade fact (common practice, no source): a filament a fraction of a millimetre
#   thick is seen at a glance only when it outshines its lit background several-fold; this
#   limit is 3-10 times the paper, plain in a dim room and easy to miss in a lit one.
# - DULL_LIMIT 1e-2, about 7e4 cd/m^2 (about 1840 K), orange. Outside figure (from memory):
#   the surface of a fluorescent tube, about 1e4-2e4 cd/m^2 (lighting handbooks). Trade fact
#   (common practice, no source): a dull glow is plainly lit in a lit room yet comfortable to
#   look at, as a tube is; this limit is 2-10 times the tube's surface.
# - MEDIUM_LIMIT 0.2, about 1.4e6 cd/m^2 (about 2360 K), yellow-white. Outside figure: light
#   output near rating goes as V^3.4 (IES Lighting Handbook; Van Horn, J. IES, 1965; from
#   memory), so a fifth of the rated luminance is reached at about 62 % of the lamp's rated
#   volts. Trade fact (common practice, no source): with more than about 60 % of its rated
#   volts across it a lamp looks close to full brightness, the "bright" a short gives.
FAINT_LIMIT = 1e-4
DULL_LIMIT = 1e-2
MEDIUM_LIMIT = 0.2


@cache
def _colour_matching_functions():
    table = np.loadtxt(DATA_DIRECTORY / CMF_FILE, delimiter=",", skiprows=1)
    wavelength = table[:, 0] * 1e-9
    spacing = np.diff(wavelength)
    if not np.allclose(spacing, spacing[0]):
        raise ValueError(f"{CMF_FILE} must be tabulated at a uniform wavelength spacing")
    return wavelength, spacing[0], table[:, 1:]


def _check_positive_temperature(temperature, name="temperature"):
    values = np.asarray(temperature, dtype=float)
    if np.any(np.isnan(values)):
        raise ValueError(f"{name} must be a number (got NaN)")
    if np.any(values <= 0.0):
        raise ValueError(f"{name} must be a positive absolute temperature (got {values.min():g} K)")
    if np.any(np.isinf(values)):
        raise ValueError(f"{name} must be finite")
    return values


def _tristimulus(temperature):
    """Blackbody X, Y, Z radiance integrals, scaled by exp(c2 / (lambda_max T)) against
    underflow, and that log scale; both shaped like ``temperature`` (XYZ on a last axis)."""
    wavelength, spacing, cmfs = _colour_matching_functions()
    x = SECOND_RADIATION_CONSTANT / (wavelength * temperature[..., np.newaxis])
    x_min = x[..., -1:]
    # Planck's law written as exp(-x) / (1 - exp(-x)), shifted by the smallest x so the
    # largest term is of order one at any temperature.
    spectrum = (
        FIRST_RADIATION_CONSTANT_RADIANCE * wavelength**-5 * np.exp(-(x - x_min)) / -np.expm1(-x)
    )
    return spectrum @ cmfs * spacing, x_min[..., 0]


def blackbody_luminance(temperature):
    """
    Luminance of a blackbody (full radiator).

    Parameters
    ----------
    temperature : numeric
        temperature of the radiator [K]

    Returns
    -------
    luminance : numpy.ndarray
        luminance, shaped like ``temperature`` [cd/m^2]

    Notes
    -----
    .. math:: L_v = K_m \\sum_\\lambda L_{e,\\lambda}(\\lambda, T) V(\\lambda) \\Delta\\lambda,
              \\quad L_{e,\\lambda} = \\frac{2 h c^2}{\\lambda^5}
              \\frac{1}{e^{h c / \\lambda k T} - 1}

    with :math:`K_m` = 683 lm/W and V(lambda) the CIE photopic luminous efficiency (equal to
    the CIE 1931 y-bar), summed at 5 nm over 360-830 nm as CIE 015 allows for smooth spectra.

    References
    ----------
    .. [1] CIE 015:2018, Colorimetry, 4th ed., Commission Internationale de l'Eclairage.
    .. [2] M. Planck, Ann. Phys. 4, 553 (1901).
    """
    values = _check_positive_temperature(temperature)
    sums, log_scale = _tristimulus(values)
    return MAXIMUM_LUMINOUS_EFFICACY * sums[..., 1] * np.exp(-log_scale)


def luminance(temperature):
    """
    Luminance of a tungsten surface.

    Parameters
    ----------
    temperature : numeric
        temperature of the tungsten [K]

    Returns
    -------
    luminance : numpy.ndarray
        luminance, shaped like ``temperature`` [cd/m^2]

    Notes
    -----
    The blackbody luminance (:func:`blackbody_luminance`) times ``VISIBLE_EMISSIVITY``,
    tungsten's spectral emissivity in the visible taken as grey. It depends on the
    temperature alone, not on the size of the filament.

    References
    ----------
    .. [1] J. C. de Vos, "A new determination of the emissivity of tungsten ribbon",
       Physica 20, 690 (1954).
    """
    return VISIBLE_EMISSIVITY * blackbody_luminance(temperature)


def glow_class(temperature, rated_temperature):
    """
    Class of the glow a technician sees, from the filament's luminance.

    Parameters
    ----------
    temperature : numeric
        filament temperature [K]
    rated_temperature : numeric
        the same lamp's filament temperature at rated voltage [K]; broadcasts with
        ``temperature``

    Returns
    -------
    glow : numpy.ndarray of str
        one of ``GLOW_CLASSES`` per element, shaped like the broadcast inputs.

    Notes
    -----
    ``dark`` below ``DRAPER_POINT``; otherwise by the luminance relative to the lamp at its
    rated temperature: ``faint`` below ``FAINT_LIMIT``, ``dull`` below ``DULL_LIMIT``,
    ``medium`` below ``MEDIUM_LIMIT``, ``bright`` at or above it. Forge colour tables are not
    used: they describe large hot objects, not a thin filament in a lit room.
    """
    values = _check_positive_temperature(temperature)
    rated = _check_positive_temperature(rated_temperature, "rated_temperature")
    if np.any(rated <= DRAPER_POINT):
        raise ValueError(
            f"rated_temperature must be above the Draper point {DRAPER_POINT:g} K "
            f"(got {rated.min():g} K)"
        )
    values, rated = np.broadcast_arrays(values, rated)
    relative = luminance(values) / luminance(rated)
    index = np.select(
        [
            values < DRAPER_POINT,
            relative < FAINT_LIMIT,
            relative < DULL_LIMIT,
            relative < MEDIUM_LIMIT,
        ],
        [0, 1, 2, 3],
        default=4,
    )
    # Indexing with a 0-d index gives a numpy scalar; keep it an array, as for other shapes.
    return np.asarray(np.asarray(GLOW_CLASSES)[index])


@cache
def _class_thresholds(rated_temperature):
    """The filament temperatures where each glow class begins, for one rated temperature.

    Luminance rises with temperature, so each limit of ``glow_class`` is one temperature:
    the lowest float at which the relative luminance reaches it (bisected to adjacent
    floats), held no lower than the class before it. Read-only array of four [K].
    """
    rated_luminance = luminance(np.array(rated_temperature))
    low = np.full(3, 1.0)  # [K], far too cool to reach any limit
    high = np.full(3, 1.0e5)  # [K], far hotter than any limit
    limits = np.array([FAINT_LIMIT, DULL_LIMIT, MEDIUM_LIMIT])
    while True:
        middle = 0.5 * (low + high)
        open_ = (middle > low) & (middle < high)
        if not open_.any():
            break
        reached = luminance(middle) / rated_luminance >= limits
        high = np.where(open_ & reached, middle, high)
        low = np.where(open_ & ~reached, middle, low)
    thresholds = np.maximum.accumulate(np.concatenate([[DRAPER_POINT], high]))
    thresholds.setflags(write=False)
    return thresholds


def glow_class_of_lamp(temperature, rated_temperature):
    """
    :func:`glow_class` for one lamp (a scalar rated temperature), read from its thresholds.

    Parameters
    ----------
    temperature : numeric
        filament temperature [K]
    rated_temperature : float
        the lamp's filament temperature at rated voltage [K]

    Returns
    -------
    glow : numpy.ndarray of str
        one of ``GLOW_CLASSES`` per element, shaped like ``temperature``; the same classes
        as :func:`glow_class`, without a spectral sum per element.
    """
    values = _check_positive_temperature(temperature)
    rated = float(_check_positive_temperature(rated_temperature, "rated_temperature"))
    if rated <= DRAPER_POINT:
        raise ValueError(
            f"rated_temperature must be above the Draper point {DRAPER_POINT:g} K (got {rated:g} K)"
        )
    index = np.searchsorted(_class_thresholds(rated), values, side="right")
    return np.asarray(np.asarray(GLOW_CLASSES)[index])


def glow_colour(temperature):
    """
    CIE 1931 chromaticity of the Planckian radiator, for a colour swatch of the glow.

    Parameters
    ----------
    temperature : numeric
        radiator temperature [K]

    Returns
    -------
    x, y : numpy.ndarray
        CIE 1931 chromaticity coordinates, each shaped like ``temperature`` [-]

    Notes
    -----
    .. math:: x = X / (X + Y + Z), \\quad y = Y / (X + Y + Z)

    with X, Y, Z the sums of Planck's law against the CIE 1931 2-degree colour-matching
    functions at 5 nm. Tungsten's visible emissivity is close to grey, so the filament's
    colour is close to this (its colour temperature runs a few tens of kelvin above its true
    temperature, which a swatch does not show).

    References
    ----------
    .. [1] CIE 015:2018, Colorimetry, 4th ed., Commission Internationale de l'Eclairage.
    """
    values = _check_positive_temperature(temperature)
    sums, _ = _tristimulus(values)
    total = sums.sum(axis=-1)
    return sums[..., 0] / total, sums[..., 1] / total
