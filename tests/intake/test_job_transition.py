"""Job moves: every legal and illegal move, who may make it, and the record it leaves."""

from __future__ import annotations

from decimal import Decimal

import pytest

from shop.core.errors import Conflict, Forbidden
from shop.core.models import AuditEvent
from shop.intake import services
from shop.intake.models import CustomerDecision, HoldReason, Job, JobMove, JobState
from shop.intake.workflow import ALLOWED_MOVES, OPEN_STATES, allowed_targets
from tests.jobs import walk

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
    job = walk(job, ROUTE[state], actor, ready_override=NO_TEST_HERE)
    assert job.state == state
    return job


# These move tests exercise the move table alone; the readiness gate (a passed power-up test
# before ready) has its own tests, so the lead states why it does not apply here.
NO_TEST_HERE = "Move-table test: no power-up test belongs to this job."


def move(job: Job, target: str, actor, **extra) -> Job:
    """A plain move; a hold gives its reason, a move to ready the lead's gate override."""
    if target == JobState.ON_HOLD:
        extra.setdefault("hold_reason", HoldReason.WAITING_FOR_PARTS)
    if target == JobState.READY:
        extra.setdefault("ready_override", NO_TEST_HERE)
    return services.job_transition(job=job, to_state=target, actor=actor, **extra)


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


# Reaching repairing from awaiting_approval takes the customer's recorded approval (job_approve,
# tested below); every other legal move is a plain transition.
PLAIN_LEGAL = [pair for pair in LEGAL if pair != (JobState.AWAITING_APPROVAL, JobState.REPAIRING)]


@pytest.mark.parametrize(("source", "target"), PLAIN_LEGAL)
def test_lead_can_make_every_legal_move(job, staff, source, target):
    job = bring_to(job, source, staff["lead"])
    moved = move(job, target, staff["lead"], note="bench note")
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
    held = move(job, JobState.ON_HOLD, staff["lead"])
    assert held.held_from == source
    assert allowed_targets(held.state, held.held_from) == [source]
    resumed = services.job_transition(job=held, to_state=source, actor=staff["lead"])
    assert (resumed.state, resumed.held_from, resumed.hold_reason) == (source, "", "")


def test_technician_cannot_reach_repairing_without_an_approval_record(job, staff):
    job = bring_to(job, JobState.AWAITING_APPROVAL, staff["lead"])
    for actor in (staff["technician"], staff["lead"]):
        with pytest.raises(Conflict) as caught:
            services.job_transition(job=job, to_state=JobState.REPAIRING, actor=actor)
        assert (caught.value.code, caught.value.field) == ("approval_required", "approval")
    job.refresh_from_db()
    assert job.state == JobState.AWAITING_APPROVAL
    assert not CustomerDecision.objects.filter(job=job).exists()


def test_technician_moving_to_repairing_without_approval_over_the_api_is_409(
    job, staff, client_for
):
    job = bring_to(job, JobState.AWAITING_APPROVAL, staff["lead"])
    response = client_for("technician").post(
        f"/api/jobs/{job.pk}/transition/",
        {"to_state": "repairing", "approved_by": "Orla by phone"},
        format="json",
    )
    assert response.status_code == 409, response.content
    assert response.json()["error"]["code"] == "approval_required"
    job.refresh_from_db()
    assert (job.state, job.approval) == (JobState.AWAITING_APPROVAL, None)


def test_front_desk_approval_records_who_how_when_and_the_figure(job, staff):
    job = bring_to(job, JobState.AWAITING_APPROVAL, staff["lead"])
    job = services.job_update(
        job=job, expected_version=None, actor=staff["front_desk"], estimate=Decimal("120.00")
    )
    approved = services.job_approve(
        job=job, actor=staff["front_desk"], method="in_person", estimate=Decimal("120.00")
    )
    assert approved.state == JobState.REPAIRING
    approval = approved.approval
    assert (approval.decision, approval.method, approval.estimate, approval.recorded_by) == (
        "approved",
        "in_person",
        Decimal("120.00"),
        staff["front_desk"],
    )
    assert approval.decided_at is not None
    last = JobMove.objects.filter(job=job).last()
    assert (last.from_state, last.to_state, last.moved_by) == (
        JobState.AWAITING_APPROVAL,
        JobState.REPAIRING,
        staff["front_desk"],
    )
    assert AuditEvent.objects.filter(action="job.approve", object_id=str(approval.pk)).exists()


def test_approval_of_a_figure_other_than_the_estimate_is_refused(job, staff):
    job = bring_to(job, JobState.AWAITING_APPROVAL, staff["lead"])
    with pytest.raises(Conflict) as caught:
        services.job_approve(job=job, actor=staff["front_desk"], method="phone")
    assert caught.value.code == "estimate_missing"
    job = services.job_update(
        job=job, expected_version=None, actor=staff["front_desk"], estimate=Decimal("120.00")
    )
    with pytest.raises(Conflict) as caught:
        services.job_approve(
            job=job, actor=staff["front_desk"], method="phone", estimate=Decimal("90.00")
        )
    assert (caught.value.code, caught.value.field) == ("estimate_mismatch", "estimate")
    job.refresh_from_db()
    assert (job.state, job.approval) == (JobState.AWAITING_APPROVAL, None)


