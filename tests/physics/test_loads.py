"""The load protocol and the resistive load."""

import csv
from pathlib import Path

import numpy as np
import pytest
from numpy.testing import assert_allclose

from shop.physics.loads import Load, ResistiveLoad

TRADE_FACTS = (
    Path(__file__).resolve().parents[2] / "fixtures" / "physics" / "checks" / ("trade_facts.csv")
)


def _resistor_facts():
    with TRADE_FACTS.open(newline="") as handle:
        return [row for row in csv.DictReader(handle) if row["quantity"] == "load_power"]


def test_resistive_load_follows_the_load_protocol():
    assert isinstance(ResistiveLoad(100.0), Load)


def test_a_resistor_cannot_make_the_glow_cycle():
    assert ResistiveLoad(100.0).may_cycle is False


def test_from_rating_gives_v_squared_over_p():
    load = ResistiveLoad.from_rating(120.0, 60.0)
    # Exact arithmetic: 120**2 / 60 = 240 ohm; rounding only.
    assert_allclose(load.resistance, 240.0, rtol=1e-15)
    assert_allclose(load.rated_power, 60.0, rtol=1e-15)
    assert load.rated_voltage == 120.0


@pytest.mark.parametrize("fact", _resistor_facts(), ids=lambda fact: fact["check"])
def test_resistor_stands_in_for_the_unit_the_trade_says(fact):
    # Common practice, no source (fixtures/physics/checks/trade_facts.csv): "about" 30 W and
    # 100 W; Ohm's law gives 28.8 W and 96 W, inside the 5 % the word "about" allows.
    load = ResistiveLoad(
        float(fact["load_resistance"]), rated_voltage=float(fact["source_voltage"])
    )
    assert_allclose(
        load.rated_power, float(fact["expected"]), rtol=float(fact["relative_tolerance"])
    )


def test_impedance_is_the_resistance_whatever_the_current_or_frequency():
    load = ResistiveLoad(500.0)
    impedance = load.impedance(np.array([0.0, 0.1, 2.0]), 50.0)
    assert impedance.dtype == complex
    # A resistor has no current or frequency dependence: exact equality.
    assert_allclose(impedance, 500.0 + 0j, rtol=0)
    assert_allclose(load.impedance(0.3, 60.0), load.impedance(0.3, 50.0), rtol=0)


@pytest.mark.parametrize("current", [0.2, [0.1, 0.2, 0.3], np.ones((2, 3))])
def test_impedance_is_shaped_like_the_current(current):
    assert ResistiveLoad(10.0).impedance(current, 60.0).shape == np.shape(current)


def test_impedance_broadcasts_current_against_array_parameters():
    load = ResistiveLoad([[10.0], [20.0]])
    assert load.impedance(np.zeros(3), 60.0).shape == (2, 3)
    assert load.impedance(0.0, 60.0).shape == (2, 1)


def test_scaled_divides_the_resistance_by_the_factor():
    # Drawing k times the power at the same voltage means R / k: exact up to rounding.
    assert_allclose(ResistiveLoad(300.0).scaled(3.0).resistance, 100.0, rtol=1e-15)


def test_scaled_keeps_the_rated_voltage_and_scales_the_rated_power():
    load = ResistiveLoad.from_rating(230.0, 40.0).scaled(2.5)
    assert load.rated_voltage == 230.0
    assert_allclose(load.rated_power, 100.0, rtol=1e-14)  # rounding only


def test_scaled_by_zero_is_open_and_by_infinity_is_a_dead_short():
    load = ResistiveLoad(100.0)
    assert np.isinf(load.scaled(0.0).resistance)
    assert load.scaled(np.inf).resistance == 0.0


@pytest.mark.parametrize("factor", [[1.0, 2.0], np.array([[0.5], [4.0]])])
def test_scaled_by_an_array_gives_one_load_per_factor(factor):
    load = ResistiveLoad(100.0).scaled(factor)
    assert_allclose(load.resistance, 100.0 / np.asarray(factor), rtol=1e-15)  # rounding only


def test_a_dead_short_draws_infinite_rated_power_and_an_open_unit_none():
    assert np.isinf(ResistiveLoad(0.0).rated_power)
    assert ResistiveLoad(np.inf).rated_power == 0.0


def test_describe_says_what_the_model_is_in_plain_words():
    description = ResistiveLoad(500.0).describe()
    assert description["model"] == "resistive"
    assert "500 ohm" in description["summary"]
    assert "28.8 W at 120 V" in description["summary"]
    assert description["parameters"]["resistance"] == {"value": 500.0, "unit": "ohm"}


def test_describe_names_a_short_and_an_open_unit():
    assert ResistiveLoad(0.0).describe()["summary"] == "a dead short"
    assert "open" in ResistiveLoad(np.inf).describe()["summary"]


@pytest.mark.parametrize("resistance", [-1.0, [10.0, -0.5]])
def test_negative_resistance_is_refused_by_name(resistance):
    with pytest.raises(ValueError, match="resistance must not be negative"):
        ResistiveLoad(resistance)


def test_nan_resistance_is_refused_by_name():
    with pytest.raises(ValueError, match="resistance must be a number"):
        ResistiveLoad(np.nan)


@pytest.mark.parametrize("rated_voltage", [0.0, -120.0, np.inf])
def test_a_rated_voltage_that_is_not_positive_and_finite_is_refused(rated_voltage):
    with pytest.raises(ValueError, match="rated_voltage"):
        ResistiveLoad(100.0, rated_voltage=rated_voltage)


@pytest.mark.parametrize("power", [0.0, -5.0, np.nan])
def test_from_rating_refuses_a_power_that_is_not_positive(power):
    with pytest.raises(ValueError, match="power"):
        ResistiveLoad.from_rating(120.0, power)


def test_scaled_refuses_a_negative_factor():
    with pytest.raises(ValueError, match="factor must not be negative"):
        ResistiveLoad(100.0).scaled(-1.0)
