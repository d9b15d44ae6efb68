"""The switch-on over time: the thinned series, its words, the plot's second panel."""

from __future__ import annotations

import math
import xml.etree.ElementTree as ET
from types import SimpleNamespace

import numpy as np
import pytest

from shop.bench import services
from shop.bench import switch_on as switch_on_module
from shop.bench.declared_load import physics_load, validated_document
from shop.bench.plot_labels import LabelRoom, segment_meets
from shop.bench.plot_svg import render_svg
from shop.bench.svg_parts import text_width
from shop.bench.switch_on import (
    HEATERS_WARM,
    LAMP_HEATS,
    MAX_POINTS,
    RESERVOIR_CHARGES,
    behaviour_sentence,
    computed_block,
    settling_cause,
    switch_on_block,
    thinned_indices,
)
from shop.bench.switch_on_axes import SwitchOnAxes, clipped_runs, linear_ticks
from shop.bench.switch_on_look import (
    GLOW_COLOURS,
    glow_colour,
    name_rows,
    settling_sentence,
    volts,
)
from shop.physics.glow import GLOW_CLASSES
from shop.physics.lamp import Lamp
from shop.physics.transient import follow_time

SVG = "{http://www.w3.org/2000/svg}"
# A valve radio of 1954 as its nameplate models it: series heaters, a valve rectifier and
# its transformer (shop.physics.nameplate).
VALVE_RADIO = {
    "kind": "nameplate",
    "basis": "nameplate",
    "parameters": {
        "voltage": 120,
        "power": 60,
        "category": "radio",
        "construction": "isolating_transformer",
        "frequency": "60",
        "year": 1954,
    },
}
RESISTANCE = {"kind": "resistive", "parameters": {"resistance": 240}, "basis": "estimate"}
SWITCH_MODE = {
    "kind": "constant_power",
    "parameters": {"power": 90, "voltage": 120},
    "basis": "estimate",
}
STEPS = (30.0, 60.0, 90.0, 110.0)


def runs(glow) -> list[str]:
    """The glow classes in the order they follow one another, each stretch once."""
    return [name for index, name in enumerate(glow) if index == 0 or name != glow[index - 1]]


def texts(element, css_class: str) -> list[str]:
    return [t.text for t in element.iter(f"{SVG}text") if t.get("class") == css_class]


def closed_test(job, rig, lamp, staff, meter, declared_load=None, steps=STEPS):
    test = services.powerup_open(
        job=job,
        rig=rig,
        lamp=lamp,
        technician=staff["technician"],
        declared_load=declared_load,
        load_meter=meter,
    )
    services.readings_add(
        test=test,
        actor=staff["technician"],
        readings=[
            {"source_voltage": v, "load_voltage": round(0.8 * v, 1), "glow_seen": "faint"}
            for v in steps
        ],
    )
    services.powerup_close(test=test, actor=staff["technician"])
    test.refresh_from_db()
    return test


# Thinning -----------------------------------------------------------------------------------


