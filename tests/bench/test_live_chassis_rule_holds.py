"""The live-chassis rule holds on the facts a test was opened with, whoever edits the unit."""

from __future__ import annotations

from decimal import Decimal

import pytest

from reports import services as reports
from reports.selectors import snapshot_of
from shop.bench import services as bench
from shop.bench.models import PowerUpTest
from shop.core.models import AuditEvent
from shop.intake import services as intake
from shop.intake.models import Unit
from tests.fixtures_bench import HEALTHY_60W_READINGS, make_lamp
from tests.jobs import walk

REASON = "Opened up on the bench: a proper isolating mains transformer, checked by meter."


@pytest.fixture
def hot_unit(customer, staff):
    return intake.unit_create(
        actor=staff["front_desk"],
        owner=customer,
        category="radio",
        maker="Halvorsen",
        model_name="Mantel Five",
        rated_voltage=Decimal("120"),
        rated_power=Decimal("60"),
        construction="transformerless",
    )


@pytest.fixture
def hot_job(hot_unit, staff):
    job = intake.job_create(actor=staff["front_desk"], unit=hot_unit, complaint="Dead")
    job = walk(job, ("diagnosing", "awaiting_approval", "repairing", "testing"), staff["lead"])
    return job


def patch_unit(client, unit, **body):
    return client.patch(f"/api/units/{unit.pk}/", body, format="json")


def test_a_technician_cannot_make_a_live_chassis_unit_look_isolated(hot_unit, client_for):
    response = patch_unit(client_for("technician"), hot_unit, construction="isolating_transformer")
    assert response.status_code == 403, response.content
    error = response.json()["error"]
    assert (error["code"], error["field"]) == ("lead_required", "construction")
    hot_unit.refresh_from_db()
    assert hot_unit.construction == "transformerless"


@pytest.mark.parametrize(
    ("field", "value"),
    [("protection_class", "II"), ("rated_frequency", "60"), ("construction", "switch_mode")],
)
def test_front_desk_cannot_state_away_an_unknown(customer, staff, client_for, field, value):
    unit = intake.unit_create(
        actor=staff["front_desk"],
        owner=customer,
        category="other",
        maker="Nameless",
        rated_voltage=Decimal("230"),
        rated_power=Decimal("40"),
    )
    response = patch_unit(client_for("front_desk"), unit, **{field: value})
    assert response.status_code == 403
    assert response.json()["error"]["field"] == field


def test_a_lead_lowers_the_hazard_only_with_a_reason_kept_in_the_audit_trail(hot_unit, client_for):
    lead = client_for("lead")
    refused = patch_unit(lead, hot_unit, construction="isolating_transformer")
    assert refused.status_code == 400
    assert refused.json()["error"]["field"] == "hazard_change_reason"
    accepted = patch_unit(
        lead, hot_unit, construction="isolating_transformer", hazard_change_reason=REASON
    )
    assert accepted.status_code == 200, accepted.content
    assert accepted.json()["chassis_may_be_live"] is False
    event = AuditEvent.objects.get(action="unit.rule_facts_change", object_id=str(hot_unit.pk))
    assert event.changes["reason"] == REASON
    assert event.changes["fields"] == ["construction"]
    assert event.changes["before"]["construction"] == "transformerless"
    assert event.changes["after"]["construction"] == "isolating_transformer"


def test_raising_the_hazard_of_an_untested_unit_is_open_to_the_bench(unit, client_for):
    response = patch_unit(client_for("technician"), unit, construction="transformerless")
    assert response.status_code == 200, response.content
    assert response.json()["chassis_may_be_live"] is True


def test_once_powered_up_a_nameplate_change_is_a_leads_act(open_test, client_for):
    unit = open_test.job.unit
    response = patch_unit(client_for("technician"), unit, rated_power="90")
    assert response.status_code == 403
    assert response.json()["error"]["field"] == "rated_power"
    # Notes and other non-rule fields stay open to every role.
    assert (
        patch_unit(client_for("technician"), unit, model_name="Console 7 (late)").status_code == 200
    )


def test_a_test_shows_the_facts_it_was_opened_with_after_the_unit_changes(
    hot_job, rig, lamps, staff, client_for
):
    test = bench.powerup_open(job=hot_job, rig=rig, lamp=lamps[60], technician=staff["technician"])
    intake.unit_update(
        unit=hot_job.unit,
        expected_version=None,
        actor=staff["lead"],
        construction="isolating_transformer",
        hazard_change_reason=REASON,
    )
    body = client_for("technician").get(f"/api/powerups/{test.pk}/").json()
    assert body["chassis_may_be_live"] is True
    assert body["unit_facts"]["construction"] == "transformerless"
    bench.readings_add(test=test, readings=HEALTHY_60W_READINGS, actor=staff["technician"])
    verdict = bench.powerup_close(test=test, actor=staff["technician"])
    assert verdict.inputs["unit_facts"]["construction"] == "transformerless"


