"""Lamp advice: ranking the rig's lamps and banks for a declared load."""

import numpy as np
import pytest
from numpy.testing import assert_allclose

from shop.physics import scenarios as reference
from shop.physics.advice import (
    ADVICE_MIN_LOAD_FRACTION,
    ADVICE_MIN_SENSITIVITY_RATIO,
    SUITABLE,
    TOO_LARGE,
    TOO_SMALL,
    UNDER_RATED,
    advise_lamp,
    lamp_label,
)
from shop.physics.circuit import solve_series
from shop.physics.lamp import Lamp, LampBank
from shop.physics.loads import ResistiveLoad
from shop.physics.nameplate import unit_load_from_nameplate

RIG_LAMPS = [Lamp(120.0, power) for power in (15.0, 25.0, 40.0, 60.0, 75.0, 100.0, 150.0)]
BANK = LampBank([Lamp(120.0, 100.0), Lamp(120.0, 100.0)])
CANDIDATES = RIG_LAMPS + [BANK]
UNIT_30 = ResistiveLoad.from_rating(120.0, 30.0)
WINDINGS = 2.0


def _advice(load=UNIT_30, lamps=CANDIDATES, source=120.0, **options):
    return advise_lamp(load, lamps, source, source_resistance=WINDINGS, **options)


def test_every_candidate_is_ranked_once_from_one():
    advice = _advice()
    assert [entry.rank for entry in advice] == list(range(1, len(CANDIDATES) + 1))
    assert sorted(entry.index for entry in advice) == list(range(len(CANDIDATES)))


def test_suitable_lamps_come_first_closest_to_the_units_draw():
    advice = _advice()
    order = [entry.suitability for entry in advice]
    assert order == sorted(order, key=[SUITABLE, TOO_SMALL, TOO_LARGE, UNDER_RATED].index)
    suitable = [
        abs(np.log(CANDIDATES[entry.index].rated_power / 30.0))
        for entry in advice
        if entry.suitability == SUITABLE and entry.index < len(RIG_LAMPS)
    ]
    assert suitable == sorted(suitable)
    assert advice[0].suitability == SUITABLE


def test_the_advice_for_a_30_w_unit_on_120_v_is_the_lamp_nearest_its_draw():
    # Common practice (no source): start with a lamp close to the unit's rated draw. 25 W
    # is the nearest of the rig's sizes to 30 W and leaves a healthy unit 55 % of the source.
    assert _advice()[0].label == "25 W 120 V gas lamp"


# Lamp sizes a shop keeps (common practice, no source), in order.
LAMP_SIZES = (25.0, 40.0, 60.0, 75.0, 100.0, 150.0, 200.0, 300.0)


@pytest.mark.parametrize("mains, frequency", [(120.0, 60.0), (230.0, 50.0)])
@pytest.mark.parametrize("category, draw", [("radio", 40.0), ("amplifier", 100.0)])
def test_a_valve_radio_and_amplifier_are_advised_a_lamp_within_one_size_of_their_draw(
    mains, frequency, category, draw
):
    # Common practice (no source): start with a lamp close to the unit's rated draw, go up
    # one size if a healthy unit will not start or its lamp stays bright.
    unit = unit_load_from_nameplate(
        rated_voltage=mains,
        rated_power=draw,
        category=category,
        valve=True,
        dummy_load_on_output=category == "amplifier",
    )
    lamps = [Lamp(mains, size) for size in LAMP_SIZES]
    best = advise_lamp(unit, lamps, mains, source_resistance=WINDINGS, frequency=frequency)[0]
    chosen = LAMP_SIZES.index(lamps[best.index].rated_power)
    nearest = int(np.argmin([abs(np.log(size / draw)) for size in LAMP_SIZES]))
    assert abs(chosen - nearest) <= 1
    assert best.suitability == SUITABLE


def test_a_lamp_six_times_the_units_draw_is_too_large_and_says_why():
    advice = _advice(load=ResistiveLoad.from_rating(120.0, 25.0))
    six = next(entry for entry in advice if entry.label.startswith("150 W"))
    assert six.suitability == TOO_LARGE
    assert "too large" in six.reason
    assert "choose a smaller lamp" in six.reason


def test_a_lamp_too_large_for_the_band_says_a_doubled_unit_could_read_healthy():
    ten_watts = ResistiveLoad.from_rating(120.0, 10.0)
    advice = _advice(load=ten_watts, lamps=[Lamp(120.0, 300.0)])
    assert advice[0].sensitivity < advice[0].sensitivity_needed
    assert "could read as healthy" in advice[0].reason
    assert "measure the current" in advice[0].reason


def test_a_suitable_lamp_tells_a_doubling_by_the_judgements_own_band():
    for entry in _advice():
        if entry.suitability == SUITABLE:
            assert entry.sensitivity >= ADVICE_MIN_SENSITIVITY_RATIO * entry.sensitivity_needed


def test_a_too_small_lamp_says_the_unit_keeps_too_little_of_the_source():
    entry = next(entry for entry in _advice() if entry.label.startswith("15 W"))
    assert entry.suitability == TOO_SMALL
    assert "choose a larger lamp" in entry.reason


