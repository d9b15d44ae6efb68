"""Where the source was read, which meter took each reading, and when a doubling would show."""

import dataclasses

import numpy as np
import pytest
from numpy.testing import assert_allclose

from shop.physics import scenarios
from shop.physics.advice import SUITABLE, TOO_LARGE, advise_lamp
from shop.physics.judgement import (
    ALL_IN_BAND,
    BEFORE_RIG,
    CURRENT_NOT_JUDGED,
    DRAW_BELOW_BAND,
    LAMP_TOO_LARGE,
    RIG_OUTPUT,
    UNKNOWN_RESPONSE,
    Reading,
    doubling_margin,
    judge,
)
from shop.physics.lamp import Lamp
from shop.physics.loads import ResistiveLoad
from shop.physics.rectifier import RectifierLoad

LAMP = Lamp(120.0, 100.0)
UNIT = ResistiveLoad.from_rating(120.0, 60.0)  # 240 ohm
# Windings large enough to matter: a long autotransformer and isolation transformer chain.
WINDINGS = 12.0  # [ohm]
SUPPLIES = (60.0, 90.0, 120.0)  # [V] ahead of the windings


def _at_the_rig_output(resistance, point=RIG_OUTPUT):
    """Noise-free readings of a resistive unit, the source read at the rig's output.

    The scalar brentq generator solves the whole circuit from the supply behind the
    windings; a resistive unit and the lamp are in phase, so the rig's output is the sum of
    their volts.
    """
    readings = []
    for supply in SUPPLIES:
        unit_volts, _, lamp_volts = scenarios.operating_point(LAMP, resistance, supply, WINDINGS)
        readings.append(
            Reading(
                source_voltage=unit_volts + lamp_volts,
                load_voltage=unit_volts,
                source_point=point,
            )
        )
    return readings


def _judge(readings, **options):
    return judge(
        LAMP,
        UNIT,
        readings,
        nominal_source_voltage=120.0,
        source_resistance=WINDINGS,
        **options,
    )


def test_a_source_read_at_the_rig_output_does_not_count_the_windings_twice():
    verdict = _judge(_at_the_rig_output(240.0))
    # Noise-free readings of the declared unit: the draw comes back as 1 to the solvers'
    # agreement, far inside any meter.
    assert_allclose([item.inferred_draw for item in verdict.readings], 1.0, rtol=1e-4)
    assert verdict.outcome == "pass", verdict.reasons


def test_the_same_readings_taken_as_before_the_rig_count_the_windings_drop_twice():
    # The old reading of the source: the windings' drop taken again after the rig's output
    # makes a healthy unit look lighter than it is.
    verdict = _judge(_at_the_rig_output(240.0, point=BEFORE_RIG))
    assert verdict.readings[-1].inferred_draw < 0.95


def test_a_source_read_before_the_rig_is_solved_with_the_windings():
    readings = [
        Reading(
            source_voltage=supply,
            load_voltage=scenarios.operating_point(LAMP, 240.0, supply, WINDINGS)[0],
            source_point=BEFORE_RIG,
        )
        for supply in SUPPLIES
    ]
    verdict = _judge(readings)
    assert_allclose([item.inferred_draw for item in verdict.readings], 1.0, rtol=1e-4)
    assert {item.source_point for item in verdict.readings} == {BEFORE_RIG}


def test_readings_default_to_the_rig_output_and_refuse_other_points_by_name():
    assert Reading(source_voltage=120.0, load_voltage=80.0).source_point == RIG_OUTPUT
    with pytest.raises(ValueError, match="source_point must be one of"):
        Reading(source_voltage=120.0, load_voltage=80.0, source_point="wall")


def test_the_source_is_judged_with_its_own_meter():
    readings = _at_the_rig_output(240.0)
    bench = _judge(readings)
    panel = _judge(
        readings, source_meter_relative_accuracy=0.025, source_meter_absolute_accuracy=1.0
    )
    # A 2.5 % panel meter on the source widens the band that a 1 % meter on the unit keeps.
    assert panel.readings[-1].load_voltage_low < bench.readings[-1].load_voltage_low
    assert panel.readings[-1].load_voltage_high > bench.readings[-1].load_voltage_high
    assert panel.settings["source_meter_relative_accuracy"] == 0.025
    assert panel.settings["meter_relative_accuracy"] == bench.settings["meter_relative_accuracy"]


def test_without_a_source_meter_the_unit_meter_reads_both():
    verdict = _judge(_at_the_rig_output(240.0), meter_relative_accuracy=0.02)
    assert verdict.settings["source_meter_relative_accuracy"] == 0.02


# A small transformer and bridge supply whose current flows in peaks.
SUPPLY = RectifierLoad(120.0, 470e-6, dc_resistance=300.0, turns_ratio=0.5)


def _supply_readings():
    return scenarios.readings(
        scenarios.random_perturbed_lamp(LAMP, np.random.default_rng(8)),
        SUPPLY,
        SUPPLIES,
        np.random.default_rng(8),
        source_resistance=2.0,
        with_current=True,
        average_responding=True,
    )


def _supply_verdict(readings, ammeter_response):
    return judge(
        LAMP,
        SUPPLY,
        readings,
        nominal_source_voltage=120.0,
        source_resistance=2.0,
        voltmeter_response="average_responding",
        ammeter_response=ammeter_response,
    )


