"""Tests of filament luminance, glow classes and glow colour in shop.physics.glow."""

import csv
import warnings

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose
from scipy.optimize import brentq

from shop.physics.glow import (
    DRAPER_POINT,
    DULL_LIMIT,
    FAINT_LIMIT,
    GLOW_CLASSES,
    MEDIUM_LIMIT,
    VISIBLE_EMISSIVITY,
    blackbody_luminance,
    glow_class,
    glow_colour,
    luminance,
)
from shop.physics.lamp import Lamp
from shop.physics.materials import DATA_DIRECTORY

with warnings.catch_warnings():
    # colour-science warns at import that matplotlib is absent; plotting is not used here.
    warnings.simplefilter("ignore")
    import colour
    from colour.temperature import CCT_to_uv_Planck1900

with open(DATA_DIRECTORY / "checks" / "glow_reference.csv", newline="") as handle:
    REFERENCE = {row["name"]: float(row["value"]) for row in csv.DictReader(handle)}

# colour-science's 1 nm tables over the same 360-830 nm as our 5 nm table.
SHAPE = colour.SpectralShape(360, 830, 1)
CMFS = colour.MSDS_CMFS["CIE 1931 2 Degree Standard Observer"]
TEMPERATURES = [800.0, 1000.0, 1500.0, 2000.0, 2856.0, 3500.0]
RATED = 2800.0


def colour_science_luminance(temperature):
    """Blackbody luminance [cd/m^2] by colour-science's luminous-flux integral at 1 nm."""
    return colour.luminous_flux(colour.sd_blackbody(temperature, SHAPE))


@pytest.mark.parametrize("temperature", TEMPERATURES)
def test_blackbody_luminance_matches_colour_science(temperature):
    # colour-science (K_m = 683 lm/W, CIE V(lambda) at 1 nm, trapezoid rule) is the external
    # check. It takes c2 = 1.4388e-2 m K (ITS-90) against CODATA's 1.438777e-2 here, which moves
    # exp(-c2 / lambda T) by up to 5e-4 at 800 K; 5 nm against 1 nm adds about 1e-4: 1e-3.
    assert_allclose(
        blackbody_luminance(temperature), colour_science_luminance(temperature), rtol=1e-3
    )


@pytest.mark.parametrize("temperature", TEMPERATURES)
def test_luminance_ratios_match_colour_science(temperature):
    # The glow classes use ratios; the same c2 and step differences as above, smaller: 5e-4.
    ours = luminance(temperature) / luminance(2856.0)
    theirs = colour_science_luminance(temperature) / colour_science_luminance(2856.0)
    assert_allclose(ours, theirs, rtol=5e-4)


def test_blackbody_at_the_platinum_point_is_sixty_candela_per_square_centimetre():
    # The 1948 definition of the candela (CGPM): a full radiator at the freezing point of
    # platinum has 60 cd/cm^2 (from memory). K_m = 683 lm/W was chosen in 1979 to keep that
    # within about 1 %, so allow 1.5 %.
    value = blackbody_luminance(REFERENCE["platinum_freezing_temperature"])
    assert_allclose(value, REFERENCE["platinum_point_luminance"], rtol=0.015)


def test_tungsten_luminance_is_the_visible_emissivity_times_the_blackbody():
    temperature = np.array([1000.0, 2800.0])
    # Same arithmetic on both sides, so only rounding separates them.
    assert_allclose(
        luminance(temperature), VISIBLE_EMISSIVITY * blackbody_luminance(temperature), rtol=1e-14
    )


def test_luminance_does_not_underflow_to_nan_at_room_temperature():
    value = luminance(300.0)
    assert np.isfinite(value) and value >= 0.0


@settings(max_examples=40, deadline=None)
@given(st.floats(300.0, 3600.0), st.floats(1.0, 100.0))
def test_luminance_rises_with_temperature(temperature, step):
    assert luminance(temperature + step) > luminance(temperature)


def test_planckian_locus_at_2856_kelvin_is_cie_illuminant_a():
    # CIE 015:2018, illuminant A, quoted to 4 digits (from a secondary copy): half a unit in
    # the last digit plus the ITS-90/CODATA c2 difference (2e-5): 1e-4.
    x, y = glow_colour(REFERENCE["illuminant_a_temperature"])
    assert_allclose([x, y], [REFERENCE["illuminant_a_x"], REFERENCE["illuminant_a_y"]], atol=1e-4)


