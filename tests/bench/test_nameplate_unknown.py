"""A unit without a legible nameplate: recorded, then tested only on a load a lead declares."""

from __future__ import annotations

import pytest

from shop.bench.models import PowerUpTest
from shop.intake import services as intake
from tests.jobs import walk

DECLARED = {"kind": "resistive", "parameters": {"power": 40, "voltage": 120}, "basis": "estimate"}


@pytest.fixture
def blank_unit(client_for, customer):
    response = client_for("front_desk").post(
        "/api/units/",
        {
            "owner": customer.pk,
            "category": "home_built",
            "maker": "Unknown builder",
            "rated_voltage": None,
            "rated_power": None,
            "construction": "isolating_transformer",
        },
        format="json",
    )
    assert response.status_code == 201, response.content
    return response.json()


@pytest.fixture
def blank_job(blank_unit, staff):
    from shop.intake.models import Unit

    unit = Unit.objects.get(pk=blank_unit["id"])
    job = intake.job_create(actor=staff["front_desk"], unit=unit, complaint="Never worked.")
    return walk(job, ["diagnosing", "awaiting_approval", "repairing", "testing"], staff["lead"])


def test_a_unit_without_a_legible_nameplate_is_recorded(blank_unit):
    assert (blank_unit["rated_voltage"], blank_unit["rated_power"]) == (None, None)
    assert blank_unit["nameplate_known"] is False


@pytest.mark.parametrize("declared_load", [None, DECLARED])
def test_a_technician_cannot_open_a_test_on_it(blank_job, rig, lamps, client_for, declared_load):
    body = {"job": blank_job.pk, "rig": rig.pk, "lamp": lamps[60].pk}
    if declared_load:
        body["declared_load"] = declared_load
    response = client_for("technician").post("/api/powerups/", body, format="json")
    assert response.status_code == 409, response.content
    error = response.json()["error"]
    assert (error["code"], error["field"]) == ("nameplate_unknown", "declared_load")
    assert "rated voltage unknown" in error["message"]
    assert not PowerUpTest.objects.exists()


def test_a_lead_must_still_declare_the_load(blank_job, rig, lamps, client_for):
    response = client_for("lead").post(
        "/api/powerups/",
        {"job": blank_job.pk, "rig": rig.pk, "lamp": lamps[60].pk},
        format="json",
    )
    assert response.status_code == 409
    assert response.json()["error"]["code"] == "nameplate_unknown"


def test_once_a_lead_declares_the_load_the_test_opens_and_stays_the_leads(
    blank_job, rig, lamps, client_for
):
    lead = client_for("lead")
    response = lead.post(
        "/api/powerups/",
        {"job": blank_job.pk, "rig": rig.pk, "lamp": lamps[60].pk, "declared_load": DECLARED},
        format="json",
    )
    assert response.status_code == 201, response.content
    test_id = response.json()["id"]
    # The technician may not swap the lead's declared load for another.
    changed = {**DECLARED, "parameters": {"power": 400, "voltage": 120}}
    refused = client_for("technician").patch(
        f"/api/powerups/{test_id}/", {"declared_load": changed}, format="json"
    )
    assert refused.status_code == 409
    assert refused.json()["error"]["code"] == "nameplate_unknown"
    assert PowerUpTest.objects.get(pk=test_id).declared_load["parameters"]["power"] == 40
    accepted = lead.patch(f"/api/powerups/{test_id}/", {"declared_load": changed}, format="json")
    assert accepted.status_code == 200, accepted.content


def test_lamp_advice_for_it_answers_409_not_500(blank_unit, rig, client_for):
    response = client_for("technician").get(
        f"/api/units/{blank_unit['id']}/lamp-advice/", {"rig": rig.pk}
    )
    assert response.status_code == 409
    assert response.json()["error"]["code"] == "nameplate_unknown"


def test_its_receipt_says_the_nameplate_was_not_legible(blank_job, client_for):
    response = client_for("front_desk").get(f"/api/jobs/{blank_job.pk}/receipt.pdf")
    assert response.status_code == 200
    assert response.content.startswith(b"%PDF")