def test_a_technician_cannot_record_the_customers_answer(job, staff, client_for):
    job = bring_to(job, JobState.AWAITING_APPROVAL, staff["lead"])
    for action in ("approve", "decline"):
        response = client_for("technician").post(
            f"/api/jobs/{job.pk}/{action}/", {"method": "phone"}, format="json"
        )
        assert response.status_code == 403, response.content
    with pytest.raises(Forbidden):
        services.job_approve(job=job, actor=staff["technician"], method="phone")


def test_the_desk_records_approval_and_decline_over_the_api(job, staff, client_for):
    desk = client_for("front_desk")
    first = bring_to(job, JobState.AWAITING_APPROVAL, staff["lead"])
    desk.patch(f"/api/jobs/{first.pk}/", {"estimate": "75.50"}, format="json")
    response = desk.post(
        f"/api/jobs/{first.pk}/approve/",
        {"method": "email", "customer_name": "Orla's son", "estimate": "75.50"},
        format="json",
    )
    assert response.status_code == 200, response.content
    body = response.json()
    assert body["state"] == "repairing"
    assert body["approval"]["method"] == "email"
    assert body["approval"]["estimate"] == 75.5
    assert body["approval"]["recorded_by"] == staff["front_desk"].username
    assert body["approval"]["customer_name"] == "Orla's son"

    second = services.job_create(actor=staff["front_desk"], unit=job.unit, complaint="Crackles.")
    second = bring_to(second, JobState.AWAITING_APPROVAL, staff["lead"])
    desk.patch(f"/api/jobs/{second.pk}/", {"estimate": "30.00"}, format="json")
    response = desk.post(
        f"/api/jobs/{second.pk}/decline/", {"method": "phone", "note": "Too dear."}, format="json"
    )
    assert response.status_code == 200, response.content
    assert response.json()["state"] == "declined"
    decision = CustomerDecision.objects.get(job=second)
    assert (decision.decision, decision.method, decision.estimate, decision.note) == (
        "declined",
        "phone",
        Decimal("30.00"),
        "Too dear.",
    )


@pytest.mark.parametrize(
    ("state", "method", "status", "code"),
    [
        # The not_recorded method is only for approvals kept from older records.
        (JobState.AWAITING_APPROVAL, "not_recorded", 400, "invalid"),
        (JobState.DIAGNOSING, "phone", 409, "not_awaiting_approval"),
    ],
)
def test_an_answer_the_desk_cannot_record_is_refused(
    job, staff, client_for, state, method, status, code
):
    job = bring_to(job, state, staff["lead"])
    response = client_for("front_desk").post(
        f"/api/jobs/{job.pk}/approve/", {"method": method}, format="json"
    )
    assert response.status_code == status
    assert response.json()["error"]["code"] == code
    assert not CustomerDecision.objects.filter(job=job).exists()


@pytest.mark.parametrize("state", [JobState.REPAIRING, JobState.TESTING])
def test_raising_the_estimate_after_approval_asks_the_customer_again(job, staff, state):
    job = bring_to(job, state, staff["lead"])
    approved = job.approval
    raised = services.job_update(
        job=job, expected_version=None, actor=staff["front_desk"], estimate=Decimal("200.00")
    )
    assert (raised.state, raised.approval) == (JobState.AWAITING_APPROVAL, None)
    last = JobMove.objects.filter(job=job).last()
    assert (last.from_state, last.to_state) == (state, JobState.AWAITING_APPROVAL)
    assert "85.00 to 200.00" in last.note
    event = AuditEvent.objects.filter(action="job.estimate_raised").last()
    assert event.object_id == str(job.pk) and event.changes["estimate"] == "200.00"
    # The old approval stays on record; the job needs a new one for the new figure.
    assert CustomerDecision.objects.filter(pk=approved.pk).exists()
    with pytest.raises(Conflict) as caught:
        services.job_transition(job=raised, to_state=JobState.REPAIRING, actor=staff["lead"])
    assert caught.value.code == "approval_required"
    again = services.job_approve(
        job=raised, actor=staff["front_desk"], method="phone", estimate=Decimal("200.00")
    )
    assert (again.state, again.approval.estimate) == (JobState.REPAIRING, Decimal("200.00"))


def test_raising_the_estimate_over_the_api_sends_the_job_back(job, staff, client_for):
    job = bring_to(job, JobState.REPAIRING, staff["lead"])
    response = client_for("front_desk").patch(
        f"/api/jobs/{job.pk}/", {"estimate": "85.01"}, format="json"
    )
    assert response.status_code == 200, response.content
    assert (response.json()["state"], response.json()["approval"]) == ("awaiting_approval", None)


def test_lowering_or_keeping_the_estimate_keeps_the_approval(job, staff):
    job = bring_to(job, JobState.REPAIRING, staff["lead"])
    for figure in ("85.00", "60.00"):
        job = services.job_update(
            job=job, expected_version=None, actor=staff["front_desk"], estimate=Decimal(figure)
        )
        assert job.state == JobState.REPAIRING and job.approval is not None


