"""Switching a switch-mode input on: reservoir charging, starting, running, cycling."""

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy.integrate import solve_ivp

from shop.physics import switch_mode_start
from shop.physics.judgement import lamp_with_spread
from shop.physics.lamp import Lamp, LampBank
from shop.physics.loads import ResistiveLoad
from shop.physics.switch_mode import RESERVOIR_PER_WATT, ConstantPowerLoad
from shop.physics.switch_mode_start import (
    BRIDGE_DROP,
    BRIDGE_RESISTANCE,
    CYCLING,
    DOES_NOT_START,
    SwitchModeTransient,
    switch_mode_switch_on,
)
from shop.physics.transient import FLASH_THEN_DIMS, SwitchOnTransient

LAMP_40 = Lamp(230.0, 40.0)
LAMP_25 = Lamp(230.0, 25.0)
# A universal-input (100-240 V) adapter idling at 4.5 W: starts at 80 V, stops below 70 V.
ADAPTER = ConstantPowerLoad(4.5, rated_voltage=100.0)
# A 90 W unit of the same input, far beyond what a 25 W lamp passes.
LAPTOP = ConstantPowerLoad(90.0, rated_voltage=100.0)


def _reference(lamp, load, source, *, rig, frequency, phase, duration):
    """The same circuit by scipy's LSODA at tight tolerances, one column, the lamp's own
    functions (not the thermal tables): RMS current and mean reservoir per half cycle.

    The reservoir crossing the start and stop levels are events of the integration; the start
    delay is a stretch of time between them.
    """
    amplitude, omega = np.sqrt(2) * source, 2 * np.pi * frequency
    start_level, stop_level = np.sqrt(2) * load.start_voltage, np.sqrt(2) * load.stop_voltage
    capacitance, power = load.reservoir, load.power

    def filament(temperature):
        # The solver may probe a hair below ambient, where the tables end.
        return float(np.clip(temperature, lamp.ambient_temperature, 3600.0))

    def path(time, reservoir, temperature):
        level = amplitude * abs(np.sin(omega * time + np.radians(phase))) - BRIDGE_DROP
        loop = rig + float(lamp.resistance_at_temperature(filament(temperature)))
        loop += BRIDGE_RESISTANCE
        return max(level - reservoir, 0.0) / loop

    def rates(running):
        def derivative(time, state):
            reservoir, temperature = state[0], filament(state[1])
            current = path(time, reservoir, temperature)
            lamp_power = current**2 * float(lamp.resistance_at_temperature(temperature))
            heat = (lamp_power - float(lamp.power_loss(temperature))) / float(
                lamp.heat_capacity(temperature)
            )
            draw = power / reservoir if running else 0.0
            # States: reservoir, filament, and the integrals of i^2 and of the reservoir.
            return [(current - draw) / capacitance, heat, current**2, reservoir]

        return derivative

    def crossing(level, direction):
        def event(time, state):
            return state[0] - level

        event.terminal, event.direction = True, direction
        return event

    half = 0.5 / frequency
    ends = half * np.arange(1, int(round(duration / half)) + 1)
    # Modes: off until the reservoir rises through the start level, then waiting out the
    # start delay (back to off if it falls below first), then running until it falls
    # through the stop level.
    state, time, mode, ready_at = [0.0, lamp.ambient_temperature, 0.0, 0.0], 0.0, "off", None
    samples = []
    while time < ends[-1]:
        until, event = (
            ends[-1],
            {
                "off": crossing(start_level, 1),
                "waiting": crossing(start_level, -1),
                "running": crossing(stop_level, -1),
            }[mode],
        )
        if mode == "waiting":
            until = min(until, ready_at)
        solution = solve_ivp(
            rates(mode == "running"),
            (time, until),
            state,
            method="LSODA",
            rtol=1e-9,
            atol=[1e-7, 1e-6, 1e-12, 1e-9],
            max_step=5e-5,
            events=event,
            dense_output=True,
        )
        inside = ends[(ends > time) & (ends <= solution.t[-1])]
        if inside.size:
            samples.extend(solution.sol(inside).T)
        time, state = solution.t[-1], solution.y[:, -1]
        if solution.status == 1:  # the event: the reservoir crossed the mode's level
            mode, ready_at = (
                ("waiting", time + load.start_delay) if mode == "off" else ("off", None)
            )
        elif mode == "waiting" and time >= ready_at:
            mode = "running"
    samples = np.array(samples)
    squared = np.diff(np.concatenate([[0.0], samples[:, 2]])) / half
    reservoir = np.diff(np.concatenate([[0.0], samples[:, 3]])) / half
    return np.sqrt(squared), reservoir


