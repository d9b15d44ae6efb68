"""Judging power-up tests, against readings from the independent reference generator."""

import numpy as np
import pytest
from numpy.testing import assert_allclose

from shop.physics import judgement
from shop.physics import scenarios as reference
from shop.physics.judgement import (
    ALL_IN_BAND,
    BYPASS_WITHOUT_CURRENT,
    DRAW_ABOVE_BAND,
    DRAW_BELOW_BAND,
    DRAW_HIGH,
    DRAW_NEAR_ZERO,
    GLOW_BRIGHT_UNEXPECTED,
    GLOW_CYCLING_UNEXPECTED,
    LAMP_TOO_LARGE,
    OUTCOMES,
    REASON_OUTCOMES,
    SOURCE_NOT_FULL,
    Reading,
    judge,
)
from shop.physics.lamp import Lamp
from shop.physics.loads import ResistiveLoad

NOMINAL = 120.0  # [V] the rig's mains
WINDINGS = 2.0  # [ohm]
STEPS = (30.0, 60.0, 90.0, 110.0, 120.0)  # [V] source steps of a power-up
LAMP = Lamp(120.0, 60.0)
DECLARED = ResistiveLoad.from_rating(120.0, 30.0)  # 480 ohm
CORNERS = [(1.05, 100.0), (1.05, -100.0), (0.95, 100.0), (0.95, -100.0)]
# The lamp actually in the rig, drawn within a production spread (seeded).
TRUE_LAMP = reference.random_perturbed_lamp(LAMP, np.random.default_rng(3))


def _readings(impedance, seed, *, lamp=TRUE_LAMP, steps=STEPS, **options):
    return reference.readings(
        lamp, impedance, steps, np.random.default_rng(seed), source_resistance=WINDINGS, **options
    )


def _judge(readings, lamp=LAMP, load=DECLARED, **options):
    return judge(
        lamp, load, readings, nominal_source_voltage=NOMINAL, source_resistance=WINDINGS, **options
    )


@pytest.mark.parametrize("power_factor, temperature_shift", CORNERS)
@pytest.mark.parametrize("seed", [1, 2])
def test_a_healthy_unit_passes_whatever_the_lamp_spread(power_factor, temperature_shift, seed):
    lamp = reference.perturbed_lamp(LAMP, power_factor, temperature_shift)
    verdict = _judge(_readings(480.0, seed, lamp=lamp))
    assert verdict.outcome == "pass"
    assert verdict.codes == (ALL_IN_BAND,)


def test_a_healthy_unit_within_the_load_tolerance_passes():
    verdict = _judge(_readings(480.0 / 1.1, 4))  # draws 10 % more than declared
    assert verdict.outcome == "pass"


def test_a_healthy_unit_infers_a_draw_near_the_declared_load():
    verdict = _judge(_readings(480.0, 5))
    full = verdict.readings[-1]
    # +/-5 % lamp power and +/-100 K, and 1 % + 0.5 V meter noise, move the inferred draw by
    # up to about 15 % at full source.
    assert_allclose(full.inferred_draw, 1.0, rtol=0.15)


def test_a_shorted_unit_fails_for_drawing_far_more_than_declared():
    verdict = _judge(_readings(0.0, 6))
    assert verdict.outcome == "fail"
    assert verdict.codes[0] == DRAW_HIGH
    assert all(item.status == DRAW_HIGH for item in verdict.readings)


def test_a_unit_drawing_three_times_its_load_fails_with_the_draw_inferred():
    verdict = _judge(_readings(160.0, 7))
    assert verdict.outcome == "fail"
    assert verdict.codes[0] == DRAW_HIGH
    # The lamp spread and meter noise of the readings: within 15 % of the true 3x.
    assert_allclose([item.inferred_draw for item in verdict.readings[1:]], 3.0, rtol=0.15)


def test_the_fail_sentence_carries_the_numbers():
    verdict = _judge(_readings(160.0, 7))
    message = verdict.reasons[0].message
    assert message.startswith("at ")
    assert " source the unit read " in message
    assert "a healthy 30 W unit would read " in message
    assert "inferred draw 3" in message


def test_an_open_unit_with_its_current_measured_fails_for_drawing_next_to_nothing():
    verdict = _judge(_readings(np.inf, 8, with_current=True))
    assert verdict.outcome == "fail"
    assert verdict.codes == (DRAW_NEAR_ZERO,)
    assert "open fuse, switch or winding" in verdict.reasons[0].message


