"""The lead's admin: the promised permissions, append-only records refused, writes audited."""

from __future__ import annotations

from decimal import Decimal

import pytest
from django.contrib.auth.models import Group, User
from django.test import Client

from shop.bench.models import CalibrationRecord, Rig
from shop.core.models import AuditEvent
from shop.intake import services as intake
from shop.intake.models import CustomerDecision

pytestmark = pytest.mark.django_db

RIG_FORM = {
    "name": "Bench C 230 V",
    "mains_voltage": "230",
    "mains_frequency": "50",
    "source_kind": "fixed_mains",
    "source_current_rating": "5",
    "internal_resistance": "1.5",
    "builtin_meter_point": "rig_output",
}


@pytest.fixture
def lead_admin(staff) -> Client:
    """The lead signed in to the admin (a lead account has staff status, as the demo's has)."""
    lead = staff["lead"]
    lead.is_staff = True
    lead.save(update_fields=["is_staff"])
    client = Client()
    client.force_login(lead)
    return client


@pytest.fixture
def superuser(db) -> User:
    return User.objects.create_superuser("root_rosa", password="not-a-real-pw-1")


def test_the_lead_group_holds_the_promised_permissions(db):
    granted = set(
        Group.objects.get(name="lead").permissions.values_list(
            "content_type__app_label", "codename"
        )
    )
    promised = {
        ("core", "view_auditevent"),
        ("auth", "add_user"),
        ("auth", "change_user"),
        ("bench", "add_rig"),
        ("bench", "change_rig"),
        ("bench", "change_lamp"),
        ("bench", "change_instrument"),
        ("bench", "add_calibrationrecord"),
        ("intake", "view_job"),
        ("intake", "view_repairstep"),
        ("reports", "view_certificate"),
    }
    assert promised <= granted
    # Written once: no change or delete permission on any append-only record.
    for codename in ("repairstep", "evidence", "verdict", "certificate", "auditevent"):
        assert not {c for _, c in granted if c in {f"change_{codename}", f"delete_{codename}"}}


def test_the_leads_admin_is_not_empty(lead_admin):
    response = lead_admin.get("/admin/")
    assert response.status_code == 200
    page = response.content.decode()
    assert "have permission to view or edit anything" not in page
    for section in ("Audit events", "Rigs", "Lamps", "Instruments", "Users", "Jobs"):
        assert section in page, section


@pytest.mark.parametrize(
    "path",
    [
        "/admin/core/auditevent/",
        "/admin/intake/job/",
        "/admin/intake/repairstep/",
        "/admin/bench/rig/",
        "/admin/bench/calibrationrecord/",
        "/admin/reports/certificate/",
        "/admin/auth/user/",
    ],
)
def test_the_lead_reads_every_list(lead_admin, path):
    assert lead_admin.get(path).status_code == 200


def test_a_lead_adds_and_edits_a_rig_and_each_write_is_audited(lead_admin, staff):
    response = lead_admin.post("/admin/bench/rig/add/", RIG_FORM)
    assert response.status_code == 302, response.content.decode()[:2000]
    rig = Rig.objects.get(name="Bench C 230 V")
    added = AuditEvent.objects.get(action="rig.admin_add", object_id=str(rig.pk))
    assert added.actor == staff["lead"]
    assert added.changes["mains_voltage"] == "230"

    response = lead_admin.post(
        f"/admin/bench/rig/{rig.pk}/change/", {**RIG_FORM, "internal_resistance": "2.5"}
    )
    assert response.status_code == 302
    changed = AuditEvent.objects.get(action="rig.admin_change", object_id=str(rig.pk))
    assert changed.changes == {"internal_resistance": "2.5"}
    rig.refresh_from_db()
    # Clients holding the old ETag must get 412 instead of overwriting the lead's change.
    assert (rig.internal_resistance, rig.version) == (Decimal("2.5"), 2)

    response = lead_admin.post(f"/admin/bench/rig/{rig.pk}/delete/", {"post": "yes"})
    assert response.status_code == 302
    assert not Rig.objects.filter(pk=rig.pk).exists()
    assert AuditEvent.objects.filter(action="rig.admin_delete", object_id=str(rig.pk)).exists()


def test_a_refused_admin_write_leaves_no_event(lead_admin):
    before = AuditEvent.objects.count()
    response = lead_admin.post("/admin/bench/rig/add/", {**RIG_FORM, "mains_voltage": "9999"})
    assert response.status_code == 200  # the form again, with its error
    assert AuditEvent.objects.count() == before


