"""Bad input is a 400 that names the field, and nothing is half-written."""

from __future__ import annotations

from datetime import timedelta

import pytest
from django.utils import timezone

from shop.intake.models import Customer, Job, Unit

GOOD_UNIT = {"category": "radio", "maker": "Larkfield", "rated_voltage": "120", "rated_power": "40"}


@pytest.mark.parametrize(
    ("field", "value"),
    [
        ("rated_power", "0"),
        ("rated_power", "-5"),
        ("rated_voltage", "50000"),
        ("rated_voltage", "NaN"),
        ("rated_voltage", "Infinity"),
        ("rated_power", "forty"),
        ("category", "spaceship"),
        ("construction", "magic"),
        ("protection_class", "IV"),
        ("fuse_rating", "1000"),
        ("year", 1066),
        ("maker", ""),
    ],
)
def test_absurd_unit_values_are_refused_by_field(customer, client_for, field, value):
    body = {**GOOD_UNIT, "owner": customer.pk, field: value}
    response = client_for("front_desk").post("/api/units/", body, format="json")
    assert response.status_code == 400
    error = response.json()["error"]
    assert error["field"] == field
    assert field in error["message"]
    assert Unit.objects.count() == 0


def test_missing_fields_are_all_named(client_for, db):
    response = client_for("front_desk").post("/api/units/", {}, format="json")
    assert response.status_code == 400
    assert {"owner", "category", "maker", "rated_voltage", "rated_power"} <= set(
        response.json()["error"]["fields"]
    )


def test_malformed_json_is_a_400_not_a_500(client_for, db):
    response = client_for("front_desk").post(
        "/api/customers/", data=b'{"name": ', content_type="application/json"
    )
    assert response.status_code == 400
    assert response.json()["error"]["code"] == "parse_error"
    assert Customer.objects.count() == 0


def test_wrong_content_type_is_415(client_for, db):
    response = client_for("front_desk").post(
        "/api/customers/", data=b"name=x", content_type="text/csv"
    )
    assert response.status_code == 415


def test_promised_before_received_is_refused(unit, client_for):
    response = client_for("front_desk").post(
        "/api/jobs/",
        {
            "unit": unit.pk,
            "complaint": "Dead",
            "received_on": "2026-11-20",
            "promised_on": "2026-11-01",
        },
        format="json",
    )
    assert response.status_code == 400
    assert response.json()["error"]["field"] == "promised_on"
    assert Job.objects.count() == 0


def test_assigning_a_non_technician_is_refused(unit, client_for, staff):
    response = client_for("lead").post(
        "/api/jobs/",
        {"unit": unit.pk, "complaint": "Dead", "assigned_technician": staff["front_desk"].pk},
        format="json",
    )
    assert response.status_code == 400
    assert response.json()["error"]["field"] == "assigned_technician"
    assert Job.objects.count() == 0


def test_a_bad_part_is_named_by_its_position(job, client_for):
    response = client_for("technician").post(
        "/api/steps/",
        {
            "job": job.pk,
            "action": "Recapped",
            "parts": [{"part": "47 uF 450 V", "quantity": 2}, {"part": "", "quantity": -1}],
        },
        format="json",
    )
    assert response.status_code == 400
    assert set(response.json()["error"]["fields"]) == {"parts.1.part", "parts.1.quantity"}


@pytest.mark.parametrize(
    "performed_at", ["1900-01-01T10:00:00Z", "1999-12-31T23:59:00Z", "2099-01-01T10:00:00Z"]
)
def test_a_step_time_long_past_or_in_the_future_is_refused_by_name(job, client_for, performed_at):
    response = client_for("technician").post(
        "/api/steps/",
        {"job": job.pk, "action": "Checked fuse", "performed_at": performed_at},
        format="json",
    )
    assert response.status_code == 400, response.content
    assert response.json()["error"]["field"] == "performed_at"
    assert not job.steps.exists()


def test_a_step_time_within_the_clock_skew_or_earlier_today_is_accepted(job, client_for):
    for moment in (timezone.now() + timedelta(minutes=4), timezone.now() - timedelta(hours=3)):
        response = client_for("technician").post(
            "/api/steps/",
            {"job": job.pk, "action": "Checked fuse", "performed_at": moment.isoformat()},
            format="json",
        )
        assert response.status_code == 201, response.content


def test_a_job_unit_cannot_be_swapped(job, customer, client_for, staff):
    from shop.intake import services

    other = services.unit_create(
        actor=staff["front_desk"],
        owner=customer,
        category="radio",
        maker="Other",
        rated_voltage=120,
        rated_power=30,
    )
    response = client_for("lead").patch(f"/api/jobs/{job.pk}/", {"unit": other.pk}, format="json")
    assert response.status_code == 400
    assert response.json()["error"]["field"] == "unit"


def test_unknown_paths_answer_json_404(client_for, db):
    response = client_for("lead").get("/api/nothing-here/")
    assert response.status_code == 404
    assert response.json()["error"]["code"] == "not_found"


def test_a_request_django_refuses_before_any_view_still_gets_the_error_shape(client, db):
    fields = "&".join(f"f{i}=x" for i in range(1500))  # over DATA_UPLOAD_MAX_NUMBER_FIELDS
    response = client.post(
        "/admin/login/", data=fields, content_type="application/x-www-form-urlencoded"
    )
    assert response.status_code == 400
    assert response.json()["error"]["code"] == "bad_request"