@pytest.mark.parametrize(
    ("lamp", "load", "source", "phase", "duration", "restarts"),
    [
        # Charges, waits 50 ms, starts and runs on.
        (Lamp(120.0, 60.0), ConstantPowerLoad(20.0, start_delay=0.05), 120.0, 0.0, 0.3, 0),
        # Charges through a small lamp, starts, collapses, recharges, starts again...
        (
            LAMP_25,
            ConstantPowerLoad(60.0, rated_voltage=100.0, start_delay=0.1),
            230.0,
            90.0,
            0.5,
            2,
        ),
    ],
    ids=["runs", "cycles"],
)
def test_the_switch_on_agrees_with_scipy_lsoda_on_the_same_equations(
    lamp, load, source, phase, duration, restarts
):
    frequency, rig = 60.0, 1.0
    current, reservoir = _reference(
        lamp, load, source, rig=rig, frequency=frequency, phase=phase, duration=duration
    )
    result = switch_mode_switch_on(
        lamp,
        load,
        source,
        source_resistance=rig,
        frequency=frequency,
        phase=phase,
        duration=duration,
    )
    # scipy's LSODA at rtol 1e-9 with the lamp's own functions (not the transient's tables)
    # and the converter's events found exactly: every half cycle's RMS current and mean
    # reservoir within 1 % (seen: 0.55 % and 0.22 % where it runs, 0.10 % and 0.16 % where
    # it cycles, the largest where the converter starts within a half cycle).
    assert result.current.shape == current.shape
    assert_allclose(result.current, current, rtol=0.01)
    assert_allclose(result.reservoir_voltage, reservoir, rtol=0.01)
    assert result.restarts == restarts


def test_a_healthy_adapter_starts_runs_steadily_and_its_lamp_flashes_then_dims():
    result = switch_mode_switch_on(LAMP_40, ADAPTER, 230.0, frequency=50.0, duration=1.0)
    assert isinstance(result, SwitchOnTransient)
    assert result.behaviour == FLASH_THEN_DIMS
    assert result.restarts == 0
    assert np.isnan(result.cycle_period)
    assert 0.0 < result.settle_time < 1.0
    assert result.steady_glow == result.glow[-1]
    # Its input power is its own 4.5 W and the bridge's losses: within 2 % of declared.
    assert_allclose(result.load_power[-2:], 4.5, rtol=0.02)
    assert (result.load_power[-2:] > 4.5).all()
    # The reservoir: the unit's crest less the bridge, less half the ripple of a full-wave
    # capacitor input, I / (2 f C) peak to peak (Horowitz and Hill, The Art of Electronics,
    # section 1.5 on ripple, from memory). The crest is taken as sqrt(2) times the unit's RMS
    # volts, which the flattened top of its waveform makes a little high: within 2 %.
    volts = float(result.reservoir_voltage[-1])
    ripple = 4.5 / volts / (2 * 50.0 * ADAPTER.reservoir)
    expected = np.sqrt(2) * float(result.load_voltage[-1]) - BRIDGE_DROP - ripple / 2
    assert_allclose(volts, expected, rtol=0.02)


def test_the_adapters_peaky_input_draws_more_current_than_its_power_over_the_volts():
    result = switch_mode_switch_on(LAMP_40, ADAPTER, 230.0, frequency=50.0, duration=1.0)
    # A capacitor input's current comes in pulses near the crest: its RMS current is well
    # above P / V, and its crest factor well above a sine's sqrt(2).
    assert float(result.steady_current) > 1.5 * 4.5 / float(result.load_voltage[-1])
    assert float(result.peak_current[-1] / result.steady_current) > 2.0