def test_admin_calibration_goes_through_the_service(lead_admin, meter, staff):
    response = lead_admin.post(
        "/admin/bench/calibrationrecord/add/",
        {
            "instrument": meter.pk,
            "calibrated_on": "2026-03-01",
            "due_on": "2027-03-01",
            "reference": "Lab ref 17",
            "paired_readings": '[{"reference": 100, "indicated": 101}, '
            '{"reference": 200, "indicated": 202}]',
        },
    )
    assert response.status_code == 302, response.content.decode()[:3000]
    record = CalibrationRecord.objects.get(reference="Lab ref 17")
    assert record.recorded_by == staff["lead"]
    assert record.correction_gain == pytest.approx(1 / 1.01, rel=1e-6)
    assert AuditEvent.objects.filter(action="calibration.add", object_id=str(record.pk)).exists()


def test_admin_calibration_with_the_due_date_first_is_refused_on_the_form(lead_admin, meter):
    response = lead_admin.post(
        "/admin/bench/calibrationrecord/add/",
        {
            "instrument": meter.pk,
            "calibrated_on": "2026-03-01",
            "due_on": "2025-03-01",
            "reference": "Lab ref 18",
            "paired_readings": "[]",
        },
    )
    assert response.status_code == 200
    assert "The due date must be after the calibration date." in response.content.decode()
    assert not CalibrationRecord.objects.filter(reference="Lab ref 18").exists()


def test_append_only_records_stay_refused_in_the_admin(lead_admin, job, staff):
    step = intake.repair_step_add(job=job, technician=staff["technician"], action="Recapped.")
    event = AuditEvent.objects.first()
    for path in (f"/admin/intake/repairstep/{step.pk}/", f"/admin/core/auditevent/{event.pk}/"):
        assert lead_admin.get(f"{path}change/").status_code == 200  # shown, read-only
        assert lead_admin.post(f"{path}change/", {"action": "Rewritten."}).status_code == 403
        assert lead_admin.post(f"{path}delete/", {"post": "yes"}).status_code == 403
    step.refresh_from_db()
    assert step.action == "Recapped."
    assert AuditEvent.objects.filter(pk=event.pk).exists()


def test_a_lead_manages_staff_but_cannot_grant_superuser_rights(lead_admin, staff, superuser):
    response = lead_admin.post(
        "/admin/auth/user/add/",
        {
            "username": "desk_dora",
            "password1": "a-long-pass-phrase-9",
            "password2": "a-long-pass-phrase-9",
            "usable_password": "true",
        },
    )
    assert response.status_code == 302, response.content.decode()[:2000]
    dora = User.objects.get(username="desk_dora")
    added = AuditEvent.objects.get(action="user.admin_add", object_id=str(dora.pk))
    assert added.changes["password1"] == "(set)"
    assert "a-long-pass-phrase-9" not in str(added.changes)

    desk = Group.objects.get(name="front_desk")
    response = lead_admin.post(
        f"/admin/auth/user/{dora.pk}/change/",
        {
            "username": "desk_dora",
            "is_active": "on",
            "is_superuser": "on",
            "groups": [desk.pk],
        },
    )
    assert response.status_code == 302, response.content.decode()[:2000]
    dora.refresh_from_db()
    assert not dora.is_superuser
    assert list(dora.groups.values_list("name", flat=True)) == ["front_desk"]
    assert AuditEvent.objects.filter(action="user.admin_change", object_id=str(dora.pk)).exists()

    response = lead_admin.post(
        f"/admin/auth/user/{superuser.pk}/change/", {"username": "taken_over", "is_active": ""}
    )
    assert response.status_code == 403
    superuser.refresh_from_db()
    assert (superuser.username, superuser.is_active) == ("root_rosa", True)


def test_the_admin_shows_the_customers_decision_read_only(lead_admin, job, staff):
    from tests.jobs import walk

    job = walk(job, ["diagnosing", "awaiting_approval", "repairing"], staff["lead"])
    decision = CustomerDecision.objects.get(job=job)
    path = f"/admin/intake/customerdecision/{decision.pk}/"
    assert lead_admin.get(f"{path}change/").status_code == 200
    assert lead_admin.post(f"{path}change/", {"method": "email"}).status_code == 403