def test_an_open_unit_read_by_volts_alone_draws_less_than_declared_perhaps_nothing():
    # A cold filament drops about a volt at a third of the declared current: within the
    # uncertainty of two meter readings, so volts alone cannot call it open (module notes).
    verdict = _judge(_readings(np.inf, 8))
    assert verdict.outcome == "marginal"
    assert verdict.codes == (DRAW_BELOW_BAND,)
    assert "perhaps nothing at all: look for an open fuse" in verdict.reasons[0].message
    assert verdict.readings[-1].inferred_draw_low == 0.0


def test_a_unit_drawing_60_percent_more_is_marginal():
    verdict = _judge(_readings(300.0, 9))
    assert verdict.outcome == "marginal"
    assert verdict.codes == (DRAW_ABOVE_BAND,)


def test_a_unit_drawing_half_its_load_is_marginal():
    verdict = _judge(_readings(960.0, 10))
    assert verdict.outcome == "marginal"
    assert verdict.codes == (DRAW_BELOW_BAND,)


def test_a_lamp_too_large_for_the_load_is_inconclusive():
    big = Lamp(120.0, 300.0)
    true_big = reference.random_perturbed_lamp(big, np.random.default_rng(11))
    ten_watts = ResistiveLoad.from_rating(120.0, 10.0)
    verdict = _judge(
        _readings(float(ten_watts.resistance), 12, lamp=true_big), lamp=big, load=ten_watts
    )
    assert verdict.outcome == "inconclusive"
    assert verdict.codes == (LAMP_TOO_LARGE,)
    assert "too large to tell a fault" in verdict.reasons[0].message


def test_a_test_that_stopped_short_of_full_source_is_inconclusive():
    readings = _readings(480.0, 13, steps=(30.0, 60.0, 80.0))
    verdict = _judge(readings)
    assert verdict.outcome == "inconclusive"
    assert verdict.codes == (SOURCE_NOT_FULL,)
    highest = readings[-1].source_voltage
    assert (
        f"{highest:.3g} V, {100 * highest / NOMINAL:.0f} % of the 120 V nominal; a pass "
        "needs at least 90 % (108 V)"
    ) in verdict.reasons[0].message


def test_a_short_fails_even_before_full_source():
    verdict = _judge(_readings(0.0, 14, steps=(20.0, 40.0)))
    assert verdict.outcome == "fail"


def test_a_cycling_glow_on_a_resistive_unit_is_marginal():
    verdict = _judge(_readings(480.0, 15, behaviour="cycling"))
    assert verdict.outcome == "marginal"
    assert verdict.codes == (GLOW_CYCLING_UNEXPECTED,)


def test_a_lamp_seen_bright_where_a_healthy_unit_keeps_it_faint_fails():
    readings = _readings(480.0, 16)
    assert readings[1].glow_seen in ("dark", "faint")  # what the true lamp showed at 60 V
    readings[1] = Reading(readings[1].source_voltage, readings[1].load_voltage, glow_seen="bright")
    verdict = _judge(readings)
    assert verdict.outcome == "fail"
    assert verdict.codes == (GLOW_BRIGHT_UNEXPECTED,)


def test_a_measured_current_is_what_the_draw_is_inferred_from():
    verdict = _judge(_readings(480.0, 17, with_current=True))
    assert verdict.outcome == "pass"
    assert {item.measured for item in verdict.readings} == {"current"}


def test_a_measured_current_of_three_times_the_load_fails():
    verdict = _judge(_readings(160.0, 18, with_current=True))
    assert verdict.outcome == "fail"
    # Lamp spread and 2 % + 5 mA ammeter noise: within 15 % of the true 3x.
    assert_allclose(verdict.readings[-1].inferred_draw, 3.0, rtol=0.15)


def test_a_bypassed_reading_is_judged_without_the_lamp():
    readings = _readings(480.0, 19, with_current=True, bypassed_steps=(120.0,))
    verdict = _judge(readings)
    last = verdict.readings[-1]
    assert last.lamp_bypassed
    # Straight on the source through the windings: Vs R / (R + R_s), to the solver's 1e-12.
    assert_allclose(
        last.predicted_load_voltage, readings[-1].source_voltage * 480.0 / 482.0, rtol=1e-12
    )
    assert verdict.outcome == "pass"


def test_bypassed_readings_without_current_cannot_pass():
    readings = _readings(480.0, 20, steps=(30.0, 60.0, 90.0, 120.0), bypassed_steps=(120.0,))
    verdict = _judge(readings)
    assert verdict.outcome == "inconclusive"
    assert verdict.codes == (BYPASS_WITHOUT_CURRENT,)