@pytest.mark.parametrize("temperature", TEMPERATURES)
def test_glow_colour_matches_colour_science_chromaticity_of_a_blackbody(temperature):
    # colour-science integrates the 1 nm CIE 1931 CMFs against its own Planck's law; 5 nm
    # against 1 nm and the c2 difference move x, y by under 6e-5 even at 800 K: 1e-4.
    spectrum = colour.sd_blackbody(temperature, SHAPE)
    expected = colour.XYZ_to_xy(colour.sd_to_XYZ(spectrum, CMFS, method="Integration"))
    assert_allclose(glow_colour(temperature), expected, atol=1e-4)


@pytest.mark.parametrize("temperature", TEMPERATURES)
def test_glow_colour_matches_colour_science_planckian_locus(temperature):
    # colour-science's Planck 1900 locus (CIE 1960 uv, converted to xy): same tolerance.
    expected = colour.UCS_uv_to_xy(CCT_to_uv_Planck1900(temperature, CMFS))
    assert_allclose(glow_colour(temperature), expected, atol=1e-4)


def test_glow_is_dark_below_the_draper_point_and_faint_just_above():
    # Draper, Phil. Mag. 30, 345 (1847): 798 K, where solids begin to glow visibly.
    assert DRAPER_POINT == REFERENCE["draper_point"]
    assert list(glow_class([300.0, 797.9, 798.1], RATED)) == ["dark", "dark", "faint"]


def test_glow_is_bright_at_the_rated_temperature():
    assert glow_class(RATED, RATED) == "bright"


@pytest.mark.parametrize(
    ("limit", "below", "above"),
    [
        (FAINT_LIMIT, "faint", "dull"),
        (DULL_LIMIT, "dull", "medium"),
        (MEDIUM_LIMIT, "medium", "bright"),
    ],
)
def test_glow_class_changes_where_relative_luminance_crosses_its_limit(limit, below, above):
    rated = luminance(RATED)
    crossing = brentq(lambda t: luminance(t) / rated - limit, DRAPER_POINT, RATED, xtol=1e-9)
    assert list(glow_class([crossing - 0.01, crossing + 0.01], RATED)) == [below, above]


def test_glow_limits_fall_where_their_comments_say_for_a_lamp_rated_at_2775_kelvin():
    # Self-consistency only (the module against its own comments, not against a reference):
    # glow.py quotes each limit's temperature and absolute luminance for a 2775 K lamp
    # (about 1360 K / 700 cd/m^2, 1840 K / 7e4, 2360 K / 1.4e6); keep the comments true.
    rated = luminance(2775.0)
    for limit, temperature, absolute in [
        (FAINT_LIMIT, 1360.0, 700.0),
        (DULL_LIMIT, 1840.0, 7e4),
        (MEDIUM_LIMIT, 2360.0, 1.4e6),
    ]:
        crossing = brentq(lambda t, limit=limit: luminance(t) / rated - limit, 800.0, 2775.0)
        # The comments round: within 15 K and 10 %.
        assert_allclose(crossing, temperature, atol=15.0)
        assert_allclose(limit * rated, absolute, rtol=0.1)


def test_the_faint_limit_outshines_white_paper_on_a_lit_bench_several_fold():
    # EN 12464-1 (about 500 lx for fine bench work) and white paper's reflectance of about 0.8
    # (both from memory): a matt surface's luminance is reflectance x illuminance / pi.
    # Trade fact (common practice, no source): a thin filament is seen at a glance only when
    # it outshines its lit background several-fold, 3-10 times.
    paper = REFERENCE["white_paper_reflectance"] * REFERENCE["bench_illuminance"] / np.pi
    for rated in (2700.0, 2775.0, 2900.0):
        assert 3.0 <= FAINT_LIMIT * luminance(rated) / paper <= 10.0


