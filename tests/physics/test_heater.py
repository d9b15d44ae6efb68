"""Heaters whose resistance rises with their own temperature."""

import csv

import numpy as np
import pytest
from numpy.testing import assert_allclose

from shop.physics.circuit import solve_series
from shop.physics.heater import HeaterLoad
from shop.physics.lamp import Lamp
from shop.physics.loads import Load, ResistiveLoad
from shop.physics.materials import DATA_DIRECTORY, tungsten_resistivity

with open(DATA_DIRECTORY / "checks" / "load_reference.csv", newline="") as handle:
    REFERENCE = {row["name"]: float(row["value"]) for row in csv.DictReader(handle)}

STRING = HeaterLoad(120.0, 18.0)  # a 0.15 A series string across 120 V


def test_a_heater_follows_the_load_protocol_and_holds_a_steady_glow():
    assert isinstance(STRING, Load)
    assert STRING.may_cycle is False


def test_a_heater_draws_its_rated_power_at_its_rated_current():
    rated_current = 18.0 / 120.0
    # The filament model is fixed by P_loss(T_r) = P_r: equal up to the Newton polish.
    assert_allclose(STRING.impedance(rated_current, 60.0).real, 120.0**2 / 18.0, rtol=1e-9)


def test_a_cold_heater_is_a_fraction_of_its_hot_resistance_as_the_trade_says():
    element = STRING.element
    fraction = element.cold_resistance / element.hot_resistance
    # From memory (fixtures/physics/checks/load_reference.csv): about 1/10 to 1/5.
    assert REFERENCE["heater_cold_fraction_low"] <= fraction
    assert fraction <= REFERENCE["heater_cold_fraction_high"]


def test_the_cold_fraction_is_the_resistivity_ratio_of_the_table():
    element = STRING.element
    expected = tungsten_resistivity(300.0) / tungsten_resistivity(element.rated_temperature)
    # R(T) = R_h rho(T) / rho(T_r) exactly: rounding only.
    assert_allclose(element.cold_resistance / element.hot_resistance, expected, rtol=1e-12)


def test_impedance_and_admittance_describe_the_same_heater():
    current = np.array([0.01, 0.05, 0.15, 0.2])
    voltage = current * np.abs(STRING.impedance(current, 60.0))
    # Both come from the same filament curve, polished by Newton steps: about 1e-12.
    assert_allclose(np.abs(STRING.admittance(voltage, 60.0)) * voltage, current, rtol=1e-10)


@pytest.mark.parametrize("current", [0.1, [0.05, 0.1], np.full((2, 3), 0.1)])
def test_impedance_is_shaped_like_the_current(current):
    assert STRING.impedance(current, 60.0).shape == np.shape(current)


def test_through_a_lamp_a_cold_heater_gets_less_than_a_resistor_of_its_hot_resistance():
    lamp = Lamp(120.0, 60.0)
    source = np.array([30.0, 60.0, 90.0])
    heater = solve_series(lamp, STRING, source, 2.0)
    resistor = solve_series(lamp, ResistiveLoad(120.0**2 / 18.0), source, 2.0)
    assert (heater.load_voltage < resistor.load_voltage).all()


def test_beyond_the_end_of_the_table_the_resistance_is_held_not_refused():
    beyond = STRING.impedance(1e3, 60.0).real
    # Held at R(3600 K) = R_h rho(3600) / rho(T_r): rounding only.
    expected = (
        STRING.element.hot_resistance
        * tungsten_resistivity(3600.0)
        / tungsten_resistivity(STRING.element.rated_temperature)
    )
    assert_allclose(beyond, expected, rtol=1e-12)


def test_scaling_a_heater_is_copies_in_parallel():
    current = np.array([0.05, 0.2])
    # Z_k(I) = Z_1(I / k) / k by definition: rounding only.
    assert_allclose(
        STRING.scaled(2.0).impedance(current, 60.0),
        STRING.impedance(current / 2.0, 60.0) / 2.0,
        rtol=1e-14,
    )
    assert np.isinf(STRING.scaled(0.0).impedance(0.1, 60.0)).all()
    assert STRING.scaled(np.inf).impedance(0.1, 60.0) == 0


def test_the_heat_capacity_gives_the_warm_up_time_constant():
    heater = HeaterLoad(120.0, 18.0, warm_up_time=5.0)
    element = heater.element
    slope = (element.power_loss(1401.0) - element.power_loss(1399.0)) / 2.0
    # C = tau dP/dT at rating; a centred difference is good to about 1e-6 here.
    assert_allclose(heater.heat_capacity, 5.0 * slope, rtol=1e-5)


def test_describe_names_the_model_and_its_assumptions():
    description = STRING.describe()
    assert description["model"] == "heater"
    assert "18 W at 120 V" in description["summary"]
    assert any("1400 K" in sentence for sentence in description["assumptions"])


@pytest.mark.parametrize(
    ("arguments", "name"),
    [
        ({"rated_voltage": -120.0, "rated_power": 18.0}, "rated_voltage"),
        ({"rated_voltage": 120.0, "rated_power": 0.0}, "rated_power"),
        ({"rated_voltage": 120.0, "rated_power": 18.0, "rated_temperature": 600.0}, "rated_temp"),
        ({"rated_voltage": 120.0, "rated_power": 18.0, "warm_up_time": 0.0}, "warm_up_time"),
    ],
)
def test_bad_heater_parameters_are_refused_by_name(arguments, name):
    with pytest.raises(ValueError, match=name):
        HeaterLoad(**arguments)
