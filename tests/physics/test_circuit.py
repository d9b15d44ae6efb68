"""The series solver: a unit powered through a tungsten lamp from the rig."""

import csv
from pathlib import Path

import numpy as np
import pytest
from numpy.testing import assert_allclose

from shop.physics import scenarios as reference
from shop.physics.circuit import (
    bracketed_root,
    solve_bypassed,
    solve_series,
    unit_operating_point,
)
from shop.physics.lamp import Lamp, LampBank
from shop.physics.loads import ResistiveLoad

TRADE_FACTS = (
    Path(__file__).resolve().parents[2] / "fixtures" / "physics" / "checks" / ("trade_facts.csv")
)
LAMP_60 = Lamp(120.0, 60.0)
UNIT_30 = ResistiveLoad.from_rating(120.0, 30.0)


class ConstantPower:
    """A test double drawing a fixed power whatever the voltage: Z = P / I**2."""

    may_cycle = True
    rated_power = 50.0

    def impedance(self, current, frequency):
        with np.errstate(divide="ignore"):
            return (self.rated_power / np.asarray(current, dtype=float) ** 2).astype(complex)

    def scaled(self, factor):
        return self

    def describe(self):
        return {"model": "constant power", "summary": "50 W whatever the voltage"}


def _series_facts():
    with TRADE_FACTS.open(newline="") as handle:
        return [row for row in csv.DictReader(handle) if row["quantity"] == "load_voltage"]


@pytest.mark.parametrize("fact", _series_facts(), ids=lambda fact: fact["check"])
def test_a_60_w_lamp_and_500_ohm_give_the_resistor_what_the_trade_says(fact):
    # Common practice, no source (fixtures/physics/checks/trade_facts.csv): "roughly 93 V,
    # within about 10 %" through a rig of 1-3 ohm windings.
    lamp = Lamp(float(fact["lamp_voltage"]), float(fact["lamp_power"]), fill="gas")
    result = solve_series(
        lamp,
        ResistiveLoad(float(fact["load_resistance"])),
        float(fact["source_voltage"]),
        float(fact["source_resistance"]),
    )
    assert_allclose(
        result.load_voltage, float(fact["expected"]), rtol=float(fact["relative_tolerance"])
    )


def test_a_dead_short_draws_exactly_the_lamps_own_current():
    source = np.linspace(0.0, 130.0, 27)
    result = solve_series(LAMP_60, ResistiveLoad(0.0), source)
    # With no source resistance the lamp sees the whole source: equal to rounding.
    assert_allclose(result.current, LAMP_60.current(source), rtol=1e-12, atol=0)
    assert_allclose(result.load_voltage, 0.0, atol=0)


def test_a_dead_short_through_rig_windings_draws_the_lamp_current_at_the_lamp_voltage():
    result = solve_series(LAMP_60, ResistiveLoad(0.0), 120.0, source_resistance=3.0)
    # The lamp's own current at its own voltage, and the windings take the rest: rounding only.
    assert_allclose(result.current, LAMP_60.current(result.lamp_voltage), rtol=1e-12)
    assert_allclose(result.lamp_voltage + 3.0 * result.current, 120.0, rtol=1e-12)


def test_an_open_unit_draws_nothing_and_sees_the_whole_source():
    source = np.array([0.0, 60.0, 120.0])
    result = solve_series(LAMP_60, ResistiveLoad(np.inf), source, source_resistance=2.0)
    assert_allclose(result.current, 0.0, atol=0)
    assert_allclose(result.load_voltage, source, rtol=0)
    assert_allclose(result.filament_temperature, LAMP_60.ambient_temperature, rtol=0)
    assert list(result.glow) == ["dark"] * 3


def test_zero_source_volts_give_zero_current_an_ambient_filament_and_a_dark_lamp():
    result = solve_series(LAMP_60, UNIT_30, 0.0)
    assert result.current == 0.0
    assert result.load_voltage == 0.0
    assert result.filament_temperature == LAMP_60.ambient_temperature
    assert result.glow == "dark"


def test_the_solution_reproduces_the_source_voltage():
    source = np.linspace(1.0, 130.0, 50)
    result = solve_series(LAMP_60, UNIT_30, source, source_resistance=2.5)
    rebuilt = result.lamp_voltage + result.current * (2.5 + UNIT_30.resistance)
    # The solver polishes to about 1e-13 of the source; 1e-9 V is what it promises.
    assert_allclose(rebuilt, source, rtol=0, atol=1e-9)