def test_a_unit_drawing_far_more_than_a_small_lamp_passes_cycles():
    result = switch_mode_switch_on(LAMP_25, LAPTOP, 230.0, frequency=50.0, duration=2.0)
    assert result.behaviour == CYCLING
    assert result.restarts > 1
    assert np.isnan(result.steady_current) and np.isnan(result.settle_time)
    assert result.steady_glow == ""
    # Each cycle is the controller's start delay, then the converter pulling the reservoir
    # (charged through the lamp meanwhile) down to its stop level in a few tens of ms: a
    # period of tenths of a second (the plausible range of a blinking lamp, from memory).
    assert LAPTOP.start_delay < float(result.cycle_period) < 3.0 * LAPTOP.start_delay
    # The glow follows: the filament swings by hundreds of kelvin over each cycle.
    last_second = result.filament_temperature[result.time > 1.0]
    assert np.ptp(last_second) > 200.0


def test_without_a_start_delay_it_cycles_faster_through_the_reservoir_alone():
    eager = ConstantPowerLoad(90.0, rated_voltage=100.0, start_delay=0.0)
    result = switch_mode_switch_on(LAMP_25, eager, 230.0, frequency=50.0, duration=1.0)
    delayed = switch_mode_switch_on(LAMP_25, LAPTOP, 230.0, frequency=50.0, duration=1.0)
    assert result.behaviour == CYCLING
    # Recharging across the start-stop band through the hot lamp takes a cycle or two.
    assert 0.0 < float(result.cycle_period) < float(delayed.cycle_period)


def test_below_its_start_threshold_it_does_not_start_and_draws_nothing_once_charged():
    result = switch_mode_switch_on(LAMP_40, ADAPTER, 60.0, frequency=50.0, duration=0.5)
    assert result.behaviour == DOES_NOT_START
    assert result.restarts == 0
    assert np.isnan(result.steady_current) and result.steady_glow == ""
    # The reservoir creeps up to the crest less the bridge's drop (each crest tops it up
    # through the lamp a little less) and the current dies away with nothing drawn.
    assert_allclose(result.reservoir_voltage[-1], np.sqrt(2) * 60.0 - BRIDGE_DROP, rtol=1e-3)
    assert (np.diff(result.current) < 0).all()
    assert result.current[-1] < 1e-3 * result.current[0]
    assert result.load_power[-1] < 1e-3 * result.load_power[0]


def test_bypassed_the_first_charging_peak_is_the_crest_over_the_loop_resistance():
    rig = 0.5  # [ohm]
    held_off = ConstantPowerLoad(4.5, rated_voltage=300.0)  # starts at 240 V: never here
    result = switch_mode_switch_on(
        LAMP_40,
        held_off,
        230.0,
        source_resistance=rig,
        frequency=50.0,
        lamp_bypassed=True,
        duration=0.1,
    )
    crest, loop = np.sqrt(2) * 230.0, rig + BRIDGE_RESISTANCE
    # A capacitor charged from zero through a resistance from a step of V: i = V/R e^(-t/RC)
    # (any circuits text; the RC charging law): at the crest the surge is at most V / R, and
    # here within 1 % of it (the bridge's 1.8 V).
    assert float(result.inrush_peak) <= crest / loop
    assert_allclose(result.inrush_peak, crest / loop, rtol=0.01)
    # Its energy lost in the resistance is C V^2 / 2 whatever R (the same law), so the first
    # half cycle's RMS current is sqrt(C V^2 / (2 R) / half period); the source barely moves
    # in the few RC = 4 us of the surge.
    capacitance, half = held_off.reservoir, 0.5 / 50.0
    expected = np.sqrt(capacitance * (crest - BRIDGE_DROP) ** 2 / (2 * loop) / half)
    assert_allclose(result.current[0], expected, rtol=0.01)
    assert_allclose(result.reservoir_voltage[-1], crest - BRIDGE_DROP, rtol=1e-6)


