"""Intake: likely duplicates answered with a warning; the condition at intake is the job's."""

from __future__ import annotations

from shop.intake.models import Customer, Unit

UNIT = {
    "category": "radio",
    "maker": "Brightwave",
    "model_name": "Console 7",
    "rated_voltage": "120",
    "rated_power": "60",
}


def test_a_unit_of_the_same_maker_and_serial_answers_201_with_a_warning(client_for, unit):
    response = client_for("front_desk").post(
        "/api/units/",
        {**UNIT, "owner": unit.owner_id, "maker": "BRIGHTWAVE", "serial": " bw-7-0001 "},
        format="json",
    )
    assert response.status_code == 201, response.content
    warnings = response.json()["warnings"]
    assert [w["existing"] for w in warnings] == [{"type": "unit", "id": unit.pk}]
    assert warnings[0]["code"] == "possible_duplicate_unit"
    assert f"unit {unit.pk}" in warnings[0]["message"]
    assert Unit.objects.count() == 2


def test_a_unit_with_another_serial_or_none_has_no_warning(client_for, unit):
    desk = client_for("front_desk")
    for serial in ("BW-7-0002", ""):
        response = desk.post(
            "/api/units/", {**UNIT, "owner": unit.owner_id, "serial": serial}, format="json"
        )
        assert response.status_code == 201
        assert response.json()["warnings"] == []


def test_a_customer_of_the_same_name_and_phone_answers_201_with_a_warning(client_for, customer):
    response = client_for("front_desk").post(
        "/api/customers/", {"name": "orla quennell", "phone": "(555) 0142"}, format="json"
    )
    assert response.status_code == 201, response.content
    warnings = response.json()["warnings"]
    assert [w["existing"] for w in warnings] == [{"type": "customer", "id": customer.pk}]
    assert Customer.objects.count() == 2


def test_a_namesake_with_another_phone_has_no_warning(client_for, customer):
    response = client_for("front_desk").post(
        "/api/customers/", {"name": "Orla Quennell", "phone": "555-0199"}, format="json"
    )
    assert response.status_code == 201
    assert response.json()["warnings"] == []


def test_reads_carry_an_empty_warnings_list(client_for, customer, unit):
    lead = client_for("lead")
    assert lead.get(f"/api/customers/{customer.pk}/").json()["warnings"] == []
    assert lead.get(f"/api/units/{unit.pk}/").json()["warnings"] == []


def test_condition_at_intake_is_recorded_on_the_job_not_the_unit(client_for, unit):
    desk = client_for("front_desk")
    response = desk.post(
        "/api/jobs/",
        {"unit": unit.pk, "complaint": "Hum.", "condition_at_intake": "Knob missing."},
        format="json",
    )
    assert response.status_code == 201, response.content
    assert response.json()["condition_at_intake"] == "Knob missing."
    assert "condition_notes" not in desk.get(f"/api/units/{unit.pk}/").json()