def test_power_balances_for_a_resistive_unit():
    source = np.linspace(0.5, 130.0, 40)
    result = solve_series(LAMP_60, UNIT_30, source, source_resistance=2.0)
    supplied = source * result.current
    spent = result.lamp_power + result.load_power + result.current**2 * 2.0
    # Energy balance: source power = lamp + unit + windings to 1e-9 relative.
    assert_allclose(spent, supplied, rtol=1e-9)


@pytest.mark.parametrize("source_resistance", [0.0, 2.0])
def test_agrees_with_a_scalar_brentq_reference(source_resistance):
    source = np.linspace(2.0, 128.0, 12)
    result = solve_series(LAMP_60, UNIT_30, source, source_resistance)
    expected = [
        reference.operating_point(LAMP_60, UNIT_30.resistance, float(volts), source_resistance)
        for volts in source
    ]
    # Two independent solves of the same equations, each to about 1e-12 V: 1e-6 V is the
    # agreement the benchmark promises, with room to spare.
    assert_allclose(result.load_voltage, [point[0] for point in expected], rtol=0, atol=1e-6)
    assert_allclose(result.current, [point[1] for point in expected], rtol=1e-8)


@pytest.mark.parametrize(
    "source, shape", [(120.0, ()), ([30.0, 60.0, 90.0], (3,)), (np.full((2, 3), 50.0), (2, 3))]
)
def test_every_field_is_shaped_like_the_source_voltage(source, shape):
    result = solve_series(LAMP_60, UNIT_30, source)
    for field in (
        "source_voltage",
        "load_voltage",
        "current",
        "lamp_voltage",
        "lamp_power",
        "load_power",
        "filament_temperature",
        "glow",
    ):
        assert np.shape(getattr(result, field)) == shape, field


def test_scalar_list_and_array_input_give_the_same_numbers():
    as_list = solve_series(LAMP_60, UNIT_30, [60.0, 120.0]).load_voltage
    as_array = solve_series(LAMP_60, UNIT_30, np.array([60.0, 120.0])).load_voltage
    as_scalar = [solve_series(LAMP_60, UNIT_30, volts).load_voltage for volts in (60.0, 120.0)]
    # The same points solved alone or in a sweep converge to the same root within 1e-12 V.
    assert_allclose(as_list, as_array, rtol=0, atol=1e-12)
    assert_allclose(as_scalar, as_array, rtol=0, atol=1e-12)


def test_a_load_with_array_parameters_is_solved_for_each():
    source = np.array([40.0, 80.0, 120.0])
    both = solve_series(LAMP_60, UNIT_30.scaled(np.array([[1.0], [2.0]])), source)
    one = solve_series(LAMP_60, UNIT_30, source)
    two = solve_series(LAMP_60, UNIT_30.scaled(2.0), source)
    assert both.load_voltage.shape == (2, 3)
    # Same equations, same tolerance: agreement to 1e-10 V.
    assert_allclose(both.load_voltage, [one.load_voltage, two.load_voltage], rtol=0, atol=1e-10)


def test_a_lamp_bank_solves_as_one_lamp():
    bank = LampBank([LAMP_60, Lamp(120.0, 100.0)])
    result = solve_series(bank, ResistiveLoad(0.0), 90.0)
    # A dead short puts the source across the bank: the sum of the two lamps' currents.
    assert_allclose(result.current, bank.current(90.0), rtol=1e-12)


def test_a_reactive_unit_adds_its_drop_as_a_phasor_not_as_a_number():
    load = reference.SeriesInductance(300.0, 0.5)
    result = solve_series(LAMP_60, load, 120.0, source_resistance=2.0)
    reactance = 2 * np.pi * 60.0 * 0.5
    in_phase = result.lamp_voltage + result.current * (2.0 + 300.0)
    # Phasor sum: Vs**2 = (V_lamp + I (R_s + R))**2 + (I X)**2, to the solver's 1e-9 V.
    assert_allclose(np.hypot(in_phase, result.current * reactance), 120.0, rtol=0, atol=1e-9)
    # The RMS numbers do not add up to the source: they are out of phase.
    assert result.lamp_voltage + result.load_voltage > 120.0 + 1.0


