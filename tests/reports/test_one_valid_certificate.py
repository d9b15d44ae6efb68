"""One valid certificate per job: a new issue supersedes the old, even when leads race."""

from __future__ import annotations

import pytest

from reports import services
from reports.models import Certificate, certificate_status
from reports.selectors import snapshot_of
from shop.bench import services as bench
from shop.intake import services as intake
from shop.intake.models import JobState
from tests.fixtures_bench import HEALTHY_60W_READINGS
from tests.intake.test_job_numbers import run_in_threads

SHORTED = [
    {"source_voltage": 60.0, "load_voltage": 4.0, "glow_seen": "medium"},
    {"source_voltage": 120.0, "load_voltage": 6.0, "glow_seen": "bright"},
]

# The shared closed test is judged marginal with its meter's spread; the lead releases it.
MARGINAL_OK = "Marginal by meter spread only; the lead checked the draw by hand."


def judged(job, rig, lamp, staff, readings):
    test = bench.powerup_open(job=job, rig=rig, lamp=lamp, technician=staff["technician"])
    bench.readings_add(test=test, readings=readings, actor=staff["technician"])
    bench.powerup_close(test=test, actor=staff["technician"])
    test.refresh_from_db()
    return test


def valid_of(job):
    return [c for c in Certificate.objects.filter(job=job) if certificate_status(c) == "valid"]


def verify(client, certificate):
    return client.get(
        f"/verify/{certificate.number}/",
        {"code": certificate.verification_code, "format": "json"},
    ).json()


def test_a_fail_and_a_pass_never_both_verify_valid(testing_job, rig, lamps, staff, client_for):
    failed = judged(testing_job, rig, lamps[60], staff, SHORTED)
    first = services.certificate_issue(job=testing_job, issued_by=staff["lead"], tests=[failed])
    judged(testing_job, rig, lamps[60], staff, HEALTHY_60W_READINGS)
    second = services.certificate_issue(job=testing_job, issued_by=staff["lead"])
    anonymous = client_for(None)
    old, new = verify(anonymous, first), verify(anonymous, second)
    assert (old["status"], old["superseded_by"]) == ("superseded", second.number)
    assert (new["status"], new["supersedes"]) == ("valid", first.number)
    assert valid_of(testing_job) == [second]
    assert first.events.get().reason


def test_a_certificate_covers_every_closed_test_unless_it_names_those_left_out(
    testing_job, rig, lamps, staff, client_for
):
    failed = judged(testing_job, rig, lamps[60], staff, SHORTED)
    passed = judged(testing_job, rig, lamps[60], staff, HEALTHY_60W_READINGS)
    lead = client_for("lead")
    refused = lead.post(
        "/api/certificates/", {"job": testing_job.pk, "tests": [passed.pk]}, format="json"
    )
    assert refused.status_code == 400
    assert refused.json()["error"]["field"] == "left_out_reason"
    reason = "Test 1 was run with the wrong lamp fitted; repeated as test 2."
    issued = lead.post(
        "/api/certificates/",
        {"job": testing_job.pk, "tests": [passed.pk], "left_out_reason": reason},
        format="json",
    )
    assert issued.status_code == 201, issued.content
    left_out = issued.json()["snapshot"]["left_out_tests"]
    assert left_out == [{"id": failed.pk, "outcome": "fail", "reason": reason}]
    everything = services.certificate_issue(job=testing_job, issued_by=staff["lead"])
    assert snapshot_of(everything)["left_out_tests"] == []
    assert [t["id"] for t in snapshot_of(everything)["tests"]] == [failed.pk, passed.pk]


def test_a_returned_jobs_certificate_can_still_be_superseded_by_a_lead(
    closed_test, staff, client_for
):
    job = closed_test.job
    first = services.certificate_issue(job=job, issued_by=staff["lead"])
    for target in (JobState.READY, JobState.RETURNED):
        job = intake.job_transition(
            job=job,
            to_state=target,
            actor=staff["lead"],
            ready_override=MARGINAL_OK if target == JobState.READY else "",
        )
    refused = client_for("technician").post(
        f"/api/certificates/{first.pk}/supersede/", {"reason": "typo"}, format="json"
    )
    assert refused.status_code == 403
    response = client_for("lead").post(
        f"/api/certificates/{first.pk}/supersede/",
        {"reason": "The customer's name was misspelt."},
        format="json",
    )
    assert response.status_code == 201, response.content
    assert response.json()["supersedes"] == first.number
    assert valid_of(job) == [Certificate.objects.get(number=response.json()["number"])]


def test_a_returned_job_without_a_certificate_gets_no_first_one(closed_test, staff):
    job = closed_test.job
    for target in (JobState.READY, JobState.RETURNED):
        job = intake.job_transition(
            job=job,
            to_state=target,
            actor=staff["lead"],
            ready_override=MARGINAL_OK if target == JobState.READY else "",
        )
    with pytest.raises(Exception) as caught:
        services.certificate_issue(job=job, issued_by=staff["lead"])
    assert getattr(caught.value, "code", None) == "job_not_certifiable"


def test_superseding_an_already_superseded_certificate_answers_409(closed_test, staff):
    first = services.certificate_issue(job=closed_test.job, issued_by=staff["lead"])
    services.certificate_issue(job=closed_test.job, issued_by=staff["lead"])
    with pytest.raises(Exception) as caught:
        services.certificate_supersede(certificate=first, by=staff["lead"], reason="again")
    assert getattr(caught.value, "code", None) == "already_superseded"
    assert len(valid_of(closed_test.job)) == 1


@pytest.mark.postgres
@pytest.mark.django_db(transaction=True)
def test_leads_issuing_at_once_leave_exactly_one_valid_certificate(closed_test, staff):
    results = run_in_threads(
        6, lambda: services.certificate_issue(job=closed_test.job, issued_by=staff["lead"])
    )
    assert not [r for r in results if isinstance(r, Exception)], results
    assert Certificate.objects.filter(job=closed_test.job).count() == 6
    assert len(valid_of(closed_test.job)) == 1
    # Each certificate but the last is superseded by exactly one successor: one chain.
    superseded = [c for c in Certificate.objects.all() if certificate_status(c) == "superseded"]
    assert len(superseded) == 5
    assert len({c.superseded_by.pk for c in superseded}) == 5