def test_current_on_a_meter_of_unknown_response_through_a_rectifier_is_not_judged():
    readings = _supply_readings()
    # Judged as true RMS, an average-responding clamp makes a healthy supply look light.
    assert DRAW_BELOW_BAND in _supply_verdict(readings, "true_rms").codes
    verdict = _supply_verdict(readings, UNKNOWN_RESPONSE)
    assert CURRENT_NOT_JUDGED in verdict.codes
    assert DRAW_BELOW_BAND not in verdict.codes
    assert all(item.measured == "load_voltage" for item in verdict.readings)
    note = next(reason for reason in verdict.reasons if reason.code == CURRENT_NOT_JUDGED)
    assert "the current is not judged" in note.message
    assert verdict.settings["current_judged"] is False


def test_current_of_unknown_response_through_a_resistive_unit_is_a_sine_and_is_judged():
    readings = [
        dataclasses.replace(reading, current=reading.load_voltage / 240.0)
        for reading in _at_the_rig_output(240.0)
    ]
    verdict = _judge(readings, ammeter_response=UNKNOWN_RESPONSE)
    assert CURRENT_NOT_JUDGED not in verdict.codes
    assert all(item.measured == "current" for item in verdict.readings)


BIG_LAMP = Lamp(120.0, 300.0)
SMALL_UNIT = ResistiveLoad.from_rating(120.0, 40.0)  # 360 ohm


def _big_lamp_readings(resistance):
    return [
        Reading(
            source_voltage=supply,
            load_voltage=scenarios.operating_point(BIG_LAMP, resistance, supply)[0],
        )
        for supply in SUPPLIES
    ]


def _big_lamp_verdict(resistance, **options):
    return judge(
        BIG_LAMP,
        SMALL_UNIT,
        _big_lamp_readings(resistance),
        nominal_source_voltage=120.0,
        **options,
    )


def test_a_doubled_unit_through_a_large_lamp_is_never_passed_on_volts_alone():
    verdict = _big_lamp_verdict(180.0)
    assert verdict.outcome != "pass"


def test_through_a_lamp_that_cannot_tell_a_doubling_a_healthy_unit_is_inconclusive():
    verdict = _big_lamp_verdict(360.0)
    assert verdict.outcome == "inconclusive"
    assert verdict.codes == (LAMP_TOO_LARGE,)
    message = verdict.reasons[0].message
    assert "use a smaller lamp, or measure the current" in message
    full = verdict.readings[-1]
    # Beyond the meter's own uncertainty, but inside the band's width plus both meters.
    assert full.sensitivity > full.meter_uncertainty
    assert full.sensitivity < full.sensitivity_needed


def test_the_pass_sentence_claims_only_the_sensitivity_the_band_rule_found():
    verdict = _judge(_at_the_rig_output(240.0))
    assert verdict.codes == (ALL_IN_BAND,)
    item = verdict.readings[verdict.reasons[0].reading]
    assert item.sensitive and item.sensitivity >= item.sensitivity_needed
    assert f"move the unit by {item.sensitivity:.3g} V" in verdict.reasons[0].message
    assert f"beyond the {item.sensitivity_needed:.3g} V" in verdict.reasons[0].message


def test_the_doubling_margin_is_the_judgements_own_at_that_source():
    shift, needed, may_cycle = doubling_margin(BIG_LAMP, SMALL_UNIT, 120.0, source_point=RIG_OUTPUT)
    assert not may_cycle
    full = _big_lamp_verdict(360.0).readings[-1]
    # The same corners solved the same way: rounding only (the verdict's band sits on the
    # noise-free reading's source, as the margin's does).
    assert_allclose([shift, needed], [full.sensitivity, full.sensitivity_needed], rtol=1e-9)


def _small_supply(mains):
    # A transformer, silicon bridge and reservoir feeding about 27 W of DC load.
    return RectifierLoad(
        mains, 2200e-6, topology="bridge", dc_resistance=34.0, turns_ratio=24 / mains
    )


@pytest.mark.parametrize("mains, frequency", [(120.0, 60.0), (230.0, 50.0)])
@pytest.mark.parametrize("seed", [1, 2])
def test_a_small_rectifier_unit_drawing_double_through_a_150_w_lamp_never_passes(
    mains, frequency, seed
):
    unit = _small_supply(mains)
    lamp = Lamp(mains, 150.0)
    verdicts = {}
    for draw in (1.0, 2.0):
        rng = np.random.default_rng(seed)
        readings = scenarios.readings(
            scenarios.random_perturbed_lamp(lamp, rng),
            unit.scaled(draw),
            [0.25 * mains, 0.5 * mains, 0.75 * mains, mains],
            rng,
            frequency=frequency,
        )
        # Generated with no windings, so the supply is the rig's output: read there.
        readings = [dataclasses.replace(r, source_point=RIG_OUTPUT) for r in readings]
        verdicts[draw] = judge(
            lamp,
            unit,
            readings,
            nominal_source_voltage=mains,
            source_resistance=2.0,
            frequency=frequency,
        )
    assert verdicts[2.0].outcome in ("marginal", "fail", "inconclusive")
    # A 150 W lamp is far too large for volts alone to tell a healthy unit from a doubled one.
    assert verdicts[1.0].outcome == "inconclusive"
    assert verdicts[1.0].codes == (LAMP_TOO_LARGE,)


def test_the_advice_does_not_call_a_150_w_lamp_usable_for_a_27_w_rectifier_unit():
    lamps = [Lamp(120.0, watts) for watts in (25.0, 40.0, 60.0, 100.0, 150.0)]
    advice = advise_lamp(_small_supply(120.0), lamps, 120.0, source_resistance=2.0)
    by_power = {lamps[entry.index].rated_power: entry for entry in advice}
    assert by_power[150.0].suitability == TOO_LARGE
    assert advice[0].suitability == SUITABLE
    assert lamps[advice[0].index].rated_power <= 40.0