def test_a_reactive_unit_balances_real_power():
    load = reference.SeriesInductance(300.0, 0.5)
    result = solve_series(LAMP_60, load, 120.0, source_resistance=2.0)
    real_supplied = result.current * (result.lamp_voltage + result.current * (2.0 + 300.0))
    spent = result.lamp_power + result.load_power + result.current**2 * 2.0
    # Real power: the in-phase part of the source; 1e-9 relative as for resistors.
    assert_allclose(spent, real_supplied, rtol=1e-9)
    assert result.load_power < result.load_voltage * result.current


def test_a_load_without_a_unique_operating_point_is_refused():
    with pytest.raises(ValueError, match="no unique operating point"):
        solve_series(LAMP_60, ConstantPower(), 120.0)


def test_a_source_voltage_beyond_the_lamp_table_is_refused_by_name():
    with pytest.raises(ValueError, match="source_voltage 400 V is beyond"):
        solve_series(LAMP_60, ResistiveLoad(0.0), [100.0, 400.0])


@pytest.mark.parametrize(
    "source, message",
    [
        (-3.0, "source_voltage must not be negative"),
        ([10.0, np.nan], "source_voltage must be a number of volts, not NaN"),
        (np.inf, "source_voltage must be finite"),
    ],
)
def test_non_physical_source_voltage_is_refused_by_name(source, message):
    with pytest.raises(ValueError, match=message):
        solve_series(LAMP_60, UNIT_30, source)


@pytest.mark.parametrize("resistance", [-1.0, np.nan, np.inf])
def test_non_physical_source_resistance_is_refused_by_name(resistance):
    with pytest.raises(ValueError, match="source_resistance"):
        solve_series(LAMP_60, UNIT_30, 120.0, source_resistance=resistance)


@pytest.mark.parametrize("frequency", [0.0, -60.0, np.nan])
def test_non_physical_frequency_is_refused_by_name(frequency):
    with pytest.raises(ValueError, match="frequency"):
        solve_series(LAMP_60, UNIT_30, 120.0, frequency=frequency)


def test_an_object_outside_the_load_protocol_is_refused_by_name():
    with pytest.raises(ValueError, match="load must follow the load protocol"):
        solve_series(LAMP_60, 500.0, 120.0)


def test_with_the_lamp_bypassed_the_unit_sits_on_the_source_through_the_windings():
    source = np.array([0.0, 60.0, 120.0])
    result = solve_bypassed(LAMP_60, UNIT_30, source, source_resistance=2.0)
    # Ohm's law: I = Vs / (R + R_s); the solver's tolerance is far below 1e-12 relative.
    assert_allclose(result.current, source / (480.0 + 2.0), rtol=1e-12)
    assert_allclose(result.lamp_voltage, 0.0, atol=0)
    assert list(result.glow) == ["dark"] * 3


def test_bypassing_the_lamp_on_a_dead_short_with_no_windings_is_refused():
    with pytest.raises(ValueError, match="source_resistance must be positive"):
        solve_bypassed(LAMP_60, ResistiveLoad(0.0), 120.0)


def test_unit_operating_point_matches_solve_series():
    source = np.array([30.0, 90.0])
    volts, amps = unit_operating_point(LAMP_60, UNIT_30, source, 2.0)
    result = solve_series(LAMP_60, UNIT_30, source, 2.0)
    # The same solution without the glow: identical numbers.
    assert_allclose(volts, result.load_voltage, rtol=0)
    assert_allclose(amps, result.current, rtol=0)


def test_bracketed_root_finds_every_root_at_once():
    targets = np.array([0.5, 2.0, 7.0, 26.0])
    roots, residual = bracketed_root(
        lambda x: x**3 - targets, np.zeros(4), np.full(4, 3.0), -targets, 27.0 - targets, 1e-14
    )
    # Cube roots, each to the tolerance asked for (1e-14 on x**3 near 1-26: about 1e-15 in x).
    assert_allclose(roots, np.cbrt(targets), rtol=1e-13)
    assert np.all(np.abs(residual) <= 1e-14)


def test_bracketed_root_accepts_a_root_at_a_bracket_end():
    roots, _ = bracketed_root(
        lambda x: x - 1.0, np.array([1.0]), np.array([2.0]), np.array([0.0]), np.array([1.0]), 1e-15
    )
    assert roots[0] == 1.0
