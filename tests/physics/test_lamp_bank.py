"""Tests of lamps switched in parallel, shop.physics.lamp.LampBank."""

import numpy as np
import pytest
from numpy.testing import assert_allclose, assert_array_equal

from shop.physics.glow import GLOW_CLASSES
from shop.physics.lamp import Lamp, LampBank

METHODS = ["current", "resistance", "filament_temperature", "power", "relative_light", "glow"]


def sweep(lamp, points=1001):
    return np.linspace(0.0, lamp.max_voltage, points)


def test_two_equal_lamps_draw_exactly_twice_one_lamps_current_at_every_voltage():
    lamp = Lamp(120.0, 60.0)
    bank = LampBank([lamp, Lamp(120.0, 60.0)])
    voltage = sweep(lamp)
    # Both lamps solve the same equations with the same numbers: x + x == 2x exactly.
    assert_array_equal(bank.current(voltage), 2.0 * lamp.current(voltage))
    assert_array_equal(bank.filament_temperature(voltage), lamp.filament_temperature(voltage))


def test_a_60_and_100_watt_bank_draws_the_sum_of_their_currents():
    small, large = Lamp(120.0, 60.0), Lamp(120.0, 100.0)
    bank = LampBank([small, large])
    voltage = sweep(bank)
    # Parallel lamps see the same voltage; the currents add. Only rounding of the sum differs.
    assert_allclose(
        bank.current(voltage), small.current(voltage) + large.current(voltage), rtol=1e-15
    )
    assert_allclose(bank.rated_power, 160.0, rtol=0)
    assert_allclose(bank.current(120.0), 160.0 / 120.0, rtol=1e-9)


def test_a_bank_of_one_behaves_as_the_lamp():
    lamp = Lamp(230.0, 40.0)
    bank = LampBank([lamp])
    voltage = sweep(lamp)
    assert_array_equal(bank.glow(voltage), lamp.glow(voltage))
    for method in METHODS[:-1]:
        # The bank sums and inverts where the lamp divides once: a few ulps.
        assert_allclose(getattr(bank, method)(voltage), getattr(lamp, method)(voltage), rtol=1e-14)
    assert (bank.rated_voltage, bank.rated_power, bank.max_voltage) == (
        lamp.rated_voltage,
        lamp.rated_power,
        lamp.max_voltage,
    )
    # Reciprocal of a reciprocal: rounding only.
    assert_allclose(
        [bank.hot_resistance, bank.cold_resistance],
        [lamp.hot_resistance, lamp.cold_resistance],
        rtol=1e-15,
    )
    curve = bank.curve()
    assert_allclose(curve.voltage, lamp.curve().voltage, rtol=1e-15)
    # The bank solves at the lamp's grid voltages; the lamp's curve was computed from T: 1e-10.
    assert_allclose(curve.current, lamp.curve().current, rtol=1e-10)


def test_two_equal_lamps_match_one_lamp_of_twice_the_power_at_the_same_rated_temperature():
    # Physics says so only when the filaments run at the same temperature at the same voltage:
    # same rated voltage, rated temperature and conduction fraction.
    pair = LampBank([Lamp(120.0, 60.0, rated_temperature=2775.0)] * 2)
    double = Lamp(120.0, 120.0, rated_temperature=2775.0)
    voltage = sweep(double)
    # The model scales with rated power at fixed temperatures: rounding only.
    assert_allclose(pair.current(voltage), double.current(voltage), rtol=1e-12)


def test_two_equal_lamps_differ_from_one_default_lamp_of_twice_the_power_off_rating():
    # A default 120 W lamp runs hotter at rating than a 60 W lamp (larger filament), so the
    # two agree at rated voltage only.
    pair, double = LampBank([Lamp(120.0, 60.0)] * 2), Lamp(120.0, 120.0)
    # Both draw 1 A at 120 V to the solver's precision.
    assert_allclose(pair.current(120.0), double.current(120.0), rtol=1e-9)
    # Near cold the hotter-rated filament has the larger hot/cold ratio, so the lower cold
    # resistance: rho(2860 K) / rho(2775 K) is 3.7 % apart; more than 2 % at 1 V.
    assert double.current(1.0) / pair.current(1.0) - 1.0 > 0.02


def test_bank_resistance_at_zero_volts_is_the_parallel_cold_resistance():
    small, large = Lamp(120.0, 60.0), Lamp(120.0, 100.0)
    bank = LampBank([small, large])
    expected = 1.0 / (1.0 / small.cold_resistance + 1.0 / large.cold_resistance)
    # Same formula in the same order: rounding only.
    assert_allclose(bank.resistance(0.0), expected, rtol=1e-15)
    assert_allclose(bank.cold_resistance, expected, rtol=1e-15)
    assert bank.current(0.0) == 0.0


def test_bank_resistance_is_voltage_over_current():
    bank = LampBank([Lamp(120.0, 60.0), Lamp(120.0, 100.0)])
    voltage = np.linspace(1.0, 120.0, 50)
    # Two algebraically equal forms: rounding only.
    assert_allclose(bank.resistance(voltage), voltage / bank.current(voltage), rtol=1e-13)


