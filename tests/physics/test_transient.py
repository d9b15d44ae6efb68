"""Switch-on transients: the filament's heating, cold heaters, reservoirs and core inrush."""

import csv

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy.integrate import solve_ivp

from shop.physics import transient
from shop.physics.circuit import solve_series
from shop.physics.lamp import Lamp, LampBank
from shop.physics.loads import ResistiveLoad
from shop.physics.materials import DATA_DIRECTORY
from shop.physics.nameplate import unit_load_from_nameplate
from shop.physics.rectifier import RectifierLoad
from shop.physics.switch_mode import ConstantPowerLoad
from shop.physics.transformer import TransformerLoad
from shop.physics.transient import FLASH_THEN_DIMS, STEADY, switch_on

with open(DATA_DIRECTORY / "checks" / "load_reference.csv", newline="") as handle:
    REFERENCE = {row["name"]: float(row["value"]) for row in csv.DictReader(handle)}

LAMP_100 = Lamp(120.0, 100.0)
SHORT = ResistiveLoad(0.0)


def test_a_lamp_switched_at_the_crest_meets_it_with_its_cold_resistance():
    result = switch_on(LAMP_100, SHORT, 120.0, phase=90.0, duration=0.1)
    expected = np.sqrt(2) * 120.0 / LAMP_100.cold_resistance
    # The first sample is the crest across the cold filament: rounding only.
    assert_allclose(result.inrush_peak, expected, rtol=1e-12)


def test_the_inrush_is_about_root_2_times_the_resistance_ratio_times_rated_current():
    result = switch_on(LAMP_100, SHORT, 120.0, phase=90.0, duration=0.1)
    ratio = LAMP_100.hot_resistance / LAMP_100.cold_resistance
    # The textbook rule for the lamp alone switched at the crest: exact with no rig resistance.
    assert_allclose(result.inrush_peak, np.sqrt(2) * ratio * 100.0 / 120.0, rtol=1e-12)


@pytest.mark.parametrize("rig", [1.0, 3.0])
def test_through_a_bench_rig_the_inrush_is_the_published_multiple_of_rated_current(rig):
    result = switch_on(LAMP_100, SHORT, 120.0, source_resistance=rig, duration=0.1)
    multiple = float(result.inrush_peak) / (np.sqrt(2) * 100.0 / 120.0)
    # From memory (fixtures/physics/checks/load_reference.csv): roughly 10-15x rated current.
    assert REFERENCE["lamp_inrush_ratio_low"] <= multiple <= REFERENCE["lamp_inrush_ratio_high"]


def test_a_100_w_lamp_settles_within_about_a_tenth_of_a_second():
    result = switch_on(LAMP_100, SHORT, 120.0, duration=0.5)
    # From memory: "within about 0.1 s"; "about" allows a fifth more.
    assert 0.0 < float(result.settle_time) <= 1.2 * REFERENCE["lamp_settle_time"]


def test_the_filament_heating_agrees_with_scipy_solve_ivp():
    lamp, resistor = Lamp(120.0, 60.0), 200.0

    def heating(time, temperature):
        resistance = float(lamp.resistance_at_temperature(temperature[0]))
        current = (
            np.sqrt(2)
            * 120.0
            * np.sin(2 * np.pi * 60.0 * time + np.pi / 2)
            / (resistance + resistor)
        )
        power = current**2 * resistance - float(lamp.power_loss(temperature[0]))
        return [power / float(lamp.heat_capacity(temperature[0]))]

    # The lamp's own functions (not the transient's tables), scipy's adaptive RK45.
    reference = solve_ivp(
        heating, (0.0, 0.3), [300.0], rtol=1e-11, atol=1e-9, max_step=2e-4, dense_output=True
    )
    result = switch_on(lamp, ResistiveLoad(resistor), 120.0, duration=0.3)
    for half in (5, 20, 35):
        # The hottest point of a half cycle, sampled as the transient samples it (16 steps).
        times = result.time[half] - np.arange(16) / 16 / 120.0
        hottest = reference.sol(times)[0].max()
        # The tables and 32 RK4 steps a cycle against scipy's tight tolerances: about
        # 1e-3 K here; within 0.05 K of 500-2300 K.
        assert_allclose(result.filament_temperature[half], hottest, atol=0.05)


def test_a_lamp_and_resistor_settle_onto_their_steady_state():
    result = switch_on(Lamp(120.0, 60.0), ResistiveLoad(200.0), 120.0, duration=0.6)
    steady = solve_series(Lamp(120.0, 60.0), ResistiveLoad(200.0), 120.0)
    # Settled after 0.6 s: the last half cycle's RMS current within 1e-3 of steady state.
    assert_allclose(result.current[-1], steady.current, rtol=1e-3)


def test_a_finer_step_does_not_move_the_settled_current():
    coarse = switch_on(LAMP_100, ResistiveLoad(150.0), 120.0, duration=0.3)
    saved = transient.STEPS_PER_CYCLE
    transient.STEPS_PER_CYCLE = 4 * saved
    try:
        fine = switch_on(LAMP_100, ResistiveLoad(150.0), 120.0, duration=0.3)
    finally:
        transient.STEPS_PER_CYCLE = saved
    # After the first cycle the half-cycle RMS currents agree to about 1e-4.
    assert_allclose(coarse.current[2:], fine.current[2:], rtol=1e-3)
    assert_allclose(coarse.inrush_peak, fine.inrush_peak, rtol=1e-12)  # the crest at t = 0


# The demo shop's 1954 valve radio as its nameplate models it (fixtures/demo/intake.json).
RADIO = unit_load_from_nameplate(
    rated_voltage=120.0,
    rated_power=65.0,
    category="radio",
    construction="isolating_transformer",
    rated_frequency=60.0,
    year=1954,
)


