"""The audit trail: every write leaves one event in its own transaction, and only leads read it."""

from __future__ import annotations

import hashlib
import json

import pytest
from django.core.exceptions import ValidationError

from shop.core.models import AuditEvent


def test_an_api_write_leaves_one_event_with_actor_and_digest(client_for, staff, db):
    response = client_for("front_desk").post(
        "/api/customers/", {"name": "Ines Albarracin"}, format="json"
    )
    event = AuditEvent.objects.get(action="customer.create")
    assert event.actor == staff["front_desk"]
    assert (event.object_type, event.object_id) == ("intake.customer", str(response.json()["id"]))
    assert event.changes["name"] == "Ines Albarracin"
    canonical = json.dumps(event.changes, sort_keys=True, separators=(",", ":"))
    assert event.digest == hashlib.sha256(canonical.encode()).hexdigest()


def test_a_refused_write_leaves_no_event(job, client_for):
    before = AuditEvent.objects.count()
    response = client_for("lead").post(
        f"/api/jobs/{job.pk}/transition/", {"to_state": "ready"}, format="json"
    )
    assert response.status_code == 409
    assert AuditEvent.objects.count() == before


def test_a_rolled_back_batch_of_readings_leaves_no_event(open_test, client_for):
    before = AuditEvent.objects.count()
    response = client_for("technician").post(
        f"/api/powerups/{open_test.pk}/readings/",
        {
            "readings": [
                {"source_voltage": 30, "load_voltage": 28, "glow_seen": "dark"},
                {"source_voltage": 400, "load_voltage": 28, "glow_seen": "dark"},
            ]
        },
        format="json",
    )
    assert response.status_code == 400
    assert AuditEvent.objects.count() == before


def test_moves_steps_tests_and_certificates_are_all_recorded(open_test, client_for, staff):
    client = client_for("lead")
    client.post(
        f"/api/powerups/{open_test.pk}/readings/",
        {"source_voltage": 30, "load_voltage": 28, "glow_seen": "dark"},
        format="json",
    )
    client.post(f"/api/powerups/{open_test.pk}/close/", {}, format="json")
    client.post("/api/certificates/", {"job": open_test.job_id}, format="json")
    actions = set(AuditEvent.objects.values_list("action", flat=True))
    assert {
        "job.create",
        "job.transition",
        "powerup.open",
        "readings.add",
        "powerup.close",
        "verdict.store",
        "certificate.issue",
        "rig.create",
        "lamp.create",
        "instrument.create",
        "calibration.add",
    } <= actions


@pytest.mark.parametrize(
    ("role", "status"), [("lead", 200), ("technician", 403), ("front_desk", 403), (None, 401)]
)
def test_only_leads_read_the_audit_trail(job, client_for, role, status):
    response = client_for(role).get("/api/audit/", {"action": "job.create"})
    assert response.status_code == status
    if status == 200:
        assert response.json()["count"] == 1


def test_audit_events_are_never_changed_or_deleted(job):
    event = AuditEvent.objects.first()
    with pytest.raises(ValidationError):
        event.save()
    with pytest.raises(ValidationError):
        AuditEvent.objects.update(action="x")
    with pytest.raises(ValidationError):
        AuditEvent.objects.all().delete()


def test_revoking_a_token_is_recorded_and_token_keys_are_not_in_the_admin(staff, client_for):
    from django.contrib import admin

    from shop.core.models import ApiToken

    response = client_for("technician").post("/api/auth/token/revoke/", {}, format="json")
    assert response.status_code == 200
    event = AuditEvent.objects.get(action="token.revoke")
    assert event.actor == staff["technician"]
    assert not admin.site.is_registered(ApiToken)
