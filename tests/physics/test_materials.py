"""Tests of the tungsten property tables in shop.physics.materials."""

import csv
import re
import shutil

import numpy as np
import pytest
from numpy.testing import assert_allclose

from shop.physics import materials
from shop.physics.materials import (
    DATA_DIRECTORY,
    TABLE_MAX_TEMPERATURE,
    TABLE_MIN_TEMPERATURE,
    TUNGSTEN_MOLAR_MASS,
    data_fingerprint,
    tungsten_emissivity,
    tungsten_emissivity_derivative,
    tungsten_heat_capacity,
    tungsten_resistivity,
    tungsten_resistivity_derivative,
)

CHECKS = DATA_DIRECTORY / "checks"
with open(CHECKS / "materials_reference.csv", newline="") as handle:
    REFERENCE = {row["name"]: float(row["value"]) for row in csv.DictReader(handle)}
RESISTIVITY_TABLE = np.loadtxt(
    DATA_DIRECTORY / "tungsten_resistivity.csv", delimiter=",", skiprows=1
)
WHITE_MINGES = np.loadtxt(
    CHECKS / "tungsten_resistivity_white_minges.csv", delimiter=",", skiprows=1
)
FUNCTIONS = [
    tungsten_resistivity,
    tungsten_resistivity_derivative,
    tungsten_emissivity,
    tungsten_emissivity_derivative,
    tungsten_heat_capacity,
]


def test_resistivity_table_spans_300_to_3600_kelvin_in_100_kelvin_steps():
    assert_allclose(RESISTIVITY_TABLE[:, 0], np.arange(300.0, 3601.0, 100.0), rtol=0)
    assert (TABLE_MIN_TEMPERATURE, TABLE_MAX_TEMPERATURE) == (300.0, 3600.0)


@pytest.mark.parametrize(("temperature", "microohm_cm"), RESISTIVITY_TABLE)
def test_resistivity_passes_through_every_table_row_in_ohm_metres(temperature, microohm_cm):
    # PCHIP interpolates, so the rows come back up to rounding; this checks the unit conversion.
    assert_allclose(tungsten_resistivity(temperature), microohm_cm * 1e-8, rtol=1e-12)


def test_resistivity_agrees_with_white_and_minges_fit_within_three_and_a_half_percent():
    # White & Minges, Int. J. Thermophys. 18, 1269 (1997), a fit of Desai et al. (1984): an
    # independent compilation. The two differ by 2-3 % at lamp temperatures (2000-3600 K) and
    # by 3.3 % at 300 K, the known spread between tables; 3.5 % allows that and no more.
    temperature = np.linspace(300.0, 3600.0, 331)
    independent = np.polynomial.polynomial.polyval(temperature, WHITE_MINGES[:, 1]) * 1e-8
    assert_allclose(tungsten_resistivity(temperature), independent, rtol=0.035)


def test_resistivity_rises_strictly_between_table_rows():
    values = tungsten_resistivity(np.linspace(300.0, 3600.0, 10001))
    assert np.all(np.diff(values) > 0.0)


def test_resistivity_derivative_matches_a_central_difference():
    temperature = np.array([350.0, 1234.5, 2860.0, 3550.0])
    step = 1e-3
    difference = (
        tungsten_resistivity(temperature + step) - tungsten_resistivity(temperature - step)
    ) / (2 * step)
    # The step is small against the 100 K rows, so the difference is good to about 1e-6.
    assert_allclose(tungsten_resistivity_derivative(temperature), difference, rtol=1e-6)


@pytest.mark.parametrize("temperature", [299.9, 3600.1, -5.0, np.inf])
def test_resistivity_refuses_temperatures_outside_the_table(temperature):
    with pytest.raises(ValueError, match=r"temperature must lie between 300 K and 3600 K"):
        tungsten_resistivity(temperature)


def test_resistivity_refuses_nan_temperature():
    with pytest.raises(ValueError, match=r"temperature must be a number \(got NaN\)"):
        tungsten_resistivity([1000.0, np.nan])


