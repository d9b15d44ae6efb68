"""Solving many readings at once: the same answers as one at a time, without big tables.

A power-up test may hold 10,000 readings; the judgement solves each of them at a draw of
its own. These tests show that the paths taken for many readings agree with the plain ones.
"""

import numpy as np
import pytest
from numpy.testing import assert_allclose, assert_array_equal

from shop.physics import circuit, judgement
from shop.physics.circuit import solve_series
from shop.physics.composite import CompositeLoad
from shop.physics.glow import _class_thresholds, glow_class, glow_class_of_lamp
from shop.physics.heater import HeaterLoad
from shop.physics.judgement import Reading, judge
from shop.physics.lamp import Lamp, LampBank
from shop.physics.loads import ResistiveLoad
from shop.physics.transformer import TransformerLoad

LAMP_60 = Lamp(120.0, 60.0)
UNIT_60 = ResistiveLoad.from_rating(120.0, 60.0)
VALVE_SET = CompositeLoad(
    [HeaterLoad(120.0, 22.0), ResistiveLoad.from_rating(120.0, 40.0), TransformerLoad(120.0, 80.0)]
)
WIDE = circuit.NARROW_LOAD_COLUMNS * 5  # readings, each with its own draw: the wide path


def one_draw_per_reading(count, seed=4):
    rng = np.random.default_rng(seed)
    factors = np.geomspace(1e-3, 1e3, count)
    sources = rng.uniform(0.0, 125.0, count)
    return factors, sources


@pytest.mark.parametrize("load", [UNIT_60, VALVE_SET], ids=["resistive", "composite"])
@pytest.mark.parametrize("lamp", [LAMP_60, LampBank([Lamp(120.0, 40.0), Lamp(120.0, 25.0)])])
def test_a_draw_per_reading_solves_as_each_reading_alone(lamp, load):
    factors, sources = one_draw_per_reading(WIDE)
    together = solve_series(lamp, load.scaled(factors), sources, source_resistance=2.0)
    # Each alone: one load column, so the whole-curve table and searchsorted.
    alone = [
        solve_series(lamp, load.scaled(factor), source, source_resistance=2.0)
        for factor, source in zip(factors[::17], sources[::17], strict=True)
    ]
    assert_allclose(
        together.load_voltage[::17], [one.load_voltage for one in alone], rtol=0, atol=1e-9
    )
    assert_allclose(together.current[::17], [one.current for one in alone], rtol=1e-12, atol=0)
    assert_array_equal(together.glow[::17], [one.glow for one in alone])
    # The solution holds: the phasor sum of the drops is the source (to the solver's 1e-9 V).
    impedance = load.scaled(factors).impedance(together.current, 60.0)
    source = np.abs(together.lamp_voltage + together.current * (2.0 + impedance))
    assert np.all(np.abs(source - sources) <= 1e-9 * np.maximum(sources, 1.0))


class ConstantPower:
    """A test double drawing a fixed power whatever the voltage: Z = P / I**2."""

    may_cycle = True

    def __init__(self, power):
        self.rated_power = np.asarray(power, dtype=float)

    def impedance(self, current, frequency):
        with np.errstate(divide="ignore"):
            return (self.rated_power / np.asarray(current, dtype=float) ** 2).astype(complex)

    def scaled(self, factor):
        return ConstantPower(self.rated_power * factor)

    def describe(self):
        return {"model": "constant power", "summary": "", "parameters": {}}


def test_many_loads_whose_volts_fall_are_still_refused():
    factors, sources = one_draw_per_reading(WIDE)
    with pytest.raises(ValueError, match="no unique operating point"):
        solve_series(LAMP_60, ConstantPower(50.0 * factors), sources)


def test_a_source_beyond_the_table_is_refused_by_name_among_many_loads():
    factors, sources = one_draw_per_reading(WIDE)
    sources[-3] = 900.0  # a heavy draw: the table ends well below
    with pytest.raises(ValueError, match="source_voltage 900 V is beyond"):
        solve_series(LAMP_60, UNIT_60.scaled(factors), sources)


def test_the_temperature_read_from_the_curve_keeps_the_power_balance():
    voltage = np.linspace(0.0, LAMP_60.max_voltage, 20_001)
    temperature = LAMP_60.filament_temperature(voltage)
    balance = LAMP_60.power_loss(temperature) * LAMP_60.resistance_at_temperature(temperature)
    # P_loss(T) R(T) = V^2: the heat the filament loses is what the voltage puts in. From
    # 1 % of rated volts up (below, a float temperature near ambient cannot carry 1e-10).
    above = voltage > 1.2
    assert_allclose(balance[above], voltage[above] ** 2, rtol=1e-10)
    newton = LAMP_60._filament_temperature_by_newton(voltage)
    assert np.max(np.abs(temperature - newton)) < 1e-8  # [K]


def test_judging_with_the_curve_temperature_moves_no_prediction_by_a_microvolt(monkeypatch):
    """The same readings judged with the temperature read from the curve and by Newton."""
    readings = [
        Reading(float(volts), float(round(0.55 * volts, 1)))
        for volts in np.linspace(5.0, 125.0, 25)
    ]

    def figures():
        verdict = judge(
            LAMP_60, VALVE_SET, readings, nominal_source_voltage=120.0, source_resistance=2.0
        )
        return verdict, np.array(
            [
                (item.predicted_load_voltage, item.load_voltage_low, item.load_voltage_high)
                for item in verdict.readings
            ]
        )

    curve_verdict, curve = figures()
    monkeypatch.setattr(Lamp, "filament_temperature", Lamp._filament_temperature_by_newton)
    newton_verdict, newton = figures()
    assert np.max(np.abs(curve - newton)) < 1e-8  # [V]
    assert curve_verdict.outcome == newton_verdict.outcome
    assert curve_verdict.codes == newton_verdict.codes


@pytest.mark.parametrize("rated", [850.0, 2400.0, 2775.0, 3300.0])
def test_glow_classes_from_thresholds_match_the_spectral_sum(rated):
    thresholds = _class_thresholds(rated)
    # Every threshold and the fifty floats either side of it, and a dense sweep.
    near = [t + np.arange(-50, 51) * np.spacing(t) for t in thresholds]
    temperature = np.concatenate([np.linspace(300.0, 3600.0, 50_001), *near])
    assert_array_equal(glow_class_of_lamp(temperature, rated), glow_class(temperature, rated))


def test_ten_thousand_readings_are_judged_with_one_draw_each():
    """The largest test allowed: every reading gets its judgement, in order."""
    sources = np.linspace(5.0, 125.0, 10_000)
    readings = [Reading(float(v), float(round(0.5 * v, 1))) for v in sources]
    verdict = judge(LAMP_60, UNIT_60, readings, nominal_source_voltage=120.0)
    assert [item.index for item in verdict.readings] == list(range(10_000))
    few = judge(LAMP_60, UNIT_60, readings[::1000], nominal_source_voltage=120.0)
    assert_allclose(
        [item.predicted_load_voltage for item in verdict.readings[::1000]],
        [item.predicted_load_voltage for item in few.readings],
        rtol=0,
        atol=1e-9,
    )
    assert_allclose(
        [item.inferred_draw for item in verdict.readings[::1000]],
        [item.inferred_draw for item in few.readings],
        rtol=1e-6,
    )


def test_the_judgement_module_is_untouched_by_the_wide_path():
    # The draw inference's residual solves one draw per reading: past the narrow limit.
    assert judgement.DRAW_SEARCH_POINTS + 2 <= circuit.NARROW_LOAD_COLUMNS