def test_a_lamp_that_starves_a_healthy_unit_is_too_small():
    for entry in _advice():
        if entry.suitability == TOO_SMALL:
            assert entry.load_fraction < ADVICE_MIN_LOAD_FRACTION
        elif entry.suitability == SUITABLE:
            assert entry.load_fraction >= ADVICE_MIN_LOAD_FRACTION


def test_a_lamp_that_cannot_tell_a_doubling_of_draw_is_too_large():
    ten_watts = ResistiveLoad.from_rating(120.0, 10.0)
    advice = _advice(load=ten_watts, lamps=[Lamp(120.0, 300.0), Lamp(120.0, 25.0)])
    large = next(entry for entry in advice if entry.label.startswith("300 W"))
    assert large.suitability == TOO_LARGE
    assert large.sensitivity < ADVICE_MIN_SENSITIVITY_RATIO * large.sensitivity_needed
    assert "too large" in large.reason
    assert advice[0].label.startswith("25 W")


def test_the_fault_current_is_what_a_dead_short_draws_through_the_lamp():
    advice = _advice()
    for entry in advice:
        short = solve_series(CANDIDATES[entry.index], ResistiveLoad(0.0), 120.0, WINDINGS)
        # The same solver: identical to rounding.
        assert_allclose(entry.fault_current, short.current, rtol=1e-12)


def test_with_no_windings_the_fault_current_is_the_lamps_own_current_at_the_source():
    advice = advise_lamp(UNIT_30, RIG_LAMPS, 120.0)
    for entry in advice:
        # The lamp alone across the source: rounding only.
        assert_allclose(entry.fault_current, RIG_LAMPS[entry.index].current(120.0), rtol=1e-12)


def test_unit_volts_and_sensitivity_agree_with_the_scalar_reference():
    entry = _advice()[0]
    lamp = CANDIDATES[entry.index]
    single = reference.operating_point(lamp, 480.0, 120.0, WINDINGS)[0]
    double = reference.operating_point(lamp, 240.0, 120.0, WINDINGS)[0]
    # Two independent solvers, each to about 1e-12 V: 1e-6 V.
    assert_allclose(entry.load_voltage, single, rtol=0, atol=1e-6)
    assert_allclose(entry.sensitivity, single - double, rtol=0, atol=1e-6)


def test_a_bank_is_a_candidate_with_its_own_label():
    advice = _advice()
    bank = next(entry for entry in advice if entry.index == len(RIG_LAMPS))
    assert bank.label == "bank of 100 W + 100 W lamps (120 V)"
    # Two 100 W lamps in parallel let a short draw more than one does.
    single = next(entry for entry in advice if entry.label.startswith("100 W"))
    assert bank.fault_current > single.fault_current


def test_a_lamp_rated_below_the_source_is_ranked_last():
    lamps = [Lamp(120.0, 100.0), Lamp(230.0, 100.0), Lamp(230.0, 60.0)]
    advice = advise_lamp(ResistiveLoad.from_rating(230.0, 30.0), lamps, 230.0)
    assert advice[-1].label == "100 W 120 V gas lamp"
    assert advice[-1].suitability == UNDER_RATED


def test_a_lamp_whose_table_ends_below_the_source_has_no_figures():
    advice = advise_lamp(
        ResistiveLoad.from_rating(230.0, 30.0), [Lamp(120.0, 100.0), Lamp(230.0, 100.0)], 240.0
    )
    last = advice[-1]
    assert last.suitability == UNDER_RATED
    assert np.isnan(last.fault_current)


def test_the_reason_carries_the_numbers():
    entry = _advice()[0]
    assert f"draws at most {entry.fault_current:.2g} A" in entry.reason
    assert f"gets {entry.load_voltage:.3g} V" in entry.reason
    assert "the closest to the unit's 30 W draw" in entry.reason
    assert "go up one size" in entry.reason


def test_labels_can_be_given():
    advice = advise_lamp(UNIT_30, RIG_LAMPS[:2], 120.0, labels=["left socket", "right socket"])
    assert {entry.label for entry in advice} == {"left socket", "right socket"}


def test_labels_must_name_every_lamp():
    with pytest.raises(ValueError, match="labels must name every lamp"):
        advise_lamp(UNIT_30, RIG_LAMPS[:2], 120.0, labels=["only one"])


def test_advice_needs_a_lamp():
    with pytest.raises(ValueError, match="lamps must hold at least one"):
        advise_lamp(UNIT_30, [], 120.0)


@pytest.mark.parametrize("source", [-120.0, 0.0, np.nan, [120.0, 230.0]])
def test_advice_needs_one_positive_source_voltage(source):
    with pytest.raises(ValueError, match="source_voltage"):
        advise_lamp(UNIT_30, RIG_LAMPS[:1], source)


def test_lamp_label_names_power_voltage_and_fill():
    assert lamp_label(Lamp(230.0, 40.0, fill="vacuum")) == "40 W 230 V vacuum lamp"
