"""Job moves: every legal and illegal move, who may make it, and the record it leaves."""

from __future__ import annotations

import pytest

from shop.core.errors import Conflict, Forbidden
from shop.intake import services
from shop.intake.models import Job, JobMove, JobState
from shop.intake.workflow import ALLOWED_MOVES, OPEN_STATES, allowed_targets

# A route from `received` to each state, so a job can be put in any state through legal moves.
ROUTE = {
    JobState.RECEIVED: [],
    JobState.DIAGNOSING: [JobState.DIAGNOSING],
    JobState.AWAITING_APPROVAL: [JobState.DIAGNOSING, JobState.AWAITING_APPROVAL],
    JobState.REPAIRING: [JobState.DIAGNOSING, JobState.AWAITING_APPROVAL, JobState.REPAIRING],
    JobState.TESTING: [
        JobState.DIAGNOSING,
        JobState.AWAITING_APPROVAL,
        JobState.REPAIRING,
        JobState.TESTING,
    ],
    JobState.READY: [
        JobState.DIAGNOSING,
        JobState.AWAITING_APPROVAL,
        JobState.REPAIRING,
        JobState.TESTING,
        JobState.READY,
    ],
    JobState.RETURNED: [
        JobState.DIAGNOSING,
        JobState.AWAITING_APPROVAL,
        JobState.REPAIRING,
        JobState.TESTING,
        JobState.READY,
        JobState.RETURNED,
    ],
    JobState.DECLINED: [JobState.DIAGNOSING, JobState.AWAITING_APPROVAL, JobState.DECLINED],
    JobState.ON_HOLD: [JobState.DIAGNOSING, JobState.ON_HOLD],
}


def bring_to(job: Job, state: str, actor) -> Job:
    for target in ROUTE[state]:
        job = services.job_transition(
            job=job,
            to_state=target,
            actor=actor,
            approved_by="Orla by phone",
            ready_override=NO_TEST_HERE,
        )
    assert job.state == state
    return job


# These move tests exercise the move table alone; the readiness gate (a passed power-up test
# before ready) has its own tests, so the lead states why it does not apply here.
NO_TEST_HERE = "Move-table test: no power-up test belongs to this job."


ALL_PAIRS = [(s, t) for s in JobState.values for t in JobState.values]
LEGAL = [
    (s, t)
    for s, t in ALL_PAIRS
    if t in allowed_targets(s, JobState.DIAGNOSING)
    and (s != JobState.ON_HOLD or t == JobState.DIAGNOSING)
]
ILLEGAL = [pair for pair in ALL_PAIRS if pair not in LEGAL]


def test_the_move_table_names_every_state():
    assert set(ALLOWED_MOVES) == set(JobState.values)


@pytest.mark.parametrize(("source", "target"), LEGAL)
def test_lead_can_make_every_legal_move(job, staff, source, target):
    job = bring_to(job, source, staff["lead"])
    moved = services.job_transition(
        job=job,
        to_state=target,
        actor=staff["lead"],
        note="bench note",
        approved_by="Orla by phone",
        ready_override=NO_TEST_HERE,
    )
    assert moved.state == target
    last = JobMove.objects.filter(job=job).last()
    assert (last.from_state, last.to_state, last.moved_by, last.note) == (
        source,
        target,
        staff["lead"],
        "bench note",
    )


@pytest.mark.parametrize(("source", "target"), ILLEGAL)
def test_every_illegal_move_is_a_conflict_naming_the_allowed_targets(job, staff, source, target):
    job = bring_to(job, source, staff["lead"])
    moves_before = JobMove.objects.count()
    with pytest.raises(Conflict) as caught:
        services.job_transition(job=job, to_state=target, actor=staff["lead"])
    job.refresh_from_db()
    assert job.state == source
    assert caught.value.extra["allowed_targets"] == allowed_targets(source, job.held_from)
    assert JobMove.objects.count() == moves_before


@pytest.mark.parametrize("source", sorted(OPEN_STATES))
def test_on_hold_returns_only_to_where_it_was(job, staff, source):
    job = bring_to(job, source, staff["lead"])
    held = services.job_transition(job=job, to_state=JobState.ON_HOLD, actor=staff["lead"])
    assert held.held_from == source
    assert allowed_targets(held.state, held.held_from) == [source]
    resumed = services.job_transition(job=held, to_state=source, actor=staff["lead"])
    assert (resumed.state, resumed.held_from) == (source, "")


def test_repairing_needs_recorded_customer_approval(job, staff):
    job = bring_to(job, JobState.AWAITING_APPROVAL, staff["lead"])
    with pytest.raises(Exception) as caught:
        services.job_transition(job=job, to_state=JobState.REPAIRING, actor=staff["technician"])
    assert caught.value.field == "approved_by"
    moved = services.job_transition(
        job=job,
        to_state=JobState.REPAIRING,
        actor=staff["technician"],
        approved_by="Orla, phone call",
    )
    assert moved.approved_by == "Orla, phone call"
    assert moved.approved_at is not None


def test_front_desk_may_only_start_diagnosis(job, staff):
    moved = services.job_transition(
        job=job, to_state=JobState.DIAGNOSING, actor=staff["front_desk"]
    )
    assert moved.state == JobState.DIAGNOSING
    with pytest.raises(Forbidden):
        services.job_transition(job=moved, to_state=JobState.ON_HOLD, actor=staff["front_desk"])


def test_technician_cannot_return_a_job_to_the_customer(job, staff):
    job = bring_to(job, JobState.READY, staff["lead"])
    with pytest.raises(Forbidden):
        services.job_transition(job=job, to_state=JobState.RETURNED, actor=staff["technician"])


def test_every_move_bumps_the_version(job, staff):
    moved = services.job_transition(job=job, to_state=JobState.DIAGNOSING, actor=staff["lead"])
    assert moved.version == job.version + 1


def test_illegal_move_over_the_api_is_409_with_allowed_targets(job, client_for):
    response = client_for("lead").post(
        f"/api/jobs/{job.pk}/transition/", {"to_state": "ready"}, format="json"
    )
    assert response.status_code == 409
    body = response.json()["error"]
    assert body["code"] == "illegal_move"
    assert body["allowed_targets"] == ["diagnosing", "on_hold"]
    assert body["field"] == "to_state"


def test_unknown_state_over_the_api_is_400_naming_the_field(job, client_for):
    response = client_for("lead").post(
        f"/api/jobs/{job.pk}/transition/", {"to_state": "fixed"}, format="json"
    )
    assert response.status_code == 400
    assert response.json()["error"]["field"] == "to_state"


def test_front_desk_moving_past_diagnosis_over_the_api_is_403(job, client_for, staff):
    job = bring_to(job, JobState.DIAGNOSING, staff["lead"])
    response = client_for("front_desk").post(
        f"/api/jobs/{job.pk}/transition/", {"to_state": "awaiting_approval"}, format="json"
    )
    assert response.status_code == 403
    job.refresh_from_db()
    assert job.state == JobState.DIAGNOSING


def test_moves_endpoint_lists_the_history(job, client_for, staff):
    bring_to(job, JobState.AWAITING_APPROVAL, staff["lead"])
    response = client_for("technician").get(f"/api/jobs/{job.pk}/moves/")
    assert response.status_code == 200
    assert [(m["from_state"], m["to_state"]) for m in response.json()] == [
        ("received", "diagnosing"),
        ("diagnosing", "awaiting_approval"),
    ]