def test_raising_the_estimate_of_a_held_job_makes_it_resume_awaiting_approval(job, staff):
    job = bring_to(job, JobState.REPAIRING, staff["lead"])
    held = move(job, JobState.ON_HOLD, staff["front_desk"])
    raised = services.job_update(
        job=held, expected_version=None, actor=staff["front_desk"], estimate=Decimal("150.00")
    )
    assert (raised.state, raised.held_from, raised.approval) == (
        JobState.ON_HOLD,
        JobState.AWAITING_APPROVAL,
        None,
    )
    resumed = services.job_transition(
        job=raised, to_state=JobState.AWAITING_APPROVAL, actor=staff["front_desk"]
    )
    assert resumed.state == JobState.AWAITING_APPROVAL
    with pytest.raises(Conflict):
        services.job_transition(job=resumed, to_state=JobState.REPAIRING, actor=staff["lead"])


def test_a_ready_job_refuses_a_raised_estimate(job, staff):
    job = bring_to(job, JobState.READY, staff["lead"])
    with pytest.raises(Conflict) as caught:
        services.job_update(
            job=job, expected_version=None, actor=staff["front_desk"], estimate=Decimal("500")
        )
    assert (caught.value.code, caught.value.field) == ("estimate_settled", "estimate")
    job.refresh_from_db()
    assert job.estimate == Decimal("85.00")


def test_moving_back_to_awaiting_approval_drops_the_approval(job, staff):
    job = bring_to(job, JobState.TESTING, staff["lead"])
    back = services.job_transition(
        job=job, to_state=JobState.AWAITING_APPROVAL, actor=staff["technician"], note="PT dead"
    )
    assert back.approval is None
    with pytest.raises(Conflict):
        services.job_transition(job=back, to_state=JobState.REPAIRING, actor=staff["technician"])


@pytest.mark.parametrize(
    ("reason", "note"),
    [
        (HoldReason.WAITING_FOR_PARTS, ""),
        (HoldReason.WAITING_FOR_CUSTOMER, "Left a message."),
        (HoldReason.OTHER, "Bench flooded."),
    ],
)
def test_the_desk_puts_a_job_on_hold_with_a_reason(job, staff, reason, note):
    job = bring_to(job, JobState.DIAGNOSING, staff["lead"])
    held = services.job_transition(
        job=job, to_state=JobState.ON_HOLD, actor=staff["front_desk"], hold_reason=reason, note=note
    )
    assert (held.state, held.hold_reason, held.hold_note) == (JobState.ON_HOLD, reason, note)
    resumed = services.job_transition(
        job=held, to_state=JobState.DIAGNOSING, actor=staff["front_desk"]
    )
    assert (resumed.state, resumed.hold_reason, resumed.hold_note) == (
        JobState.DIAGNOSING,
        "",
        "",
    )


@pytest.mark.parametrize(
    ("body", "field"),
    [
        ({"to_state": "on_hold"}, "hold_reason"),
        ({"to_state": "on_hold", "hold_reason": "lunch"}, "hold_reason"),
        ({"to_state": "on_hold", "hold_reason": "other"}, "note"),
        ({"to_state": "on_hold", "hold_reason": "other", "note": "   "}, "note"),
        ({"to_state": "diagnosing", "hold_reason": "waiting_for_parts"}, "hold_reason"),
    ],
)
def test_a_hold_without_a_usable_reason_is_refused_naming_the_field(
    job, staff, client_for, body, field
):
    response = client_for("front_desk").post(f"/api/jobs/{job.pk}/transition/", body, format="json")
    assert response.status_code == 400, response.content
    assert response.json()["error"]["field"] == field
    job.refresh_from_db()
    assert (job.state, job.hold_reason) == (JobState.RECEIVED, "")


def test_the_desk_hands_the_unit_back(job, staff, client_for):
    job = bring_to(job, JobState.READY, staff["lead"])
    response = client_for("front_desk").post(
        f"/api/jobs/{job.pk}/transition/", {"to_state": "returned"}, format="json"
    )
    assert response.status_code == 200, response.content
    assert response.json()["state"] == "returned"


def test_front_desk_may_not_make_the_benchs_moves(job, staff):
    moved = services.job_transition(
        job=job, to_state=JobState.DIAGNOSING, actor=staff["front_desk"]
    )
    assert moved.state == JobState.DIAGNOSING
    with pytest.raises(Forbidden):
        services.job_transition(
            job=moved, to_state=JobState.AWAITING_APPROVAL, actor=staff["front_desk"]
        )
    testing = bring_to(
        services.job_create(actor=staff["front_desk"], unit=job.unit, complaint="Dead."),
        JobState.TESTING,
        staff["lead"],
    )
    with pytest.raises(Forbidden):
        services.job_transition(job=testing, to_state=JobState.READY, actor=staff["front_desk"])


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


def test_front_desk_moving_to_awaiting_approval_over_the_api_is_403(job, client_for, staff):
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