def test_the_dull_limit_is_a_few_times_a_fluorescent_tubes_surface():
    # A fluorescent tube's surface, about 1e4-2e4 cd/m^2 (lighting handbooks, from memory).
    # Trade fact (common practice, no source): a dull glow is plainly lit yet comfortable to
    # look at: 2-10 times the tube.
    tube = REFERENCE["fluorescent_tube_luminance"]
    for rated in (2700.0, 2775.0, 2900.0):
        assert 2.0 <= DULL_LIMIT * luminance(rated) / tube <= 10.0


def test_a_lamp_turns_bright_at_about_sixty_percent_of_its_rated_volts():
    # Light output near rating goes as V^3.4 (IES Lighting Handbook; Van Horn, J. IES, 1965;
    # from memory), and a filament's luminance as its light output (same filament area):
    # a fifth of the rated luminance at 0.2^(1/3.4) = 62 % of the rated volts. Trade fact
    # (common practice, no source): above about 60 % of its rated volts a lamp looks close to
    # full brightness.
    lamp = Lamp(120.0, 60.0)
    volts = np.linspace(40.0, 110.0, 701)
    classes = lamp.glow(volts)
    first_bright = volts[np.argmax(classes == "bright")]
    expected = 120.0 * MEDIUM_LIMIT ** (1.0 / REFERENCE["light_output_exponent"])
    # The exponent is a rounded fit near rating, used here at 60 % of it: 10 %.
    assert_allclose(first_bright, expected, rtol=0.10)


def test_glow_classes_never_fall_as_temperature_rises():
    temperature = np.linspace(300.0, 3600.0, 2000)
    rank = np.argmax(
        glow_class(temperature, RATED)[:, np.newaxis] == np.array(GLOW_CLASSES), axis=1
    )
    assert np.all(np.diff(rank) >= 0)
    assert set(rank) == set(range(len(GLOW_CLASSES)))


def test_glow_class_depends_on_luminance_relative_to_rating():
    # The same filament temperature looks brighter against a cooler-rated lamp.
    assert list(glow_class(2200.0, [2400.0, 3100.0])) == ["bright", "medium"]


def test_glow_class_refuses_a_rated_temperature_at_or_below_the_draper_point():
    with pytest.raises(ValueError, match="rated_temperature must be above the Draper point"):
        glow_class(700.0, 798.0)


@pytest.mark.parametrize("function", [luminance, glow_colour, blackbody_luminance])
@pytest.mark.parametrize("temperature", [0.0, -10.0])
def test_functions_refuse_non_positive_temperature(function, temperature):
    with pytest.raises(ValueError, match="temperature must be a positive absolute temperature"):
        function(temperature)


@pytest.mark.parametrize("function", [luminance, glow_colour])
def test_functions_refuse_nan_temperature(function):
    with pytest.raises(ValueError, match=r"temperature must be a number \(got NaN\)"):
        function([np.nan])


def test_glow_class_refuses_nan_rated_temperature():
    with pytest.raises(ValueError, match=r"rated_temperature must be a number \(got NaN\)"):
        glow_class(1000.0, np.nan)


def test_luminance_accepts_scalar_list_and_array_input():
    assert np.shape(luminance(2000.0)) == ()
    assert np.shape(luminance([2000.0, 2500.0])) == (2,)
    grid = luminance(np.full((2, 3), 2500.0))
    assert grid.shape == (2, 3)
    # Values do not depend on the container.
    assert_allclose(grid, luminance(2500.0), rtol=1e-15)


def test_glow_class_accepts_scalar_list_and_array_input():
    assert glow_class(2000.0, RATED).shape == ()
    assert glow_class([300.0, 2000.0], RATED).shape == (2,)
    assert glow_class(np.full((2, 3), 1000.0), RATED).shape == (2, 3)
    assert set(glow_class(np.full((2, 3), 1000.0), RATED).ravel()) == {"faint"}


def test_glow_colour_accepts_scalar_list_and_array_input():
    x, y = glow_colour(2856.0)
    assert np.shape(x) == np.shape(y) == ()
    x, y = glow_colour([1000.0, 2856.0])
    assert x.shape == y.shape == (2,)
    x, y = glow_colour(np.full((2, 3), 2856.0))
    assert x.shape == y.shape == (2, 3)
    # Values do not depend on the container.
    assert_allclose(x, glow_colour(2856.0)[0], rtol=1e-15)