def test_the_walk_around_the_isolation_rule_no_longer_works(
    hot_job, rig, bare_rig, lamps, staff, client_for
):
    """Refused on a bare rig, the technician tries to restate the unit as isolated; whatever
    happens to the record afterwards, the certificate warns of the live chassis."""
    technician = client_for("technician")
    bare_lamp = make_lamp(bare_rig, 60)
    refused = technician.post(
        "/api/powerups/",
        {"job": hot_job.pk, "rig": bare_rig.pk, "lamp": bare_lamp.pk},
        format="json",
    )
    assert refused.status_code == 409
    assert refused.json()["error"]["code"] == "isolation_required"
    flipped = patch_unit(technician, hot_job.unit, construction="isolating_transformer")
    assert flipped.status_code == 403
    again = technician.post(
        "/api/powerups/",
        {"job": hot_job.pk, "rig": bare_rig.pk, "lamp": bare_lamp.pk},
        format="json",
    )
    assert again.status_code == 409
    # Tested properly, through isolation, as the live-chassis unit it is.
    opened = technician.post(
        "/api/powerups/",
        {"job": hot_job.pk, "rig": rig.pk, "lamp": lamps[60].pk},
        format="json",
    )
    assert opened.status_code == 201, opened.content
    test = PowerUpTest.objects.get(pk=opened.json()["id"])
    bench.readings_add(test=test, readings=HEALTHY_60W_READINGS, actor=staff["technician"])
    bench.powerup_close(test=test, actor=staff["technician"])
    # A lead later restates the construction (with a reason); the certificate still says
    # what the unit was tested as, warns of the live chassis and notes the change.
    intake.unit_update(
        unit=Unit.objects.get(pk=hot_job.unit_id),
        expected_version=None,
        actor=staff["lead"],
        construction="isolating_transformer",
        hazard_change_reason=REASON,
    )
    certificate = reports.certificate_issue(job=hot_job, issued_by=staff["lead"])
    snapshot = snapshot_of(certificate)
    assert snapshot["live_chassis_note"]
    assert snapshot["unit"]["construction"] == "Transformerless (hot chassis)"
    assert snapshot["unit"]["chassis_may_be_live"] is True
    assert "transformerless" in snapshot["unit"]["changed_since_tested"][0]
    assert snapshot["tests"][0]["unit_as_tested"]["construction"] == (
        "Transformerless (hot chassis)"
    )


def test_a_lead_override_keeps_the_technician_who_takes_the_readings(
    hot_job, bare_rig, staff, client_for
):
    lamp = make_lamp(bare_rig, 60)
    response = client_for("lead").post(
        "/api/powerups/",
        {
            "job": hot_job.pk,
            "rig": bare_rig.pk,
            "lamp": lamp.pk,
            "technician": staff["technician"].username,
            "live_chassis_override": "Unit's own isolating transformer fitted and checked.",
        },
        format="json",
    )
    assert response.status_code == 201, response.content
    body = response.json()
    assert body["technician"] == staff["technician"].username
    assert body["override_by"] == staff["lead"].pk
    assert body["opened_by"] == staff["lead"].pk


def test_a_lead_cannot_name_someone_off_the_bench_to_take_readings(
    hot_job, rig, lamps, staff, client_for
):
    response = client_for("lead").post(
        "/api/powerups/",
        {
            "job": hot_job.pk,
            "rig": rig.pk,
            "lamp": lamps[60].pk,
            "technician": staff["front_desk"].username,
        },
        format="json",
    )
    assert response.status_code == 400
    assert response.json()["error"]["field"] == "technician"


def test_adding_readings_changes_the_tests_etag(open_test, client_for, staff):
    client = client_for("technician")
    before = client.get(f"/api/powerups/{open_test.pk}/")["ETag"]
    added = client.post(
        f"/api/powerups/{open_test.pk}/readings/", HEALTHY_60W_READINGS[0], format="json"
    )
    assert added.status_code == 201
    after = client.get(f"/api/powerups/{open_test.pk}/")["ETag"]
    assert after != before
    stale = client.patch(
        f"/api/powerups/{open_test.pk}/", {"notes": "late"}, format="json", HTTP_IF_MATCH=before
    )
    assert stale.status_code == 412


def test_a_rig_edit_after_open_does_not_rewrite_the_isolation_the_test_had(
    hot_job, rig, lamps, staff
):
    test = bench.powerup_open(job=hot_job, rig=rig, lamp=lamps[60], technician=staff["technician"])
    bench.readings_add(test=test, readings=HEALTHY_60W_READINGS, actor=staff["technician"])
    bench.powerup_close(test=test, actor=staff["technician"])
    bench.rig_update(
        rig=rig, expected_version=None, actor=staff["lead"], isolation_transformer=False
    )
    snapshot = snapshot_of(reports.certificate_issue(job=hot_job, issued_by=staff["lead"]))
    assert snapshot["tests"][0]["rig"]["isolation"].startswith("Isolation transformer")
    assert snapshot["live_chassis_note"]
