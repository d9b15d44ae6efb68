"""The readiness gate: testing -> ready only after the latest closed test of the unit passed."""

from __future__ import annotations

import pytest
from django.db import connection
from django.test.utils import CaptureQueriesContext

from reports import services as reports
from reports.selectors import snapshot_of
from shop.bench import services as bench
from shop.intake import services as intake
from shop.intake.models import JobState
from tests.fixtures_bench import HEALTHY_60W_READINGS
from tests.jobs import walk

# A shorted unit: the lamp takes nearly all the source and glows bright.
SHORTED = [
    {"source_voltage": 60.0, "load_voltage": 4.0, "glow_seen": "medium"},
    {"source_voltage": 120.0, "load_voltage": 6.0, "glow_seen": "bright"},
]
OVERRIDE = "Customer collects it unrepaired for a second opinion; told of the failed test."


def judged(job, rig, lamp, staff, readings):
    test = bench.powerup_open(job=job, rig=rig, lamp=lamp, technician=staff["technician"])
    bench.readings_add(test=test, readings=readings, actor=staff["technician"])
    return bench.powerup_close(test=test, actor=staff["technician"])


def move_to_ready(client, job, **extra):
    return client.post(
        f"/api/jobs/{job.pk}/transition/", {"to_state": "ready", **extra}, format="json"
    )


def test_a_job_without_a_closed_test_is_refused_ready(testing_job, client_for):
    response = move_to_ready(client_for("technician"), testing_job)
    assert response.status_code == 409
    error = response.json()["error"]
    assert (error["code"], error["field"]) == ("no_closed_test", "to_state")
    testing_job.refresh_from_db()
    assert testing_job.state == JobState.TESTING


def test_a_job_whose_only_test_failed_is_refused_ready(testing_job, rig, lamps, staff, client_for):
    assert judged(testing_job, rig, lamps[60], staff, SHORTED).outcome == "fail"
    response = move_to_ready(client_for("lead"), testing_job)
    assert response.status_code == 409
    error = response.json()["error"]
    assert error["code"] == "latest_test_not_passed"
    assert "'fail'" in error["message"]


def test_a_later_failed_test_outweighs_an_earlier_pass(testing_job, rig, lamps, staff, client_for):
    assert judged(testing_job, rig, lamps[60], staff, HEALTHY_60W_READINGS).outcome == "pass"
    assert judged(testing_job, rig, lamps[60], staff, SHORTED).outcome == "fail"
    assert move_to_ready(client_for("lead"), testing_job).status_code == 409


def test_an_open_test_holds_the_job_back(testing_job, rig, lamps, staff, client_for):
    judged(testing_job, rig, lamps[60], staff, HEALTHY_60W_READINGS)
    bench.powerup_open(job=testing_job, rig=rig, lamp=lamps[60], technician=staff["technician"])
    response = move_to_ready(client_for("lead"), testing_job)
    assert response.status_code == 409
    assert response.json()["error"]["code"] == "test_open"


def test_a_passed_latest_test_lets_the_job_be_ready(testing_job, rig, lamps, staff, client_for):
    judged(testing_job, rig, lamps[60], staff, SHORTED)
    verdict = judged(testing_job, rig, lamps[60], staff, HEALTHY_60W_READINGS)
    response = move_to_ready(client_for("technician"), testing_job)
    assert response.status_code == 200, response.content
    body = response.json()
    assert body["state"] == "ready"
    assert body["latest_verdict"] == {"test": verdict.test_id, "outcome": "pass"}
    assert body["ready_override"] == ""


def test_a_technician_cannot_override_the_gate(testing_job, client_for):
    response = move_to_ready(client_for("technician"), testing_job, ready_override=OVERRIDE)
    assert response.status_code == 403
    assert response.json()["error"]["field"] == "ready_override"


def test_a_leads_override_is_kept_on_the_job_and_printed(
    testing_job, rig, lamps, staff, client_for
):
    judged(testing_job, rig, lamps[60], staff, SHORTED)
    response = move_to_ready(client_for("lead"), testing_job, ready_override=OVERRIDE)
    assert response.status_code == 200, response.content
    body = client_for("front_desk").get(f"/api/jobs/{testing_job.pk}/").json()
    assert body["ready_override"] == OVERRIDE
    assert body["ready_override_by"] == staff["lead"].username
    assert body["latest_verdict"]["outcome"] == "fail"
    certificate = reports.certificate_issue(job=testing_job, issued_by=staff["lead"])
    assert snapshot_of(certificate)["job"]["ready_override"]["reason"] == OVERRIDE


def test_a_ready_job_takes_no_new_test(testing_job, rig, lamps, staff):
    """Otherwise a failed test could be added after the gate let the job through."""
    judged(testing_job, rig, lamps[60], staff, HEALTHY_60W_READINGS)
    job = intake.job_transition(job=testing_job, to_state=JobState.READY, actor=staff["lead"])
    with pytest.raises(Exception) as caught:
        bench.powerup_open(job=job, rig=rig, lamp=lamps[60], technician=staff["technician"])
    assert getattr(caught.value, "code", None) == "job_closed"


def test_the_test_list_carries_each_verdict(testing_job, rig, lamps, staff, client_for):
    verdict = judged(testing_job, rig, lamps[60], staff, SHORTED)
    bench.powerup_open(job=testing_job, rig=rig, lamp=lamps[60], technician=staff["technician"])
    body = client_for("front_desk").get("/api/powerups/").json()
    outcomes = {row["id"]: row["verdict_outcome"] for row in body["results"]}
    assert outcomes[verdict.test_id] == "fail"
    assert sorted(outcomes.values(), key=str) == [None, "fail"]


def _list_queries(client, path):
    with CaptureQueriesContext(connection) as captured:
        assert client.get(path).status_code == 200
    return len(captured)


def test_job_and_test_lists_cost_the_same_queries_for_more_rows(
    testing_job, unit, rig, lamps, staff, client_for
):
    client = client_for("lead")
    judged(testing_job, rig, lamps[60], staff, HEALTHY_60W_READINGS)
    few = (_list_queries(client, "/api/jobs/"), _list_queries(client, "/api/powerups/"))
    for _ in range(3):
        job = intake.job_create(actor=staff["front_desk"], unit=unit, complaint="Again")
        job = walk(job, ("diagnosing", "awaiting_approval", "repairing", "testing"), staff["lead"])
        judged(job, rig, lamps[60], staff, SHORTED)
    many = (_list_queries(client, "/api/jobs/"), _list_queries(client, "/api/powerups/"))
    assert many == few
