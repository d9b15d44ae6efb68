"""Transformer input: windings, a saturating core and the load behind, as phasors."""

import csv

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy.optimize import brentq

from shop.physics import scenarios as reference
from shop.physics.circuit import solve_bypassed, solve_series
from shop.physics.lamp import Lamp
from shop.physics.loads import Load
from shop.physics.materials import DATA_DIRECTORY
from shop.physics.transformer import (
    TransformerLoad,
    magnetising_current,
    magnetising_flux,
    magnetising_flux_slope,
    rms_magnetising_ratio,
)

with open(DATA_DIRECTORY / "checks" / "load_reference.csv", newline="") as handle:
    REFERENCE = {row["name"]: float(row["value"]) for row in csv.DictReader(handle)}

SUPPLY = TransformerLoad(120.0, 100.0, load_power=40.0)
BARE = TransformerLoad(120.0, 100.0, core_loss_fraction=0.0)  # no load, no core loss: R + L


def _unsaturated_impedance(transformer, frequency):
    """R_1 + j omega L_0: the primary winding and the core's unsaturated inductance."""
    inductance = (
        transformer.saturation_flux(frequency)
        / transformer.knee_current
        * magnetising_flux_slope(0.0, transformer.core)
    )
    return transformer.primary_resistance + 2j * np.pi * frequency * inductance


def test_a_transformer_follows_the_load_protocol():
    assert isinstance(SUPPLY, Load)
    assert SUPPLY.may_cycle is False


@pytest.mark.parametrize("core", ["ei", "toroid"])
def test_the_magnetising_curve_and_its_inverse_agree(core):
    current = np.geomspace(1e-3, 1e6, 50)
    # Newton's method converges to rounding.
    assert_allclose(magnetising_current(magnetising_flux(current, core), core), current, rtol=1e-12)


@pytest.mark.parametrize("core", ["ei", "toroid"])
def test_the_tabulated_rms_current_matches_direct_quadrature(core):
    amplitude = np.array([0.1, 0.5, 0.77, 0.95, 1.0, 1.05, 1.5, 20.0])
    angle = (np.arange(4096) + 0.5) * (np.pi / 2) / 4096
    direct = np.sqrt(np.mean(magnetising_current(amplitude[:, None] * np.sin(angle), core) ** 2, 1))
    # The cubic-spline table is dense around saturation: about 1e-7.
    assert_allclose(rms_magnetising_ratio(amplitude, core) * amplitude, direct, rtol=1e-6)


@pytest.mark.parametrize("frequency", [50.0, 60.0])
def test_at_low_volts_the_bare_transformer_is_the_closed_form_resistor_plus_inductor(frequency):
    source = np.array([0.01, 0.03, 0.05])
    expected = source / np.abs(1.0 + _unsaturated_impedance(BARE, frequency))
    result = solve_bypassed(Lamp(120.0, 25.0), BARE, source, 1.0, frequency)
    # A twentieth of a volt is 3e-4 of the saturation flux: the curve departs from a straight
    # line by about the square of that, 1e-7.
    assert_allclose(result.current, expected, rtol=1e-6)


def test_through_a_lamp_the_bare_transformer_matches_the_scalar_phasor_reference():
    lamp = Lamp(120.0, 25.0)
    source = 0.05
    impedance = _unsaturated_impedance(BARE, 60.0)
    volts, amps, _ = reference.operating_point(lamp, impedance, source, 2.0)
    result = solve_series(lamp, BARE, source, 2.0, 60.0)
    # Same 1e-7 departure from a straight-line core as above.
    assert_allclose(result.current, amps, rtol=1e-6)
    assert_allclose(result.load_voltage, volts, rtol=1e-6)


@pytest.mark.parametrize("source", [40.0, 90.0, 120.0])
def test_a_loaded_transformer_through_a_lamp_matches_the_scalar_reference(source):
    lamp = Lamp(120.0, 60.0)
    volts, amps, _ = reference.load_operating_point(lamp, SUPPLY, source, 60.0, 2.0)
    result = solve_series(lamp, SUPPLY, source, 2.0, 60.0)
    # Both solve the same model, brentq against the vectorised polish: about 1e-12.
    assert_allclose(result.current, amps, rtol=1e-9)
    assert_allclose(result.load_voltage, volts, rtol=1e-9)


