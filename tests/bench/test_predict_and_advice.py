"""The stateless prediction and lamp advice endpoints."""

from __future__ import annotations

from decimal import Decimal

import pytest

from shop.core.safety import CAVEATS

SPEC = {
    "lamp": {"technology": "tungsten", "rated_voltage": 120, "rated_power": 60},
    "rig": {"mains_voltage": 120, "mains_frequency": 60, "internal_resistance": 2.0},
    "declared_load": {"kind": "resistive", "parameters": {"resistance": 500}, "basis": "estimate"},
}


def test_prediction_answers_curves_fault_cap_and_every_caveat(client_for, db):
    response = client_for("front_desk").post("/api/predict/", {**SPEC, "points": 13}, format="json")
    assert response.status_code == 200, response.content
    body = response.json()
    assert len(body["load_voltage"]) == 13
    assert body["source_voltage"][-1] == 120
    # Common practice, no source: ~93 V (within about 10 %) on a 500 ohm unit through a 60 W lamp.
    assert 93 * 0.9 <= body["load_voltage"][-1] <= 93 * 1.1
    assert all(
        lo <= mid <= hi
        for lo, mid, hi in zip(
            body["load_voltage_low"], body["load_voltage"], body["load_voltage_high"]
        )
    )
    assert 0.4 < body["fault_current_cap"]["current"] < 0.5  # a 60 W 120 V lamp: 0.5 A at rating
    assert {c["code"] for c in body["caveats"]} >= {code for code, _ in CAVEATS}


def test_prediction_over_a_stored_lamp_and_rig_includes_advice(client_for, rig, lamps):
    body = {
        "lamp_id": lamps[60].pk,
        "rig_id": rig.pk,
        "declared_load": SPEC["declared_load"],
        "source_voltages": [30, 60, 90, 120],
    }
    response = client_for("technician").post("/api/predict/", body, format="json")
    assert response.status_code == 200, response.content
    assert len(response.json()["advice"]) == len(lamps)


@pytest.mark.parametrize(
    ("change", "field"),
    [
        ({"lamp": {**SPEC["lamp"], "technology": "led"}}, "lamp.technology"),
        ({"lamp": {**SPEC["lamp"], "rated_power": -60}}, "lamp.rated_power"),
        ({"lamp": {**SPEC["lamp"], "rated_voltage": "NaN"}}, "lamp.rated_voltage"),
        ({"rig": {**SPEC["rig"], "mains_voltage": 10000}}, "rig.mains_voltage"),
        ({"source_voltages": [10, 10000]}, "source_voltages.1"),
        ({"source_voltages": [10, 200]}, "source_voltages"),
        (
            {"declared_load": {"kind": "resistive", "parameters": {}, "basis": "estimate"}},
            "declared_load.parameters.power",
        ),
    ],
)
def test_prediction_refuses_what_is_not_physics_by_field(client_for, db, change, field):
    response = client_for("technician").post("/api/predict/", {**SPEC, **change}, format="json")
    assert response.status_code == 400
    assert field in response.json()["error"]["fields"]


def test_prediction_is_closed_to_anonymous_callers(client_for, db):
    assert client_for(None).post("/api/predict/", SPEC, format="json").status_code == 401


def test_lamp_advice_ranks_every_lamp_and_bank_of_the_rig(client_for, unit, rig, lamps, staff):
    from shop.bench import services

    services.bank_create(
        actor=staff["lead"], rig=rig, label="2 x 60 W", lamps=[lamps[60], lamps[40]]
    )
    response = client_for("technician").get(f"/api/units/{unit.pk}/lamp-advice/?rig={rig.pk}")
    assert response.status_code == 200, response.content
    advice = response.json()["advice"]
    assert [entry["rank"] for entry in advice] == list(range(1, len(lamps) + 2))
    assert sum(entry["bank_id"] is not None for entry in advice) == 1
    assert all(entry["reason"] for entry in advice)
    assert response.json()["caveats"]