def test_bank_filament_temperature_is_the_hottest_filaments():
    cool, hot = Lamp(120.0, 60.0), Lamp(130.0, 60.0, rated_temperature=2500.0)
    bank = LampBank([cool, hot])
    voltage = np.linspace(0.0, 120.0, 101)
    expected = np.maximum(cool.filament_temperature(voltage), hot.filament_temperature(voltage))
    assert_array_equal(bank.filament_temperature(voltage), expected)


def test_bank_glow_is_the_brightest_lamps_class():
    # A 230 V lamp on a 120 V bank glows far less than the 120 V lamp beside it.
    low, high = Lamp(120.0, 60.0), Lamp(230.0, 60.0)
    bank = LampBank([low, high])
    voltage = np.array([0.0, 30.0, 60.0, 120.0])
    assert list(bank.glow(voltage)) == list(low.glow(voltage))
    assert list(high.glow(voltage)) != list(low.glow(voltage))
    assert set(bank.glow(voltage)) <= set(GLOW_CLASSES)


def test_mixed_rated_voltages_give_the_highest_rated_voltage():
    bank = LampBank([Lamp(120.0, 60.0), Lamp(130.0, 60.0)])
    assert bank.rated_voltage == 130.0


def test_bank_relative_light_is_one_when_every_lamp_is_at_its_rating():
    bank = LampBank([Lamp(120.0, 40.0), Lamp(120.0, 100.0)])
    # Each lamp gives 1 at rated voltage to the solver's precision.
    assert_allclose(bank.relative_light(120.0), 1.0, rtol=1e-8)


def test_bank_hot_resistance_is_the_parallel_hot_resistance():
    bank = LampBank([Lamp(120.0, 60.0), Lamp(120.0, 100.0)])
    # 120 V over 160 W; reciprocal sums: rounding only.
    assert_allclose(bank.hot_resistance, 120.0**2 / 160.0, rtol=1e-14)


def test_bank_curve_rises_strictly_from_zero_to_the_first_lamps_limit():
    small, large = Lamp(120.0, 60.0), Lamp(120.0, 100.0)
    bank = LampBank([small, large])
    curve = bank.curve()
    for values in curve:
        assert values.ndim == 1 and np.all(np.diff(values) > 0.0)
    assert (curve.voltage[0], curve.current[0], curve.temperature[0]) == (0.0, 0.0, 300.0)
    assert curve.voltage[-1] == bank.max_voltage == min(small.max_voltage, large.max_voltage)
    assert bank.curve() is curve


def test_nested_banks_are_flattened():
    lamps = [Lamp(120.0, 60.0), Lamp(120.0, 100.0), Lamp(120.0, 40.0)]
    nested = LampBank([LampBank(lamps[:2]), lamps[2]])
    assert nested.lamps == tuple(lamps)


def test_empty_bank_is_refused():
    with pytest.raises(ValueError, match="lamps must hold at least one lamp"):
        LampBank([])


def test_bank_of_something_other_than_lamps_is_refused():
    with pytest.raises(ValueError, match="lamps must be Lamp or LampBank objects"):
        LampBank([Lamp(120.0, 60.0), "60 W"])


def test_bank_refuses_voltage_beyond_its_first_lamps_limit():
    bank = LampBank([Lamp(120.0, 60.0), Lamp(120.0, 100.0)])
    with pytest.raises(ValueError, match="voltage must not exceed"):
        bank.current(bank.max_voltage * 1.01)


@pytest.mark.parametrize("method", METHODS)
@pytest.mark.parametrize("voltage", [-1.0, np.nan], ids=["negative", "nan"])
def test_bank_methods_refuse_negative_or_nan_voltage(method, voltage):
    bank = LampBank([Lamp(120.0, 60.0), Lamp(120.0, 100.0)])
    with pytest.raises(ValueError, match=r"voltage must (not be negative|be a number)"):
        getattr(bank, method)(voltage)


@pytest.mark.parametrize("method", METHODS)
def test_bank_methods_accept_scalar_list_and_array_input(method):
    function = getattr(LampBank([Lamp(120.0, 60.0), Lamp(120.0, 100.0)]), method)
    scalar = function(60.0)
    listed = function([60.0, 90.0])
    grid = function(np.full((2, 3), 90.0))
    assert np.shape(scalar) == ()
    assert np.shape(listed) == (2,)
    assert np.shape(grid) == (2, 3)
    # Equal to the last bits or nearly: numpy may take a SIMD loop for an array and a
    # scalar loop for one value, which can round the last bit differently on some CPUs.
    if np.asarray(scalar).dtype.kind == "f":
        assert_allclose(grid, np.broadcast_to(listed[1], grid.shape), rtol=1e-13, atol=0)
        assert_allclose(listed[0], scalar, rtol=1e-13, atol=0)
    else:
        assert np.all(grid == listed[1])
        assert listed[0] == scalar