def test_outputs_broadcast_source_columns_against_draw_factors():
    sources = np.array([[120.0], [230.0]])
    loads = ADAPTER.scaled(np.array([[0.0, 1.0, 3.0]]))
    result = switch_mode_switch_on(LAMP_40, loads, sources, frequency=50.0, duration=0.2)
    halves = result.time.size
    assert result.current.shape == (halves, 2, 3)
    assert result.glow.shape == (halves, 2, 3)
    for name in ("inrush_peak", "steady_current", "behaviour", "restarts", "cycle_period"):
        assert getattr(result, name).shape == (2, 3)
    # No copies draw nothing; each column is the run of its own source and factor, but for
    # where the columns together split a step (about 3e-4 here).
    assert (result.current[:, :, 0] == 0.0).all()
    one = switch_mode_switch_on(LAMP_40, ADAPTER.scaled(3.0), 120.0, frequency=50.0, duration=0.2)
    assert_allclose(result.current[:, 0, 2], one.current, rtol=2e-3)


def test_a_bank_of_two_alike_lamps_is_one_lamp_spread_to_twice_its_current():
    bank = LampBank([LAMP_25, LAMP_25])
    spread = lamp_with_spread(LAMP_25, 2.0)
    options = {"frequency": 50.0, "duration": 0.3}
    by_bank = switch_mode_switch_on(bank, LAPTOP, 230.0, **options)
    by_spread = switch_mode_switch_on(spread, LAPTOP, 230.0, **options)
    # The bank's two tables against the spread lamp's one: rounding only.
    assert_allclose(by_bank.current, by_spread.current, rtol=1e-6)
    assert_allclose(by_bank.filament_temperature, by_spread.filament_temperature, rtol=1e-6)


def test_a_finer_step_does_not_move_the_figures():
    options = {"source_resistance": 1.0, "frequency": 50.0, "duration": 0.4}
    coarse = switch_mode_switch_on(LAMP_25, LAPTOP, 230.0, **options)
    saved = switch_mode_start.STEPS_PER_CYCLE
    switch_mode_start.STEPS_PER_CYCLE = 4 * saved
    try:
        fine = switch_mode_switch_on(LAMP_25, LAPTOP, 230.0, **options)
    finally:
        switch_mode_start.STEPS_PER_CYCLE = saved
    assert_allclose(coarse.current, fine.current, rtol=0.005)
    assert_allclose(coarse.reservoir_voltage, fine.reservoir_voltage, rtol=0.005)
    assert_allclose(coarse.filament_temperature, fine.filament_temperature, rtol=0.005)


def test_the_result_is_a_switch_on_transient_with_the_switch_mode_figures():
    result = switch_mode_switch_on(LAMP_40, ADAPTER, 120.0, duration=0.1)
    assert isinstance(result, SwitchModeTransient)
    assert result.at(0.05) == np.searchsorted(result.time, 0.05)
    assert result.time.size == 12  # 0.1 s at 60 Hz


def test_the_reservoir_defaults_to_its_share_per_watt_and_may_be_given():
    # 1-2 uF per watt for a universal input (common practice, no source).
    assert ADAPTER.reservoir == pytest.approx(RESERVOIR_PER_WATT * 4.5)
    given = ConstantPowerLoad(4.5, reservoir=22e-6, start_delay=0.5)
    assert given.reservoir == 22e-6 and given.start_delay == 0.5
    assert given.describe()["parameters"]["reservoir"] == {"value": 22e-6, "unit": "F"}
    assert "reservoir" not in ADAPTER.describe()["parameters"]
    with pytest.raises(ValueError, match="reservoir"):
        ConstantPowerLoad(4.5, reservoir=-1e-6)
    with pytest.raises(ValueError, match="start_delay"):
        ConstantPowerLoad(4.5, start_delay=-0.1)


def test_refusals_name_what_is_wrong():
    with pytest.raises(ValueError, match="ConstantPowerLoad"):
        switch_mode_switch_on(LAMP_40, ResistiveLoad(100.0), 120.0)
    with pytest.raises(ValueError, match="factor must be finite"):
        switch_mode_switch_on(LAMP_40, ADAPTER.scaled(np.inf), 120.0)
    with pytest.raises(ValueError, match="source_voltage"):
        switch_mode_switch_on(LAMP_40, ADAPTER, -1.0)