@pytest.mark.parametrize("temperature", [1000.0, 2000.0, 3000.0])
def test_emissivity_matches_the_values_quoted_for_the_tolias_fit(temperature):
    # Self-consistency check only: these are the fit's own values (Tolias, Nucl. Mater.
    # Energy 13, 42 (2017), as quoted to two digits in a secondary copy), so this shows the
    # coefficients were typed right, not that the fit is right; the independent check is
    # tests/physics/test_judgement_reference.py (Forsythe & Worthing emissivity). Half a unit
    # in the second digit plus rounding of the quote.
    expected = REFERENCE[f"emissivity_{int(temperature)}k"]
    assert_allclose(tungsten_emissivity(temperature), expected, atol=0.0055)


def test_emissivity_at_300_kelvin_is_the_constant_of_the_fit():
    # The fit is written in powers of (T - 300 K): at 300 K only its constant 0.0185 is left.
    assert_allclose(tungsten_emissivity(300.0), 0.0185, rtol=1e-12)


def test_emissivity_derivative_matches_a_central_difference():
    temperature = np.array([400.0, 1800.0, 3500.0])
    difference = tungsten_emissivity(temperature + 0.5) - tungsten_emissivity(temperature - 0.5)
    # Exact for a quadratic up to rounding.
    assert_allclose(tungsten_emissivity_derivative(temperature), difference, rtol=1e-8)


def test_emissivity_refuses_temperature_outside_the_table():
    with pytest.raises(ValueError, match="temperature must lie between"):
        tungsten_emissivity(250.0)


def test_heat_capacity_at_room_temperature_matches_janaf():
    # NIST-JANAF Thermochemical Tables, 4th ed., W(cr) Cp(298.15 K) = 24.27 J/(mol K) (from
    # memory); the Shomate fit reproduces tables to a few tenths of a per cent, so 0.5 %.
    molar = tungsten_heat_capacity(298.15) * TUNGSTEN_MOLAR_MASS
    assert_allclose(molar, REFERENCE["molar_heat_capacity_298k"], rtol=0.005)


def test_heat_capacity_fits_join_at_1900_kelvin():
    # Two Shomate ranges meet at 1900 K; NIST fits join to about 0.3 %, so allow 0.5 %.
    below, above = tungsten_heat_capacity([1899.999, 1900.001])
    assert_allclose(below, above, rtol=0.005)


def test_heat_capacity_refuses_temperature_outside_the_shomate_ranges():
    with pytest.raises(ValueError, match=r"temperature must lie between 298 K and 3680 K"):
        tungsten_heat_capacity(3700.0)


@pytest.mark.parametrize("function", FUNCTIONS, ids=lambda function: function.__name__)
def test_functions_accept_scalar_list_and_array_input(function):
    scalar = function(1500.0)
    listed = function([1500.0, 2500.0])
    grid = function(np.full((2, 3), 2500.0))
    assert np.shape(scalar) == ()
    assert np.shape(listed) == (2,)
    assert np.shape(grid) == (2, 3)
    # The same temperature gives the same value whatever the container.
    assert_allclose(listed[0], scalar, rtol=1e-15)
    assert_allclose(grid, listed[1], rtol=1e-15)


def test_data_fingerprint_is_a_sha256_hex_digest_and_stable():
    fingerprint = data_fingerprint()
    assert re.fullmatch(r"[0-9a-f]{64}", fingerprint)
    assert data_fingerprint() == fingerprint


def test_data_fingerprint_changes_when_a_data_file_changes(tmp_path, monkeypatch):
    original = data_fingerprint()
    for path in DATA_DIRECTORY.glob("*.csv"):
        shutil.copy(path, tmp_path / path.name)
    monkeypatch.setattr(materials, "DATA_DIRECTORY", tmp_path)
    assert data_fingerprint() == original
    table = tmp_path / "tungsten_resistivity.csv"
    table.write_text(table.read_text().replace("5.65", "5.66"))
    assert data_fingerprint() != original