def test_a_bypassed_reading_on_a_rig_without_resistance_cannot_tell_the_draw():
    reading = Reading(120.0, 119.5, lamp_bypassed=True)
    verdict = judge(LAMP, DECLARED, [reading], nominal_source_voltage=NOMINAL)
    assert np.isnan(verdict.readings[0].inferred_draw)


def test_a_reactive_unit_is_judged_through_its_model():
    declared = reference.SeriesInductance(300.0, 0.8)
    healthy = _readings(complex(declared.impedance(0.0, 60.0)), 21)
    verdict = _judge(healthy, load=declared)
    assert verdict.outcome == "pass"
    # Phasor drops through the model give the draw back; lamp spread and noise: 15 %.
    assert_allclose(verdict.readings[-1].inferred_draw, 1.0, rtol=0.15)


def test_sensitivity_is_the_fall_of_unit_volts_when_the_draw_doubles():
    verdict = _judge(_readings(480.0, 22))
    source = verdict.readings[-1]
    reading_source = _readings(480.0, 22)[-1].source_voltage
    single = reference.operating_point(LAMP, 480.0, reading_source, WINDINGS)[0]
    double = reference.operating_point(LAMP, 240.0, reading_source, WINDINGS)[0]
    # Two independent solvers, each to about 1e-12 V: 1e-6 V.
    assert_allclose(source.sensitivity, single - double, rtol=0, atol=1e-6)


def test_every_band_holds_its_own_prediction():
    verdict = _judge(_readings(480.0, 23, with_current=True))
    for item in verdict.readings:
        assert item.load_voltage_low < item.predicted_load_voltage < item.load_voltage_high
        assert item.current_low < item.predicted_current < item.current_high


def test_every_reason_code_leads_to_an_outcome():
    codes = {
        value
        for name, value in vars(judgement).items()
        if name.isupper() and isinstance(value, str) and value in REASON_OUTCOMES
    }
    assert codes == set(REASON_OUTCOMES)
    assert set(REASON_OUTCOMES.values()) == set(OUTCOMES)


def test_the_settings_used_are_recorded_with_the_verdict():
    verdict = _judge(_readings(480.0, 24), load_tolerance=0.3)
    assert verdict.settings["load_tolerance"] == 0.3
    assert verdict.settings["full_source_fraction"] == judgement.FULL_SOURCE_FRACTION


@pytest.mark.parametrize(
    "fields, message",
    [
        (dict(source_voltage=-1.0, load_voltage=0.0), "source_voltage must not be negative"),
        (dict(source_voltage=np.nan, load_voltage=0.0), "source_voltage must be a finite number"),
        (dict(source_voltage=10.0, load_voltage=5.0, current=-0.1), "current must not be negative"),
        (
            dict(source_voltage=10.0, load_voltage=5.0, glow_seen="blinding"),
            "glow_seen must be one",
        ),
        (
            dict(source_voltage=10.0, load_voltage=5.0, behaviour_seen="flicker"),
            "behaviour_seen must be one of steady, flash_then_dims, cycling",
        ),
        (dict(source_voltage=10.0, load_voltage=5.0, lamp_bypassed="yes"), "lamp_bypassed"),
    ],
)
def test_a_non_physical_reading_is_refused_by_name(fields, message):
    with pytest.raises(ValueError, match=message):
        Reading(**fields)


@pytest.mark.parametrize(
    "options, message",
    [
        (dict(full_source_fraction=0.8), "full_source_fraction"),
        (dict(load_tolerance=1.5), "load_tolerance"),
        (dict(fail_draw_multiple=1.1), "fail_draw_multiple"),
        (dict(meter_absolute_accuracy=-0.1), "meter_absolute_accuracy"),
    ],
)
def test_a_tolerance_out_of_range_is_refused_by_name(options, message):
    with pytest.raises(ValueError, match=message):
        _judge([Reading(120.0, 100.0)], **options)


def test_judge_needs_readings():
    with pytest.raises(ValueError, match="readings must hold at least one Reading"):
        _judge([])


def test_judge_refuses_what_is_not_a_reading():
    with pytest.raises(ValueError, match=r"readings\[0\] must be a Reading"):
        _judge([(120.0, 100.0)])


def test_judge_needs_a_positive_nominal_source_voltage():
    with pytest.raises(ValueError, match="nominal_source_voltage"):
        judge(LAMP, DECLARED, [Reading(120.0, 100.0)], nominal_source_voltage=0.0)