def test_a_resistive_unit_glows_steadily_but_a_valve_set_flashes_then_dims():
    radio = RADIO
    resistive = switch_on(LAMP_100, ResistiveLoad.from_rating(120.0, 65.0), 120.0, duration=0.5)
    valve_set = switch_on(LAMP_100, radio, 120.0, source_resistance=2.0, duration=0.5)
    assert resistive.behaviour == STEADY
    assert valve_set.behaviour == FLASH_THEN_DIMS
    # Cold heaters draw more: the valve set's current is above its steady state all along.
    assert (valve_set.current > valve_set.steady_current).all()


def test_a_discharged_reservoir_draws_a_charging_surge():
    supply = RectifierLoad(120.0, 1000e-6, dc_resistance=200.0)
    result = switch_on(LAMP_100, supply, 120.0, source_resistance=2.0, phase=0.0, duration=0.5)
    steady = solve_series(LAMP_100, supply, 120.0, 2.0)
    assert float(result.peak_current[0]) > 1.2 * float(steady.peak_current)


def test_a_toroid_bypassing_the_lamp_draws_a_larger_core_inrush_than_laminations():
    peaks = {}
    for core in ("ei", "toroid"):
        transformer = TransformerLoad(230.0, 300.0, rated_frequency=50.0, core=core)
        result = switch_on(
            Lamp(230.0, 100.0),
            transformer,
            230.0,
            source_resistance=4.0,
            frequency=50.0,
            phase=0.0,
            duration=0.1,
            lamp_bypassed=True,
        )
        peaks[core] = float(result.inrush_peak)
    assert peaks["toroid"] > peaks["ei"]


def test_the_lamp_tames_a_core_inrush():
    transformer = TransformerLoad(230.0, 300.0, rated_frequency=50.0, core="toroid")
    options = {"source_resistance": 4.0, "frequency": 50.0, "phase": 0.0, "duration": 0.1}
    through_lamp = switch_on(Lamp(230.0, 100.0), transformer, 230.0, **options)
    bypassed = switch_on(Lamp(230.0, 100.0), transformer, 230.0, lamp_bypassed=True, **options)
    cold = Lamp(230.0, 100.0).cold_resistance
    assert float(through_lamp.inrush_peak) <= np.sqrt(2) * 230.0 / (cold + 4.0)
    assert float(through_lamp.inrush_peak) < 0.5 * float(bypassed.inrush_peak)


def test_a_bank_of_lamps_heats_each_filament_by_its_own_share():
    bank = LampBank([Lamp(120.0, 60.0), Lamp(120.0, 100.0)])
    result = switch_on(bank, SHORT, 120.0, duration=0.3)
    steady = solve_series(bank, SHORT, 120.0)
    # The sum of both lamps' currents settles to the bank's steady current.
    assert_allclose(result.current[-1], steady.current, rtol=2e-3)


def test_every_source_voltage_is_a_column():
    result = switch_on(LAMP_100, ResistiveLoad([[300.0], [150.0]]), [60.0, 120.0], duration=0.1)
    assert result.current.shape == (result.time.size, 2, 2)
    assert result.inrush_peak.shape == (2, 2)
    assert (result.inrush_peak[:, 1] > result.inrush_peak[:, 0]).all()


def test_a_constant_power_input_is_switched_on_through_its_own_model():
    from shop.physics.switch_mode_start import SwitchModeTransient, switch_mode_switch_on

    load = ConstantPowerLoad(20.0)
    result = switch_on(LAMP_100, load, 120.0, duration=0.5)
    assert isinstance(result, SwitchModeTransient)
    alone = switch_mode_switch_on(LAMP_100, load, 120.0, duration=0.5)
    assert_allclose(result.current, alone.current)
    assert result.behaviour == alone.behaviour


def test_follow_time_covers_a_valve_set_warming_and_a_switch_mode_unit_restarting():
    from shop.physics.transient import (
        QUICK_FOLLOW,
        SLOW_SPANS,
        SWITCH_MODE_FOLLOW,
        follow_time,
    )

    radio = RADIO
    # Its heaters and valve rectifier both take 10 s (the nameplate's defaults).
    assert follow_time(radio) == SLOW_SPANS * 10.0
    assert follow_time(ResistiveLoad(100.0)) == QUICK_FOLLOW
    assert follow_time(ConstantPowerLoad(5.0)) == SWITCH_MODE_FOLLOW
    # A valve rectifier alone (no heaters for the slow phase) is not followed cycle by cycle
    # through its 10 s warm-up.
    lone = RectifierLoad(
        120.0, 40e-6, topology="centre_tap", dc_resistance=5000.0, rectifier="valve"
    )
    assert lone.warm_up_time == 10.0
    assert follow_time(lone) == transient.SLOW_PHASE_AFTER
    # Followed that long through a 100 W lamp, the radio settles inside it (tests/physics/
    # test_warm_up.py measures about 19 s at 120 V), and so does a guitar amplifier with its
    # output valves pulled, whose heaters are most of its draw.
    result = switch_on(LAMP_100, radio, 120.0, duration=follow_time(radio), remanence=False)
    assert float(result.settle_time) < follow_time(radio)
    pulled = unit_load_from_nameplate(
        rated_voltage=230.0,
        rated_power=120.0,
        category="instrument_amplifier",
        construction="isolating_transformer",
        year=1968,
        rated_frequency=50.0,
        valves_pulled=True,
    )
    result = switch_on(
        Lamp(230.0, 60.0), pulled, [180.0, 230.0], frequency=50.0, duration=follow_time(pulled)
    )
    assert (result.settle_time < follow_time(pulled)).all()
