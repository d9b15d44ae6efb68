"""Switch-mode (constant-power) inputs, including the lamp they cannot run through."""

import numpy as np
import pytest
from numpy.testing import assert_allclose

from shop.physics import scenarios as reference
from shop.physics.circuit import (
    NO_OPERATING_POINT,
    OFF,
    STEADY,
    solve_bypassed,
    solve_series,
    unit_operating_point,
)
from shop.physics.lamp import Lamp
from shop.physics.loads import Load
from shop.physics.switch_mode import ConstantPowerLoad

ADAPTER = ConstantPowerLoad(20.0, rated_voltage=100.0)  # starts at 80 V, stops below 70 V
LAMP_150 = Lamp(230.0, 150.0)
LAMP_25 = Lamp(230.0, 25.0)
WINDINGS = 4.0  # [ohm]


def test_a_switch_mode_input_follows_the_load_protocol_and_may_cycle():
    assert isinstance(ADAPTER, Load)
    assert ADAPTER.may_cycle is True
    assert ADAPTER.constant_power is True


def test_start_and_stop_voltages_default_to_fractions_of_the_lowest_nameplate_voltage():
    # Common practice, no source: 80 % and 70 % of the lowest nameplate voltage.
    assert ADAPTER.start_voltage == pytest.approx(80.0, rel=1e-12)
    assert ADAPTER.stop_voltage == pytest.approx(70.0, rel=1e-12)


@pytest.mark.parametrize("source", [120.0, 180.0, 230.0])
def test_running_it_holds_its_power_at_the_scalar_reference_point(source):
    volts, amps, _ = reference.load_operating_point(LAMP_150, ADAPTER, source, 50.0, WINDINGS)
    result = solve_series(LAMP_150, ADAPTER, source, WINDINGS, 50.0)
    assert result.state == STEADY
    # brentq on the falling side against the vectorised polish: about 1e-12.
    assert_allclose(result.current, amps, rtol=1e-9)
    assert_allclose(result.load_voltage, volts, rtol=1e-9)
    assert_allclose(result.load_power, 20.0, rtol=1e-12)  # P / I**2 * I**2: rounding only


def test_it_settles_on_the_lower_current_of_the_two_roots():
    result = solve_series(LAMP_150, ADAPTER, 230.0, WINDINGS, 50.0)
    lamp_voltage = float(result.lamp_voltage)
    # Just beyond the root (more current), the source voltage needed still falls.
    step = 1e-3 * lamp_voltage
    needed = [
        volts + WINDINGS * LAMP_150.current(volts) + 20.0 / LAMP_150.current(volts)
        for volts in (lamp_voltage, lamp_voltage + step)
    ]
    assert needed[1] < needed[0]


def test_below_its_start_voltage_it_is_off_and_sees_the_whole_source():
    result = solve_series(LAMP_150, ADAPTER, np.array([20.0, 79.0]), WINDINGS, 50.0)
    assert (result.state == OFF).all()
    assert_allclose(result.current, 0.0, atol=0)
    assert_allclose(result.load_voltage, [20.0, 79.0], rtol=0)


def test_through_too_small_a_lamp_it_has_no_operating_point_and_no_error():
    result = solve_series(LAMP_25, ADAPTER, np.array([60.0, 150.0, 230.0]), WINDINGS, 50.0)
    assert list(result.state) == [OFF, NO_OPERATING_POINT, NO_OPERATING_POINT]
    assert np.isnan(result.load_voltage[1:]).all()
    assert np.isnan(result.current[1:]).all()
    assert list(result.glow[1:]) == ["", ""]
    assert not result.operating[1:].any()


def test_the_scalar_reference_agrees_there_is_no_operating_point():
    volts, amps, _ = reference.load_operating_point(LAMP_25, ADAPTER, 230.0, 50.0, WINDINGS)
    assert np.isnan(volts) and np.isnan(amps)


def test_a_root_below_the_stop_voltage_is_no_operating_point():
    # 50 W through a 150 W lamp runs at 230 V with its unit near 196 V: below a 200 V stop.
    choosy = ConstantPowerLoad(50.0, rated_voltage=230.0, start_voltage=210.0, stop_voltage=200.0)
    loose = ConstantPowerLoad(50.0, rated_voltage=230.0, start_voltage=100.0, stop_voltage=90.0)
    running = solve_series(LAMP_150, loose, 230.0, WINDINGS)
    assert running.state == STEADY
    assert float(running.load_voltage) < 200.0
    assert solve_series(LAMP_150, choosy, 230.0, WINDINGS).state == NO_OPERATING_POINT


def test_with_the_lamp_bypassed_it_follows_the_closed_form_root():
    source = np.array([100.0, 230.0])
    expected = (source - np.sqrt(source**2 - 4 * 20.0 * WINDINGS)) / (2 * WINDINGS)
    result = solve_bypassed(LAMP_150, ADAPTER, source, WINDINGS, 50.0)
    # The rationalised root against the textbook form: rounding only.
    assert_allclose(result.current, expected, rtol=1e-12)


def test_unit_operating_point_gives_nan_where_it_cannot_run():
    volts, amps = unit_operating_point(LAMP_25, ADAPTER, np.array([60.0, 230.0]), WINDINGS)
    assert volts[0] == 60.0 and amps[0] == 0.0
    assert np.isnan(volts[1]) and np.isnan(amps[1])


def test_scaling_multiplies_the_power_and_zero_is_an_open_unit():
    scaled = ADAPTER.scaled(np.array([0.0, 1.0, 2.0]))
    assert_allclose(scaled.rated_power, [0.0, 20.0, 40.0], rtol=1e-15)
    result = solve_series(LAMP_150, scaled, 230.0, WINDINGS)
    assert result.state[0] == OFF and result.current[0] == 0.0
    assert result.current[2] > result.current[1]


def test_describe_says_when_it_starts_and_stops():
    description = ADAPTER.describe()
    assert description["model"] == "constant_power"
    assert "starts at 80 V" in description["summary"]


@pytest.mark.parametrize(
    ("arguments", "name"),
    [
        ({"power": 0.0}, "power"),
        ({"power": 20.0, "rated_voltage": -5.0}, "rated_voltage"),
        ({"power": 20.0, "start_voltage": 50.0, "stop_voltage": 60.0}, "stop_voltage"),
    ],
)
def test_bad_switch_mode_parameters_are_refused_by_name(arguments, name):
    with pytest.raises(ValueError, match=name):
        ConstantPowerLoad(**arguments)
