"""Opening a power-up test: the live-chassis rule, lamp technology, rig ratings, defaults."""

from __future__ import annotations

from decimal import Decimal

import pytest

from shop.bench.models import PowerUpTest
from shop.intake import services as intake


@pytest.fixture
def hot_job(customer, staff):
    unit = intake.unit_create(
        actor=staff["front_desk"],
        owner=customer,
        category="radio",
        maker="Halvorsen",
        model_name="Mantel Five",
        rated_voltage=Decimal("120"),
        rated_power=Decimal("30"),
        construction="transformerless",
    )
    return intake.job_create(actor=staff["front_desk"], unit=unit, complaint="Dead")


def open_body(job, rig, lamp, **extra):
    return {"job": job.pk, "rig": rig.pk, "lamp": lamp.pk, **extra}


def test_a_live_chassis_unit_on_a_rig_without_isolation_is_refused_with_409(
    hot_job, bare_rig, client_for
):
    from tests.fixtures_bench import make_lamp

    lamp = make_lamp(bare_rig, 60)
    response = client_for("technician").post(
        "/api/powerups/", open_body(hot_job, bare_rig, lamp), format="json"
    )
    assert response.status_code == 409
    assert response.json()["error"]["code"] == "isolation_required"
    assert PowerUpTest.objects.count() == 0


def test_a_technician_cannot_override_the_isolation_rule(hot_job, bare_rig, client_for):
    from tests.fixtures_bench import make_lamp

    lamp = make_lamp(bare_rig, 60)
    response = client_for("technician").post(
        "/api/powerups/",
        open_body(hot_job, bare_rig, lamp, live_chassis_override="I am careful"),
        format="json",
    )
    assert response.status_code == 403
    assert PowerUpTest.objects.count() == 0


def test_a_lead_override_is_kept_and_shown(hot_job, bare_rig, client_for, staff):
    from tests.fixtures_bench import make_lamp

    lamp = make_lamp(bare_rig, 60)
    reason = "Unit fitted with its own isolating transformer during repair; verified by meter."
    response = client_for("lead").post(
        "/api/powerups/",
        open_body(hot_job, bare_rig, lamp, live_chassis_override=reason),
        format="json",
    )
    assert response.status_code == 201, response.content
    body = response.json()
    assert body["live_chassis_override"] == reason
    assert body["override_by"] == staff["lead"].pk
    assert body["chassis_may_be_live"] is True
    detail = client_for("front_desk").get(f"/api/powerups/{body['id']}/").json()
    assert detail["live_chassis_override"] == reason


def test_a_live_chassis_unit_on_an_isolated_rig_opens(hot_job, rig, lamps, client_for):
    response = client_for("technician").post(
        "/api/powerups/", open_body(hot_job, rig, lamps[40]), format="json"
    )
    assert response.status_code == 201


@pytest.mark.parametrize("technology", ["led", "compact_fluorescent"])
def test_lamps_that_do_not_limit_current_are_refused(rig, client_for, technology):
    response = client_for("lead").post(
        "/api/lamps/",
        {
            "rig": rig.pk,
            "label": "bulb",
            "technology": technology,
            "rated_voltage": "120",
            "rated_power": "9",
        },
        format="json",
    )
    assert response.status_code == 400
    error = response.json()["error"]
    assert error["field"] == "technology"
    assert "do not limit current" in error["message"]


def test_declared_draw_beyond_the_rig_ratings_is_warned(testing_job, rig, lamps, client_for):
    response = client_for("technician").post(
        "/api/powerups/",
        open_body(
            testing_job,
            rig,
            lamps[150],
            declared_load={
                "kind": "resistive",
                "parameters": {"power": 500, "voltage": 120},
                "basis": "estimate",
            },
        ),
        format="json",
    )
    assert response.status_code == 201
    warnings = response.json()["warnings"]
    assert any("source's 3 A rating" in w for w in warnings)
    assert any("300 VA" in w for w in warnings)


def test_the_default_declared_load_comes_from_the_nameplate(testing_job, rig, lamps, client_for):
    response = client_for("technician").post(
        "/api/powerups/", open_body(testing_job, rig, lamps[60]), format="json"
    )
    document = response.json()["declared_load"]
    assert (document["kind"], document["basis"]) == ("nameplate", "nameplate")
    assert document["parameters"] == {
        "power": 60.0,
        "voltage": 120.0,
        "power_unit": "W",
        "category": "radio",
        "construction": "isolating_transformer",
        "frequency": "unknown",
    }


def test_an_amplifier_nameplate_default_says_it_idles_lower(
    customer, rig, lamps, client_for, staff
):
    unit = intake.unit_create(
        actor=staff["front_desk"],
        owner=customer,
        category="amplifier",
        maker="Ashgrove",
        rated_voltage=Decimal("120"),
        rated_power=Decimal("95"),
        construction="isolating_transformer",
    )
    job = intake.job_create(actor=staff["front_desk"], unit=unit, complaint="Hum")
    response = client_for("technician").post(
        "/api/powerups/", open_body(job, rig, lamps[60]), format="json"
    )
    assert any("idle" in c for c in response.json()["declared_load"]["cautions"])


@pytest.mark.parametrize(
    ("declared_load", "field"),
    [
        ({"kind": "plasma", "parameters": {}, "basis": "estimate"}, "declared_load.kind"),
        (
            {"kind": "resistive", "parameters": {"power": 0, "voltage": 120}, "basis": "estimate"},
            "declared_load.parameters.power",
        ),
        (
            {"kind": "resistive", "parameters": {"power": 60}, "basis": "estimate"},
            "declared_load.parameters.voltage",
        ),
        (
            {"kind": "resistive", "parameters": {"resistance": 100}, "basis": "guess"},
            "declared_load.basis",
        ),
    ],
)
def test_bad_declared_loads_are_refused_by_field(
    testing_job, rig, lamps, client_for, declared_load, field
):
    response = client_for("technician").post(
        "/api/powerups/",
        open_body(testing_job, rig, lamps[60], declared_load=declared_load),
        format="json",
    )
    assert response.status_code == 400
    assert field in response.json()["error"]["fields"]
    assert PowerUpTest.objects.count() == 0


def test_a_lamp_of_another_rig_is_refused(testing_job, rig, bare_rig, client_for):
    from tests.fixtures_bench import make_lamp

    lamp = make_lamp(bare_rig, 60)
    response = client_for("technician").post(
        "/api/powerups/", open_body(testing_job, rig, lamp), format="json"
    )
    assert response.status_code == 400
    assert response.json()["error"]["field"] == "lamp"


def test_an_overdue_meter_is_flagged_on_the_test(
    testing_job, rig, lamps, overdue_meter, client_for
):
    response = client_for("technician").post(
        "/api/powerups/",
        open_body(testing_job, rig, lamps[60], source_meter=overdue_meter.pk),
        format="json",
    )
    flags = response.json()["calibration_flags"]
    assert len(flags) == 1 and "past its calibration due date" in flags[0]