def glow_series(count: int, changes: int) -> np.ndarray:
    """`count` moments cycling through the glow classes, changing `changes` times."""
    return np.array(
        [GLOW_CLASSES[(i * (changes + 1) // count) % len(GLOW_CLASSES)] for i in range(count)]
    )


def test_a_short_series_is_kept_whole():
    glow = glow_series(60, 4)
    assert list(thinned_indices(glow, [3])) == list(range(60))


def test_thinning_caps_the_length_and_keeps_inrush_settling_and_every_glow_change():
    glow = glow_series(6000, 40)
    inrush, settle = 1, 4321
    kept = thinned_indices(glow, [inrush, settle])
    assert len(kept) <= MAX_POINTS
    assert {0, inrush, settle, 5999} <= set(kept)
    assert list(kept) == sorted(set(kept))
    # The last moment of each stretch is kept, so every stretch keeps both its ends...
    changes = np.flatnonzero(glow[1:] != glow[:-1])
    assert len(changes) == 40
    assert set(changes) <= set(kept)
    # ...and the kept moments tell the same run of glow classes as all of them.
    assert runs(list(glow[kept])) == runs(list(glow))


def test_a_glow_that_changes_more_often_than_the_cap_still_keeps_the_cap_and_the_anchors():
    glow = glow_series(9000, 900)
    kept = thinned_indices(glow, [2, 7000])
    assert len(kept) <= MAX_POINTS
    assert {0, 2, 7000, 8999} <= set(kept)


# The block, from a transient the physics may give (long, or of a switch-mode unit) ---------


def transient(count: int, behaviour: str, steady_current=0.3, steady_glow="dull"):
    """A stand-in for shop.physics.transient.SwitchOnTransient of one column."""
    time = np.concatenate([np.arange(1, 121) / 120, 1 + np.arange(1, count - 119) / 50])
    glow = glow_series(count, 60)
    current = np.where(glow == "bright", 0.6, 0.3)
    peak = 1.5 * current
    peak[2] = 4.0
    settle = math.nan if math.isnan(steady_current) else float(time[count // 3])
    return SimpleNamespace(
        time=time,
        current=current,
        peak_current=peak,
        glow=glow,
        inrush_peak=np.array(4.0),
        steady_current=np.array(steady_current),
        settle_time=np.array(settle),
        steady_glow=np.array(steady_glow),
        behaviour=np.array(behaviour),
        at=lambda seconds: int(np.searchsorted(time, seconds)),
    )


@pytest.fixture(autouse=True)
def _nothing_remembered():
    """Each test computes its own switch-ons: the process remembers them otherwise."""
    switch_on_module.forget()
    yield
    switch_on_module.forget()


@pytest.fixture
def fake_physics(monkeypatch):
    calls = []

    def install(made):
        def follow(*args, **kwargs):
            calls.append(args)
            return made

        monkeypatch.setattr(switch_on_module, "switch_on", follow)
        monkeypatch.setattr(switch_on_module, "physics_load", lambda document: None)
        monkeypatch.setattr(switch_on_module, "physics_limiter", lambda *args: None)
        return calls

    return install


def block_of() -> dict:
    return switch_on_block(
        limiter=[], declared_load={}, source_voltage=120.0, source_resistance=2.0, frequency=60.0
    )


def test_a_long_switch_on_is_thinned_with_its_inrush_settling_and_glow_changes(fake_physics):
    made = transient(3000, "flash_then_dims")
    fake_physics(made)
    block = block_of()
    moments = block["glow_over_time"]
    assert len(moments) <= MAX_POINTS
    times = [m["time"] for m in moments]
    assert times == sorted(times)
    assert round(float(made.time[2]), 4) in times  # the inrush half cycle
    assert block["settle_time"] in times
    assert runs([m["glow"] for m in moments]) == runs(list(made.glow))
    assert block["inrush_peak_current"] == 4.0
    assert max(m["peak_current"] for m in moments) == 4.0
    assert block["followed_for"] == round(float(made.time[-1]), 4)


def test_a_switch_mode_unit_that_cycles_is_said_in_words_and_a_missing_steady_state_is_null(
    fake_physics,
):
    # shop.physics.switch_mode_start: NaN steady current and an empty steady glow where the
    # unit never reaches a steady state.
    fake_physics(transient(400, "cycling", steady_current=math.nan, steady_glow=""))
    block = block_of()
    assert block["steady_current"] is None
    assert block["steady_glow"] is None
    assert block["behaviour_words"].startswith("Cycles: a switch-mode unit restarting")
    assert settling_sentence(block) == (
        "No steady current: the unit does not settle through this lamp."
    )


def test_the_same_switch_on_is_computed_once_and_each_caller_gets_its_own_copy(fake_physics):
    calls = fake_physics(transient(400, "flash_then_dims"))
    first = block_of()
    first["glow_over_time"].clear()
    second = block_of()
    assert len(calls) == 1
    assert second["glow_over_time"]
    switch_on_block(
        limiter=[], declared_load={}, source_voltage=110.0, source_resistance=2.0, frequency=60.0
    )
    assert len(calls) == 2  # other inputs, another computation


def test_a_behaviour_the_code_does_not_know_is_said_in_plain_words():
    words = behaviour_sentence("hiccups_twice", ["dark", "bright", "dull"], "dull")
    assert words == (
        "Switch-on behaviour: hiccups twice; the lamp glows up to bright and is dull at "
        "steady state."
    )
    words = behaviour_sentence("hiccups_twice", ["dark", "faint"], None)
    assert words.endswith("glows up to faint and is never steady.")


def test_the_behaviour_words_of_the_known_codes():
    assert behaviour_sentence("flash_then_dims", ["dark", "bright"], "faint") == (
        "Flash at switch-on, then dims: the lamp glows up to bright and falls back towards "
        "faint as the unit settles."
    )
    assert behaviour_sentence("steady", ["dark", "bright"], "bright").startswith(
        "Stays bright: a fault"
    )
    assert behaviour_sentence("steady", ["dark"], "dark") == "No flash: the lamp stays dark."
    assert behaviour_sentence("does_not_start", ["dark"], "dark").startswith("Does not start")


# Colours and names ---------------------------------------------------------------------------


def test_the_palette_colours_every_glow_class_distinctly_and_greys_an_unknown_one():
    assert set(GLOW_COLOURS) == set(GLOW_CLASSES)
    assert len(set(GLOW_COLOURS.values())) == len(GLOW_COLOURS)
    assert glow_colour("plasma") not in GLOW_COLOURS.values()


def test_names_too_close_together_go_to_the_next_row_then_are_left_out():
    rows = name_rows([0, 5, 10, 100], ["dark", "dark", "dark", "bright"], 2, 5.0, 200)
    assert rows == [0, 1, None, 0]
    assert name_rows([195], ["bright"], 2, 5.0, 200) == [None]  # would run off the edge


# The plot's panel --------------------------------------------------------------------------


def test_the_plot_of_a_valve_radio_has_a_switch_on_panel_with_glow_names_and_inrush(
    testing_job, rig, lamps, staff, meter, client_for
):
    from shop.bench import judging, selectors

    test = closed_test(testing_job, rig, lamps[60], staff, meter, VALVE_RADIO)
    block = selectors.healthy_switch_on(judging.verdict_inputs(test, list(test.readings.all())))
    response = client_for("technician").get(f"/api/powerups/{test.pk}/plot.svg")
    assert response.status_code == 200
    root = ET.fromstring(response.content)
    panel = root.find(f".//{SVG}g[@class='switch-on']")
    assert panel is not None
    heading = next(panel.iter(f"{SVG}text")).text
    assert heading.startswith("Switch-on at 110 V")  # the highest reading's source volts
    glow = [m["glow"] for m in block["glow_over_time"]]
    # The cold lamp and heaters let a flash through: the glow passes several classes.
    assert len(set(glow)) >= 3
    assert texts(panel, "glow-name") == runs(glow)
    assert set(texts(panel, "glow-name")) <= set(GLOW_CLASSES)
    [inrush] = texts(panel, "inrush-label")
    assert inrush.startswith(f"inrush peak {block['inrush_peak_current']:.2f} A")
    notes = " ".join(texts(panel, "switch-on-note"))
    assert block["behaviour_words"][:40] in notes
    assert len(panel.findall(f".//{SVG}polyline[@class='glow']")) == 2 * len(runs(glow))
    assert float(root.get("height")) > 482


def test_the_switch_on_of_a_resistive_unit_starts_at_the_cold_lamps_ohms_law_current(
    testing_job, rig, lamps, staff, meter, client_for
):
    from shop.bench import judging, selectors
    from shop.bench.physics_inputs import limiter_parameters, physics_limiter

    test = closed_test(testing_job, rig, lamps[60], staff, meter, RESISTANCE)
    lamp = physics_limiter(limiter_parameters(lamp=lamps[60]), test.ambient_temperature)
    assert isinstance(lamp, Lamp)
    # Switched at the crest, the first instant meets a cold filament: Ohm's law, the crest
    # of 110 V across the unit's 240 ohm, the cold lamp and the rig's 2.0 ohm in series.
    expected = math.sqrt(2) * 110.0 / (240.0 + lamp.cold_resistance + 2.0)
    block = selectors.healthy_switch_on(judging.verdict_inputs(test, list(test.readings.all())))
    assert block["inrush_peak_current"] == pytest.approx(expected, rel=1e-3)
    root = ET.fromstring(client_for("technician").get(f"/api/powerups/{test.pk}/plot.svg").content)
    [inrush] = texts(root, "inrush-label")
    assert inrush.startswith(f"inrush peak {expected:.2f} A")
    assert texts(root, "settle-label")[0].startswith("settled at ")


def test_a_unit_the_switch_on_cannot_follow_is_said_in_a_line_instead_of_a_panel(
    open_test, client_for, monkeypatch
):
    def refuse(*args, **kwargs):
        raise ValueError("no model of this unit in time")

    monkeypatch.setattr(switch_on_module, "switch_on", refuse)
    response = client_for("technician").get(f"/api/powerups/{open_test.pk}/plot.svg")
    assert response.status_code == 200
    root = ET.fromstring(response.content)
    assert root.find(f".//{SVG}g[@class='switch-on']") is None
    said = " ".join(texts(root, "switch-on-refused"))
    assert said.startswith("Switch-on not drawn: the model cannot follow this unit")
    assert "no model of this unit in time" in said


def test_the_plot_of_a_switch_mode_unit_draws_its_switch_on_from_the_physics(
    testing_job, rig, lamps, staff, meter, client_for
):
    from shop.bench import judging, selectors

    test = closed_test(
        testing_job,
        rig,
        lamps[25],
        staff,
        meter,
        SWITCH_MODE,
        steps=(120.0,),
    )
    inputs = judging.verdict_inputs(test, list(test.readings.all()))
    block = selectors.healthy_switch_on(inputs)
    response = client_for("technician").get(f"/api/powerups/{test.pk}/plot.svg")
    assert response.status_code == 200
    assert "None" not in response.content.decode()
    panel = ET.fromstring(response.content).find(f".//{SVG}g[@class='switch-on']")
    assert panel is not None
    notes = " ".join(texts(panel, "switch-on-note"))
    assert block["behaviour_words"][:40] in notes
    assert texts(panel, "glow-name")


# The prediction's answer -----------------------------------------------------------------


def predicted_radio_switch_on(client_for) -> dict:
    """The prediction's switch-on of the valve radio through a 60 W lamp on a 120 V rig."""
    body = {
        "lamp": {"technology": "tungsten", "rated_voltage": 120, "rated_power": 60},
        "rig": {"mains_voltage": 120, "mains_frequency": 60, "internal_resistance": 2.0},
        "declared_load": VALVE_RADIO,
        "points": 3,
    }
    response = client_for("technician").post("/api/predict/", body, format="json")
    assert response.status_code == 200, response.content
    return response.json()["switch_on"]


def test_the_prediction_gives_the_lamp_current_beside_the_glow(client_for, db):
    switch_on = predicted_radio_switch_on(client_for)
    moments = switch_on["glow_over_time"]
    assert 0 < len(moments) <= MAX_POINTS
    assert all(m["peak_current"] >= m["current"] > 0 for m in moments)
    assert max(m["peak_current"] for m in moments) == switch_on["inrush_peak_current"]
    assert switch_on["behaviour_words"]
    assert switch_on["steady_glow"] in GLOW_CLASSES
    assert switch_on["followed_for"] == moments[-1]["time"]


# How long a switch-on is followed ----------------------------------------------------------


def test_a_switch_on_is_followed_for_the_physics_follow_time_unless_a_duration_is_given(
    monkeypatch,
):
    asked = []

    def follow(*args, duration, **kwargs):
        asked.append(duration)
        return transient(400, "flash_then_dims")

    switch_mode = SimpleNamespace(constant_power=True)
    monkeypatch.setattr(switch_on_module, "switch_on", follow)
    monkeypatch.setattr(switch_on_module, "physics_load", lambda document: switch_mode)
    monkeypatch.setattr(switch_on_module, "physics_limiter", lambda *args: None)
    inputs = dict(
        limiter=[], declared_load={}, source_voltage=230.0, source_resistance=2.0, frequency=50.0
    )
    computed_block(**inputs)
    computed_block(**inputs, duration=0.3)
    assert asked == [follow_time(switch_mode), 0.3]
    assert asked[0] == 2.0  # shop.physics.transient.SWITCH_MODE_FOLLOW


def test_a_valve_radio_is_followed_until_its_heaters_have_warmed_and_it_has_settled(client_for, db):
    switch_on = predicted_radio_switch_on(client_for)
    followed = follow_time(physics_load(validated_document(VALVE_RADIO)))
    assert followed == 80.0  # eight warm-up times of its slowest heater (the physics' rule)
    assert switch_on["followed_for"] == pytest.approx(followed, rel=0.02)
    # Followed half a second, as before, it had not settled: now it has, well inside the time
    # followed (heaters settle within 10 % in two to three time constants: common practice,
    # no source).
    assert switch_on["settle_time"] is not None
    assert 1.0 < switch_on["settle_time"] < 0.8 * followed
    assert settling_sentence(switch_on).startswith("Within 10 % of the steady current from")
    if switch_on["behaviour"] == "flash_then_dims":
        assert switch_on["behaviour_words"].endswith(f"{HEATERS_WARM}.")


# Words by kind ---------------------------------------------------------------------------


ADAPTER = {
    "kind": "nameplate",
    "basis": "nameplate",
    "parameters": {
        "voltage": 230,
        "power": 90,
        "category": "other",
        "construction": "switch_mode",
        "frequency": "50_60",
        "year": 2014,
    },
}


@pytest.mark.parametrize(
    "document, cause",
    [
        (VALVE_RADIO, HEATERS_WARM),
        (ADAPTER, RESERVOIR_CHARGES),
        (SWITCH_MODE, RESERVOIR_CHARGES),
        (RESISTANCE, LAMP_HEATS),
        (
            {"kind": "transformer", "basis": "estimate", "parameters": {"voltage": 120, "va": 50}},
            "as the transformer's inrush dies away",
        ),
    ],
)
def test_what_brings_the_current_down_is_said_by_what_the_unit_holds(document, cause):
    assert settling_cause(physics_load(validated_document(document))) == cause


def test_a_switch_mode_flash_is_said_to_fall_back_as_its_reservoir_charges():
    words = behaviour_sentence("flash_then_dims", ["faint", "dark"], "dark", RESERVOIR_CHARGES)
    assert words == (
        "Flash at switch-on, then dims: the lamp glows up to faint and falls back towards dark "
        "as the unit's reservoir charges."
    )
    assert "warms" not in words


# The panel's axes and labels, from a block like the demo adapter's ----------------------


def adapter_block(source_voltage=232.256) -> dict:
    """A switch-mode adapter's switch-on as the physics gave it for the demo shop: a
    reservoir charging in the first half cycle (an inrush peak of amperes), then tens of
    milliamperes once the converter runs."""
    times = [0.01 * i for i in range(1, 20)] + [0.2 + 0.05 * i for i in range(1, 37)]
    current = [0.394, 0.0449, 0.0186, 0.0098] + [0.004] * 16 + [0.0344] * 35
    peaks = [3.4284, 0.1539, 0.0696, 0.0399] + [0.02] * 16 + [0.1] * 35
    return {
        "source_voltage": source_voltage,
        "inrush_peak_current": 3.4284,
        "steady_current": 0.0344,
        "settle_time": 0.22,
        "followed_for": 2.0,
        "behaviour": "flash_then_dims",
        "behaviour_words": "Flash at switch-on, then dims.",
        "steady_glow": "dark",
        "glow_over_time": [
            {
                "time": round(t, 4),
                "glow": "faint" if i < 9 else "dark",
                "current": c,
                "peak_current": p,
            }
            for i, (t, c, p) in enumerate(zip(times, current, peaks, strict=True))
        ],
    }


def panel_of(block: dict):
    prediction = {
        "source_voltage": [0.0, 230.0],
        "load_voltage": [0.0, 220.0],
        "load_voltage_low": [0.0, 210.0],
        "load_voltage_high": [0.0, 225.0],
        "fault_current_cap": {"current": 0.18, "source_voltage": 250.0, "glow": "bright"},
        "model": {"summary": "a switch-mode input"},
    }
    svg = render_svg(prediction=prediction, readings=[], title="t", switch_on=block)
    return ET.fromstring(svg).find(f".//{SVG}g[@class='switch-on']")


def frame_of(panel) -> tuple[float, float, float, float]:
    rect = panel.find(f"{SVG}g[@class='axes']/{SVG}rect")
    left, top = float(rect.get("x")), float(rect.get("y"))
    return left, top, left + float(rect.get("width")), top + float(rect.get("height"))


def text_boxes(panel, classes) -> list[tuple[str, tuple]]:
    """(class, box) of each text of these classes, by the plot's own width estimate."""
    boxes = []
    for text in panel.iter(f"{SVG}text"):
        css = text.get("class")
        if css not in classes:
            continue
        size = float(text.get("font-size") or 11)
        width = text_width(text.text, size)
        x, y = float(text.get("x")), float(text.get("y"))
        left = {"start": x, "middle": x - width / 2, "end": x - width}[
            text.get("text-anchor") or "start"
        ]
        boxes.append((css, (left, y - 0.8 * size, left + width, y + 0.25 * size)))
    return boxes


def meets(a, b) -> bool:
    return a[0] < b[2] and b[0] < a[2] and a[1] < b[3] and b[1] < a[3]


LABELS = ("inrush-label", "settle-label", "steady-label")
TICKS = ("x-tick", "y-tick", "glow-name")


def test_the_adapter_panel_scales_current_to_the_rms_and_clips_the_peaks_at_the_top():
    block = adapter_block()
    panel = panel_of(block)
    left, top, right, bottom = frame_of(panel)
    y_ticks = [float(t) for t in texts(panel, "y-tick")]
    # Above the largest RMS current with headroom, far below the 3.43 A inrush peak: the
    # steady 34 mA stands clear of the axis instead of lying on it.
    assert max(y_ticks) == 0.5
    assert 0.394 * 1.15 <= max(y_ticks) < block["inrush_peak_current"]
    [steady] = panel.findall(f"{SVG}line[@class='steady-current']")
    assert bottom - float(steady.get("y1")) >= 0.06 * (bottom - top)
    peak_points = [
        tuple(float(v) for v in point.split(","))
        for line in panel.findall(f"{SVG}polyline[@class='peak-current']")
        for point in line.get("points").split()
    ]
    assert peak_points and all(top - 0.1 <= y <= bottom + 0.1 for _, y in peak_points)
    assert min(y for _, y in peak_points) == pytest.approx(top, abs=0.1)  # cut at the top
    notes = " ".join(texts(panel, "switch-on-note"))
    assert "peaks above the frame are clipped" in notes
    assert texts(panel, "inrush-label") == ["inrush peak 3.43 A (instantaneous) at 0.010 s"]
    assert panel.find(f".//{SVG}polygon[@class='inrush-peak clipped']") is not None


def test_the_time_axis_is_logarithmic_with_decade_ticks_and_twos_and_fives_where_they_fit():
    panel = panel_of(radio_block())
    assert texts(panel, "x-label") == ["Time since switch-on [s], log scale"]
    ticks = {
        t.text: float(t.get("x")) for t in panel.iter(f"{SVG}text") if t.get("class") == "x-tick"
    }
    # From the first half cycle's end (1/120 s) to the 40 s followed.
    assert {"0.01 s", "0.1 s", "1 s", "10 s"} <= set(ticks)
    assert "0.005 s" not in ticks and "50 s" not in ticks
    assert set(ticks) <= {f"{m * 10.0**k:g} s" for m in (1, 2, 5) for k in range(-3, 3)}
    # Equal steps for equal ratios: a decade is as wide as the next, and 2 s sits log10(2) of
    # a decade after 1 s.
    decade = ticks["1 s"] - ticks["0.1 s"]
    assert ticks["0.1 s"] - ticks["0.01 s"] == pytest.approx(decade, abs=0.15)
    if "2 s" in ticks:
        assert ticks["2 s"] - ticks["1 s"] == pytest.approx(math.log10(2) * decade, abs=0.15)
    left, _, right, _ = frame_of(panel)
    assert all(left - 10 < x < right + 20 for x in ticks.values())


def radio_block() -> dict:
    """A valve radio's switch-on as the physics gave it for the demo shop, 40 s followed: a
    flash of the cold lamp and heaters, then the heaters' slow warm-up."""
    rows = [
        (0.0083, "dark", 1.0324, 1.5267),
        (0.0167, "dark", 0.9233, 1.3604),
        (0.025, "faint", 0.8244, 1.2455),
        (0.0417, "faint", 0.6611, 0.9893),
        (0.05, "dull", 0.6026, 0.8819),
        (0.0667, "dull", 0.522, 0.7555),
        (0.0833, "medium", 0.4733, 0.6787),
        (0.1333, "medium", 0.4181, 0.5915),
        (0.3, "bright", 0.4067, 0.5758),
        (0.9417, "bright", 0.4077, 0.5784),
        (3.6, "bright", 0.4046, 0.5826),
        (7.2, "bright", 0.3976, 0.5823),
        (11.0, "medium", 0.3899, 0.5781),
        (18.8, "medium", 0.3734, 0.5608),
        (26.4, "medium", 0.3608, 0.5478),
        (40.0, "medium", 0.3479, 0.5345),
    ]
    return {
        "source_voltage": 121.33156645849459,
        "inrush_peak_current": 1.5267,
        "steady_current": 0.3281,
        "settle_time": 26.2,
        "followed_for": 40.0,
        "behaviour": "flash_then_dims",
        "behaviour_words": "Flash at switch-on, then dims.",
        "steady_glow": "medium",
        "glow_over_time": [
            {"time": t, "glow": g, "current": c, "peak_current": p} for t, g, c, p in rows
        ],
    }


@pytest.mark.parametrize("made", [adapter_block, radio_block])
def test_no_label_covers_another_a_tick_label_or_the_line_it_names(made):
    block = made()
    panel = panel_of(block)
    left, top, right, bottom = frame_of(panel)
    labels = text_boxes(panel, LABELS)
    assert sorted(css for css, _ in labels) == sorted(LABELS)
    others = text_boxes(panel, TICKS)
    for index, (css, box) in enumerate(labels):
        assert left <= box[0] and box[2] <= right and top <= box[1] and box[3] <= bottom, css
        assert not any(meets(box, other) for _, other in labels[index + 1 :] + others), css
    [settle] = panel.findall(f"{SVG}line[@class='settle-time']")
    [steady] = panel.findall(f"{SVG}line[@class='steady-current']")
    settle_x, steady_y = float(settle.get("x1")), float(steady.get("y1"))
    for _, box in labels:
        assert not box[0] < settle_x < box[2]
        assert not box[1] < steady_y < box[3]


def test_the_panel_title_gives_the_source_volts_to_three_figures():
    assert volts(121.33156645849459) == "121 V"
    assert volts(91.33) == "91.3 V"
    assert volts(230.0) == "230 V"
    heading = next(panel_of(adapter_block(121.332)).iter(f"{SVG}text")).text
    assert heading == "Switch-on at 121 V: a healthy unit's lamp current over time"


# The pieces under the panel --------------------------------------------------------------


def test_a_line_is_cut_where_it_leaves_the_top_and_resumes_where_it_comes_back():
    runs = clipped_runs([(0.0, 0.5), (0.5, 1.5), (1.0, 0.5), (1.5, 1.5), (2.0, 3.0)])
    assert runs == [[(0.0, 0.5), (0.25, 1.0)], [(0.75, 1.0), (1.0, 0.5), (1.25, 1.0)]]
    assert clipped_runs([(0.0, 2.0), (1.0, 3.0)]) == []


def test_narrow_room_labels_the_decades_only():
    axes = SwitchOnAxes(1 / 120 / 1.25, 40.0, linear_ticks(1.0))
    ticks = axes.time_ticks(250, lambda words: 6.6 * len(words), (30, 20), 6)
    assert [t.label for t in ticks if t.label] == ["0.01 s", "0.1 s", "1 s", "10 s"]
    # Every 1, 2 and 5 still draws its grid line, at its logarithmic place.
    assert [t.value for t in ticks][:4] == [0.01, 0.02, 0.05, 0.1]
    assert ticks[1].at - ticks[0].at == pytest.approx(math.log10(2) / math.log10(40 * 150))


def test_a_label_goes_to_the_first_place_clear_of_labels_and_lines_then_of_curves():
    room = LabelRoom(inside=(0, 0, 100, 100), lines=[(50, 0, 50, 100)], soft=[(0, 20, 100, 20)])
    room.boxes.append((0, 0, 30, 10))
    candidates = [
        ((10, 5, 20, 15), "over a label"),
        ((45, 30, 55, 40), "across the line"),
        ((60, 15, 70, 25), "across the curve"),
        ((95, 30, 105, 40), "outside"),
        ((60, 30, 70, 40), "free"),
    ]
    assert room.place(candidates) == "free"
    assert room.place(candidates[:3]) == "across the curve"  # the curve only if it must
    assert segment_meets((0, 0, 10, 10), (4, 4, 6, 6))
    assert not segment_meets((0, 0, 10, 0), (4, 1, 6, 3))
    assert not segment_meets((0, 10, 10, 0), (0, 0, 4, 4))  # passes by the box's corner