def test_lamp_advice_gives_null_for_figures_a_lamp_rated_below_the_mains_cannot_give(
    client_for, unit, rig, staff
):
    from shop.bench import services

    for volts in ("120", "100"):
        services.lamp_create(
            actor=staff["lead"],
            rig=rig,
            label=f"60 W {volts} V clear",
            technology="tungsten",
            rated_voltage=Decimal(volts),
            rated_power=Decimal(60),
        )
    response = client_for("technician").get(f"/api/units/{unit.pk}/lamp-advice/?rig={rig.pk}")
    assert response.status_code == 200, response.content
    under = next(e for e in response.json()["advice"] if e["suitability"] == "under_rated")
    # JSON has no NaN: the band rule is not worked out for a lamp that must not be used.
    assert under["sensitivity_needed"] is None
    usable = next(e for e in response.json()["advice"] if e["suitability"] != "under_rated")
    assert usable["sensitivity_needed"] > 0


def test_lamp_advice_needs_a_rig(client_for, unit):
    response = client_for("technician").get(f"/api/units/{unit.pk}/lamp-advice/")
    assert response.status_code == 400
    assert response.json()["error"]["field"] == "rig"


def test_a_switch_mode_unit_that_cannot_run_through_the_lamp_is_said_not_a_500(client_for, db):
    body = {
        **SPEC,
        "lamp": {**SPEC["lamp"], "rated_power": 25},
        "declared_load": {
            "kind": "constant_power",
            "parameters": {"power": 90, "voltage": 120},
            "basis": "nameplate",
        },
    }
    response = client_for("technician").post("/api/predict/", body, format="json")
    assert response.status_code == 200, response.content
    answer = response.json()
    assert answer["cannot_run"] is True
    assert "no_operating_point" in answer["state"]
    assert any("cycle or not start" in w for w in answer["warnings"])
    stuck = answer["state"].index("no_operating_point")
    assert answer["load_voltage"][stuck] is None


def test_the_plot_of_a_unit_that_cannot_run_leaves_those_steps_out(
    testing_job, rig, lamps, client_for, staff
):
    import xml.etree.ElementTree as ET

    from shop.bench import services as bench

    test = bench.powerup_open(
        job=testing_job,
        rig=rig,
        lamp=lamps[25],
        technician=staff["technician"],
        declared_load={
            "kind": "constant_power",
            "parameters": {"power": 90, "voltage": 120},
            "basis": "nameplate",
        },
    )
    bench.readings_add(
        test=test,
        actor=staff["technician"],
        readings=[
            {
                "source_voltage": 120.0,
                "load_voltage": 40.0,
                "glow_seen": "bright",
                "behaviour_seen": "cycling",
            }
        ],
    )
    response = client_for("technician").get(f"/api/powerups/{test.pk}/plot.svg")
    assert response.status_code == 200
    root = ET.fromstring(response.content)
    assert "None" not in response.content.decode()
    assert root.find(".//{http://www.w3.org/2000/svg}g[@class='readings']") is not None


def test_every_reading_status_has_a_marker_both_plots_can_draw():
    from reports.pdf.plot import marker
    from shop.bench.plot_svg import MARKERS
    from shop.physics.judgement import READING_STATUSES

    assert set(READING_STATUSES) <= set(MARKERS)
    shapes = [shape for shape, _, _ in MARKERS.values()]
    assert len(set(shapes)) == len(shapes)  # distinct in shape, not only colour
    for shape, colour, _ in MARKERS.values():
        assert marker(shape, 10.0, 10.0, colour).contents


def test_the_prediction_says_how_the_lamp_behaves_at_switch_on(client_for, db):
    # A unit of 10 ohm leaves the cold lamp to limit the inrush.
    body = {
        **SPEC,
        "declared_load": {
            "kind": "resistive",
            "parameters": {"resistance": 10},
            "basis": "estimate",
        },
    }
    answer = client_for("technician").post("/api/predict/", body, format="json").json()
    switch_on = answer["switch_on"]
    # A cold filament's inrush is many times its running current (the
    # 10-15x of rated current for a lamp alone is checked in tests/physics).
    assert switch_on["inrush_peak_current"] > 3 * switch_on["steady_current"]
    # Into a fixed resistance the filament only warms towards its steady glow: no flash.
    assert switch_on["behaviour"] == "steady"
    assert 0 < switch_on["settle_time"] < 0.5
    assert switch_on["glow_over_time"][0]["time"] > 0
