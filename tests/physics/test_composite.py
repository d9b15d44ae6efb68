"""Units of several parts on one supply."""

import numpy as np
import pytest
from numpy.testing import assert_allclose

from shop.physics import scenarios as reference
from shop.physics.circuit import solve_series
from shop.physics.composite import CompositeLoad
from shop.physics.heater import HeaterLoad
from shop.physics.lamp import Lamp
from shop.physics.loads import Load, ResistiveLoad
from shop.physics.switch_mode import ConstantPowerLoad
from shop.physics.transformer import TransformerLoad

HEATERS = HeaterLoad(120.0, 22.0)
CORE = TransformerLoad(120.0, 80.0)
DC_LOAD = ResistiveLoad.from_rating(120.0, 40.0)
VALVE_SET = CompositeLoad([HEATERS, DC_LOAD, CORE])


def test_a_composite_follows_the_load_protocol():
    assert isinstance(VALVE_SET, Load)


def test_two_resistors_make_the_parallel_resistor():
    pair = CompositeLoad([ResistiveLoad(300.0), ResistiveLoad(600.0)])
    current = np.array([0.0, 0.1, 1.0])
    # A constant impedance survives the table's interpolation exactly up to rounding.
    assert_allclose(pair.impedance(current, 60.0), 200.0, rtol=1e-12)


def test_the_members_currents_add_as_phasors():
    voltage = np.array([10.0, 60.0, 120.0, 140.0])
    total = sum(member.admittance(voltage, 50.0) for member in VALVE_SET.members)
    # Sum of the members' own admittances: rounding only.
    assert_allclose(VALVE_SET.admittance(voltage, 50.0), total, rtol=1e-14)


def test_the_tabulated_impedance_agrees_with_the_members_admittances():
    voltage = np.geomspace(1e-2, 300.0, 400)
    admittance = VALVE_SET.admittance(voltage, 60.0)
    impedance = VALVE_SET.impedance(voltage * np.abs(admittance), 60.0)
    # Cubic splines on a dense table: about 1e-7 (the Notes promise a part in 1e6).
    assert_allclose(impedance * admittance, 1.0, atol=1e-6)


@pytest.mark.parametrize("source", [30.0, 90.0, 120.0])
def test_a_valve_set_through_a_lamp_matches_the_scalar_reference(source):
    lamp = Lamp(120.0, 100.0)
    volts, amps, _ = reference.load_operating_point(lamp, VALVE_SET, source, 60.0, 2.0)
    result = solve_series(lamp, VALVE_SET, source, 2.0, 60.0)
    # Same model, brentq against the vectorised polish: about 1e-12.
    assert_allclose(result.current, amps, rtol=1e-9)
    assert_allclose(result.load_voltage, volts, rtol=1e-9)


def test_its_rated_power_is_the_sum_of_its_members():
    expected = sum(float(member.rated_power) for member in VALVE_SET.members)
    assert_allclose(VALVE_SET.rated_power, expected, rtol=1e-15)  # rounding only


def test_a_composite_of_one_says_what_its_member_is():
    single = CompositeLoad([DC_LOAD]).with_assumptions(["Declared by the owner."])
    description = single.describe()
    assert description["summary"] == DC_LOAD.describe()["summary"]
    assert description["assumptions"][0] == "Declared by the owner."


def test_describe_names_every_part_and_gathers_their_assumptions():
    description = VALVE_SET.describe()
    assert description["summary"].startswith("3 parts on one supply")
    assert len(description["parameters"]["members"]) == 3
    assert any("1400 K" in sentence for sentence in description["assumptions"])


def test_a_constant_power_member_is_refused():
    with pytest.raises(ValueError, match=r"members\[1\] is a constant-power input"):
        CompositeLoad([DC_LOAD, ConstantPowerLoad(10.0)])


def test_members_on_different_supplies_are_refused():
    with pytest.raises(ValueError, match="refer each to the primary"):
        CompositeLoad([DC_LOAD, HeaterLoad(6.3, 10.0)])


def test_an_empty_composite_is_refused():
    with pytest.raises(ValueError, match="members must hold at least one load"):
        CompositeLoad([])
