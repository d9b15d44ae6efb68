"""The switch-on over time: the thinned series, its words, the plot's second panel."""

from __future__ import annotations

import math
import xml.etree.ElementTree as ET
from types import SimpleNamespace

import numpy as np
import pytest

from shop.bench import services
from shop.bench import switch_on as switch_on_module
from shop.bench.switch_on import MAX_POINTS, behaviour_sentence, switch_on_block, thinned_indices
from shop.bench.switch_on_look import GLOW_COLOURS, glow_colour, name_rows, settling_sentence
from shop.physics.glow import GLOW_CLASSES
from shop.physics.lamp import Lamp

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
    assert behaviour_sentence("flash_then_dims", ["dark", "bright"], "faint").startswith(
        "Flash at switch-on, then dims"
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


def test_the_prediction_gives_the_lamp_current_beside_the_glow(client_for, db):
    body = {
        "lamp": {"technology": "tungsten", "rated_voltage": 120, "rated_power": 60},
        "rig": {"mains_voltage": 120, "mains_frequency": 60, "internal_resistance": 2.0},
        "declared_load": VALVE_RADIO,
        "points": 5,
    }
    response = client_for("technician").post("/api/predict/", body, format="json")
    assert response.status_code == 200, response.content
    switch_on = response.json()["switch_on"]
    moments = switch_on["glow_over_time"]
    assert 0 < len(moments) <= MAX_POINTS
    assert all(m["peak_current"] >= m["current"] > 0 for m in moments)
    assert max(m["peak_current"] for m in moments) == switch_on["inrush_peak_current"]
    assert switch_on["behaviour_words"]
    assert switch_on["steady_glow"] in GLOW_CLASSES
    assert switch_on["followed_for"] == moments[-1]["time"]