def test_the_no_load_current_at_rating_is_the_declared_fraction():
    transformer = TransformerLoad(120.0, 100.0, magnetising_fraction=0.08)
    magnetising = -transformer.magnetising_admittance(120.0, 60.0).imag * 120.0
    # The knee current is fitted to it through the table: about 1e-7.
    assert_allclose(magnetising, 0.08 * 100.0 / 120.0, rtol=1e-6)


def test_a_60_hz_transformer_on_50_hz_draws_far_more_magnetising_current():
    transformer = TransformerLoad(120.0, 100.0, rated_frequency=60.0)
    at_60 = np.abs(transformer.admittance(120.0, 60.0)) * 120.0
    at_50 = np.abs(transformer.admittance(120.0, 50.0)) * 120.0
    ratio = float(at_50 / at_60)
    # From memory (fixtures/physics/checks/load_reference.csv): about 1.5 to 4 times.
    assert REFERENCE["transformer_60_hz_on_50_hz_ratio_low"] <= ratio
    assert ratio <= REFERENCE["transformer_60_hz_on_50_hz_ratio_high"]


def test_a_transformer_of_unknown_frequency_runs_as_built_for_its_mains():
    unknown = TransformerLoad(230.0, 60.0, rated_frequency=None)
    built = TransformerLoad(230.0, 60.0, rated_frequency=50.0)
    current = np.array([0.02, 0.1])
    # The same flux at 50 Hz either way: identical arithmetic.
    assert_allclose(unknown.impedance(current, 50.0), built.impedance(current, 50.0), rtol=1e-14)


def test_rated_power_is_the_real_power_of_the_t_circuit_at_rated_voltage():
    transformer = SUPPLY

    def terminal(magnetising_voltage):
        admittance = transformer.magnetising_admittance(magnetising_voltage, 60.0)
        return abs(magnetising_voltage * (1 + transformer.primary_resistance * admittance)) - 120

    inner = brentq(terminal, 1.0, 120.0, xtol=1e-14)
    admittance = transformer.magnetising_admittance(inner, 60.0)
    current = inner * admittance
    expected = (
        inner * (1 + transformer.primary_resistance * admittance) * current.conjugate()
    ).real
    # The same circuit, scalar brentq against the table and polish: about 1e-12.
    assert_allclose(transformer.rated_power, expected, rtol=1e-9)
    assert 40.0 < float(transformer.rated_power) < 45.0  # load plus core and copper losses


def test_impedance_and_admittance_describe_the_same_transformer():
    current = np.array([0.01, 0.1, 0.5, 2.0])
    voltage = current * np.abs(SUPPLY.impedance(current, 50.0))
    # Both are polished inverses of one table: about 1e-13.
    assert_allclose(np.abs(SUPPLY.admittance(voltage, 50.0)) * voltage, current, rtol=1e-10)


@pytest.mark.parametrize("current", [0.2, [0.1, 0.3], np.full((2, 2), 0.2)])
def test_impedance_is_shaped_like_the_current(current):
    assert SUPPLY.impedance(current, 60.0).shape == np.shape(current)


def test_describe_lists_the_assumptions_behind_the_defaults():
    description = SUPPLY.describe()
    assert description["model"] == "transformer"
    assert "100 VA" in description["summary"]
    assert any("No-load current 10 %" in sentence for sentence in description["assumptions"])


@pytest.mark.parametrize(
    ("arguments", "name"),
    [
        ({"load_power": 150.0}, "load_power"),
        ({"core": "ferrite"}, "core"),
        ({"rated_frequency": 400.0}, "rated_frequency"),
        ({"magnetising_fraction": 0.0}, "magnetising_fraction"),
        ({"regulation": -0.1}, "regulation"),
    ],
)
def test_bad_transformer_parameters_are_refused_by_name(arguments, name):
    with pytest.raises(ValueError, match=name):
        TransformerLoad(120.0, 100.0, **arguments)
