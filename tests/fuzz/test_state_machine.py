"""A Hypothesis state machine over job moves, power-up tests and certificates, through the API.

Random sequences of moves (by every role), test openings, readings, closings and edits,
certificate issues, supersessions and revocations never reach a state the rule tables forbid:
every job move recorded is in ALLOWED_MOVES, a closed test's readings and verdict never change,
a certificate is valid, superseded or revoked exactly as its history says, a job never holds two
valid certificates, and a job reaches ready only past the readiness gate. Each answer is the
one the rules predict, and every refusal is a 4xx in the single error shape.
"""

from __future__ import annotations

from collections import Counter
from contextlib import contextmanager

import pytest
from django.db import transaction
from hypothesis import HealthCheck, settings
from hypothesis import strategies as st
from hypothesis.stateful import (
    Bundle,
    RuleBasedStateMachine,
    initialize,
    invariant,
    multiple,
    precondition,
    rule,
    run_state_machine_as_test,
)
from rest_framework.test import APIClient
from schemathesis.generation.hypothesis import setup as schemathesis_hypothesis_setup

from reports.models import Certificate, certificate_status
from reports.services import CERTIFIABLE_STATES
from shop.bench.models import PowerUpTest, Reading, Verdict
from shop.bench.services import CLOSED_JOB_STATES
from shop.core.roles import FRONT_DESK, LEAD, TECHNICIAN
from shop.intake.models import Job, JobMove, JobState
from shop.intake.workflow import (
    ALLOWED_MOVES,
    ESTIMATE_SETTLED_STATES,
    NEEDS_APPROVAL,
    REAPPROVAL_STATES,
    allowed_targets,
    role_may_move_to,
)

from .conftest import SEED_DECLARED_LOAD, SEED_READINGS, assert_error_shape, once_per_ci_run
from .content import plausible_readings

pytestmark = once_per_ci_run
# Schemathesis enlarges Hypothesis' buffer for the whole process when it first generates.
# Apply the same change here, so this test draws the same runs whether or not the fuzz run
# came first.
schemathesis_hypothesis_setup()

STEPS_PER_RUN = 40
RUNS = 60
HOLD_REASONS = ["", "waiting_for_parts"]
DESK_ROLES = (FRONT_DESK, LEAD)
# The moves that bring a new job to the bench.
BENCH_PATH = (
    JobState.DIAGNOSING,
    JobState.AWAITING_APPROVAL,
    JobState.REPAIRING,
    JobState.TESTING,
)
# Hypothesis leans towards the first choice: the one that may do everything.
ROLES_LEAD_FIRST = (LEAD, TECHNICIAN, FRONT_DESK)
# Every kind of success and refusal must happen this often over the runs.
EXPECTED_OUTCOMES = (
    "moved",
    "approved",
    "estimate raised",
    "readings added",
    "closed",
    "edited",
    "issued",
    "superseded",
    "revoked",
    "refused 400",
    "refused 403",
    "refused 409",
)
MIN_EACH_OUTCOME = 3


def _reading_rows(test_id: int) -> list[tuple]:
    return list(
        Reading.objects.filter(test_id=test_id)
        .order_by("sequence")
        .values_list("sequence", "source_voltage", "load_voltage", "current", "glow_seen")
    )


class ShopRules(RuleBasedStateMachine):
    """The model: what each job, test and certificate should be after the calls so far."""

    # How often each kind of answer came back over all runs, to prove the runs went deep.
    seen: Counter = Counter()

    tests = Bundle("tests")
    certificates = Bundle("certificates")

    def __init__(self):
        super().__init__()
        # Each run starts from the same records: its writes are rolled back in teardown.
        self._savepoint = transaction.atomic()
        self._savepoint.__enter__()
        self.job_model: dict[int, dict] = {}
        self.test_model: dict[int, dict] = {}
        self.certificate_model: dict[int, str] = {}
        self.certificate_job: dict[int, int] = {}
        self.closings = 0
        self._bench_job: int | None = None
        self._setting_up = False

    def teardown(self):
        transaction.set_rollback(True)
        self._savepoint.__exit__(None, None, None)

    def count(self, outcome: str) -> None:
        if not self._setting_up:
            self.seen[outcome] += 1

    def client(self, role: str) -> APIClient:
        client = APIClient()
        client.force_authenticate(self.world["staff"][role])
        return client

    def refused(self, response, status: int, code: str | None = None) -> None:
        assert response.status_code == status, (status, response.status_code, response.content)
        error = assert_error_shape(response)
        self.count(f"refused {status}")
        if code is not None:
            assert error["code"] == code, error

    # Jobs -------------------------------------------------------------------------------

    @initialize()
    def first_job(self):
        self.new_job()

    def bench_job(self) -> int:
        """A job already in testing with a closed test, made once per run, so runs go deep."""
        if self._bench_job is None:
            self._bench_job = self.new_job()
            for target in BENCH_PATH:
                if target == JobState.REPAIRING:
                    self.approve(self._bench_job, FRONT_DESK)
                else:
                    self.move(self._bench_job, target, LEAD, hold_reason="")
            test = self.open_test(self._bench_job)
            self.add_readings(test, SEED_READINGS)
            self.close_test(test, TECHNICIAN)
        return self._bench_job

    @contextmanager
    def setting_up(self):
        """Outcomes while building the starting records are not counted as the run's own."""
        self._setting_up = True
        try:
            yield
        finally:
            self._setting_up = False

    @initialize(target=tests)
    def open_test_on_the_bench(self):
        with self.setting_up():
            test = self.open_test(self.bench_job())
            self.add_readings(test, SEED_READINGS)
        return test

    @initialize(target=certificates)
    def certificate_on_the_bench(self):
        with self.setting_up():
            return self.issue(self.bench_job(), LEAD)

    def pick_job(self, data) -> int:
        return data.draw(st.sampled_from(sorted(self.job_model)), label="job")

    @rule()
    def open_job(self):
        self.new_job()

    def new_job(self) -> int:
        response = self.client(FRONT_DESK).post(
            "/api/jobs/",
            {
                "unit": self.world["unit"].pk,
                "complaint": "Dead after a thunderstorm.",
                "estimate": "120.00",
            },
            format="json",
        )
        assert response.status_code == 201, response.content
        job_id = response.json()["id"]
        self.job_model[job_id] = {
            "state": JobState.RECEIVED,
            "held_from": "",
            "approved": False,
            "estimate": 120,
        }
        return job_id

    @rule(data=st.data(), role=st.sampled_from(ROLES_LEAD_FIRST))
    def move_job(self, data, role):
        job = self.pick_job(data)
        model = self.job_model[job]
        # Mostly a legal next state, so that runs reach testing, ready and beyond.
        legal = allowed_targets(model["state"], model["held_from"])
        to_state = data.draw(
            st.sampled_from(legal)
            if legal and data.draw(st.integers(0, 9)) < 7
            else st.sampled_from(JobState.values),
            label="to_state",
        )
        reason = data.draw(st.sampled_from(HOLD_REASONS), label="hold_reason")
        self.move(job, to_state, role, reason)

    def move(self, job: int, to_state: str, role: str, hold_reason: str) -> None:
        model = self.job_model[job]
        response = self.client(role).post(
            f"/api/jobs/{job}/transition/",
            {"to_state": to_state, "hold_reason": hold_reason},
            format="json",
        )
        if to_state not in allowed_targets(model["state"], model["held_from"]):
            self.refused(response, 409, "illegal_move")
        elif not role_may_move_to(frozenset({role}), to_state, model["state"]):
            self.refused(response, 403)
        elif (to_state == JobState.ON_HOLD) != bool(hold_reason):
            self.refused(response, 400)
        elif to_state in NEEDS_APPROVAL and not model["approved"]:
            self.refused(response, 409, "approval_required")
        elif to_state == JobState.READY and self.not_ready(job):
            self.refused(response, 409, self.not_ready(job))
        else:
            assert response.status_code == 200, response.content
            if to_state == JobState.AWAITING_APPROVAL:
                model["approved"] = False
            model["held_from"] = model["state"] if to_state == JobState.ON_HOLD else ""
            model["state"] = to_state
            self.count("moved")

    def not_ready(self, job: int) -> str | None:
        """The readiness gate's refusal code for moving `job` to ready, or None."""
        if self.job_model[job]["state"] == JobState.DECLINED:
            return None
        tests = [t for t in self.test_model.values() if t["job"] == job]
        if any(t["open"] for t in tests):
            return "test_open"
        if not tests:
            return "no_closed_test"
        latest = max(tests, key=lambda t: t["closing"])
        return None if latest["verdict"][0] == "pass" else "latest_test_not_passed"

    @rule(data=st.data(), role=st.sampled_from(ROLES_LEAD_FIRST))
    def approve_job(self, data, role):
        # Mostly a job that awaits its approval, so that approvals happen often enough.
        waiting = sorted(
            job for job, m in self.job_model.items() if m["state"] == JobState.AWAITING_APPROVAL
        )
        if not waiting and data.draw(st.integers(0, 9), label="quote_a_new_job") < 5:
            # A fresh job walked to its estimate, so runs that never got there answer one too.
            job = self.new_job()
            for target in (JobState.DIAGNOSING, JobState.AWAITING_APPROVAL):
                self.move(job, target, LEAD, hold_reason="")
            waiting = [job]
        if waiting and data.draw(st.integers(0, 9), label="prefer_waiting") < 8:
            job = data.draw(st.sampled_from(waiting), label="job")
        else:
            job = self.pick_job(data)
        self.approve(job, role)

    def approve(self, job: int, role: str) -> None:
        model = self.job_model[job]
        response = self.client(role).post(
            f"/api/jobs/{job}/approve/", {"method": "phone"}, format="json"
        )
        if role not in DESK_ROLES:
            self.refused(response, 403)
        elif model["state"] != JobState.AWAITING_APPROVAL:
            self.refused(response, 409, "not_awaiting_approval")
        else:
            assert response.status_code == 200, response.content
            model.update(state=JobState.REPAIRING, approved=True)
            self.count("approved")

    @rule(data=st.data(), role=st.sampled_from(ROLES_LEAD_FIRST))
    def raise_estimate(self, data, role):
        """The misuse path: a raised estimate must not ride on the old approval."""
        job = self.pick_job(data)
        model = self.job_model[job]
        figure = model["estimate"] + 10
        response = self.client(role).patch(
            f"/api/jobs/{job}/", {"estimate": f"{figure}.00"}, format="json"
        )
        if role not in DESK_ROLES:
            self.refused(response, 403)
            return
        if model["approved"] and model["state"] in ESTIMATE_SETTLED_STATES:
            self.refused(response, 409, "estimate_settled")
            return
        assert response.status_code == 200, response.content
        model["estimate"] = figure
        if model["approved"]:
            model["approved"] = False
            if model["state"] in REAPPROVAL_STATES:
                model["state"] = JobState.AWAITING_APPROVAL
            elif model["held_from"] in REAPPROVAL_STATES:
                model["held_from"] = JobState.AWAITING_APPROVAL
        self.count("estimate raised")

    # Power-up tests ---------------------------------------------------------------------

    @rule(target=tests, data=st.data())
    def open_test_on_a_job(self, data):
        test = self.open_test(self.pick_job(data))
        return multiple() if test is None else test

    def open_test(self, job: int) -> int | None:
        response = self.client(TECHNICIAN).post(
            "/api/powerups/",
            {
                "job": job,
                "rig": self.world["rig"].pk,
                "lamp": self.world["lamp"].pk,
                "declared_load": SEED_DECLARED_LOAD,
            },
            format="json",
        )
        if self.job_model[job]["state"] in CLOSED_JOB_STATES:
            self.refused(response, 409, "job_closed")
            return None
        assert response.status_code == 201, response.content
        test_id = response.json()["id"]
        self.test_model[test_id] = {"job": job, "open": True, "readings": 0}
        return test_id

    @rule(test=tests, readings=st.lists(plausible_readings(), min_size=1, max_size=3))
    def add_readings(self, test, readings):
        response = self.client(TECHNICIAN).post(
            f"/api/powerups/{test}/readings/", {"readings": readings}, format="json"
        )
        model = self.test_model[test]
        if not model["open"]:
            self.refused(response, 409, "test_closed")
            return
        assert response.status_code == 201, response.content
        model["readings"] += len(readings)
        self.count("readings added")

    @rule(test=tests, source=st.floats(0, 100), excess=st.floats(10, 500))
    def add_impossible_reading(self, test, source, excess):
        """The unit cannot read more than the source gives: refused, and nothing is kept."""
        reading = {"source_voltage": source, "load_voltage": source + excess, "glow_seen": "dark"}
        response = self.client(TECHNICIAN).post(
            f"/api/powerups/{test}/readings/", {"readings": [reading]}, format="json"
        )
        if self.test_model[test]["open"]:
            self.refused(response, 400)
        else:
            self.refused(response, 409, "test_closed")

    @rule(test=tests, role=st.sampled_from(ROLES_LEAD_FIRST))
    def close_test(self, test, role):
        response = self.client(role).post(f"/api/powerups/{test}/close/", format="json")
        model = self.test_model[test]
        if role == FRONT_DESK:
            self.refused(response, 403)
        elif not model["open"]:
            self.refused(response, 409, "test_closed")
        elif model["readings"] == 0:
            self.refused(response, 409, "no_readings")
        else:
            assert response.status_code == 200, response.content
            self.closings += 1
            model.update(
                open=False,
                closing=self.closings,
                rows=_reading_rows(test),
                verdict=Verdict.objects.filter(test_id=test).values_list(
                    "outcome", "reasons", "per_reading"
                )[0],
            )
            self.count("closed")

    @rule(test=tests, role=st.sampled_from(ROLES_LEAD_FIRST), notes=st.text(max_size=40))
    def edit_test(self, test, role, notes):
        response = self.client(role).patch(
            f"/api/powerups/{test}/", {"notes": notes}, format="json"
        )
        if role == FRONT_DESK:
            self.refused(response, 403)
        elif not self.test_model[test]["open"]:
            self.refused(response, 409, "test_closed")
        elif "\x00" in notes:
            self.refused(response, 400)
        else:
            assert response.status_code == 200, response.content
            self.count("edited")

    # Certificates -----------------------------------------------------------------------

    def valid_certificates(self, job: int) -> list[int]:
        return [
            pk
            for pk, status in self.certificate_model.items()
            if status == "valid" and self.certificate_job[pk] == job
        ]

    def certifiable(self, job: int) -> bool:
        """A closed test, and the job on the bench (or returned, to supersede its valid one)."""
        closed = any(t["job"] == job and not t["open"] for t in self.test_model.values())
        state = self.job_model[job]["state"]
        return closed and (
            state in CERTIFIABLE_STATES
            or (state == JobState.RETURNED and bool(self.valid_certificates(job)))
        )

    def now_valid(self, certificate: int, job: int) -> None:
        """A new certificate of `job` is valid; the one it supersedes is not."""
        for previous in self.valid_certificates(job):
            self.certificate_model[previous] = "superseded"
        self.certificate_model[certificate] = "valid"
        self.certificate_job[certificate] = job

    @rule(target=certificates, data=st.data(), role=st.sampled_from(ROLES_LEAD_FIRST))
    def issue_certificate(self, data, role):
        certificate = self.issue(self.pick_job(data), role)
        return multiple() if certificate is None else certificate

    def issue(self, job: int, role: str) -> int | None:
        response = self.client(role).post("/api/certificates/", {"job": job}, format="json")
        if role != LEAD:
            self.refused(response, 403)
            return None
        if not self.certifiable(job):
            self.refused(response, 409)
            return None
        assert response.status_code == 201, response.content
        body = response.json()
        assert body["status"] == "valid"
        if self.valid_certificates(job):
            self.count("superseded")
        self.now_valid(body["id"], job)
        self.count("issued")
        return body["id"]

    @rule(
        target=certificates,
        certificate=certificates,
        action=st.sampled_from(["revoke", "supersede"]),
        role=st.sampled_from(ROLES_LEAD_FIRST),
    )
    def withdraw_certificate(self, certificate, action, role):
        """Revoke a certificate, or supersede it with a corrected one (returned)."""
        response = self.client(role).post(
            f"/api/certificates/{certificate}/{action}/",
            {"reason": "Wrong lamp recorded."},
            format="json",
        )
        status = self.certificate_model[certificate]
        job = Certificate.objects.get(pk=certificate).job_id
        if role != LEAD:
            self.refused(response, 403)
        elif status != "valid":
            self.refused(response, 409, f"already_{status}")
        elif action == "revoke":
            assert response.status_code == 200, response.content
            assert response.json()["status"] == "revoked"
            self.certificate_model[certificate] = "revoked"
            self.count("revoked")
        elif not self.certifiable(job):
            self.refused(response, 409)
        else:
            assert response.status_code == 201, response.content
            self.now_valid(response.json()["id"], job)
            self.count("superseded")
            return response.json()["id"]
        return multiple()

    @precondition(lambda self: "valid" in self.certificate_model.values())
    @rule(data=st.data())
    def revoke_a_valid_certificate(self, data):
        """Each issue supersedes the job's valid certificate, so few in the bundle stay valid:
        draw one that is, so revocations happen as often as before."""
        valid = sorted(pk for pk, status in self.certificate_model.items() if status == "valid")
        certificate = data.draw(st.sampled_from(valid), label="certificate")
        response = self.client(LEAD).post(
            f"/api/certificates/{certificate}/revoke/",
            {"reason": "Issued in error."},
            format="json",
        )
        assert response.status_code == 200, response.content
        assert response.json()["status"] == "revoked"
        self.certificate_model[certificate] = "revoked"
        self.count("revoked")

    # What must always hold --------------------------------------------------------------

    @invariant()
    def jobs_are_where_the_model_says(self):
        stored = Job.objects.filter(pk__in=self.job_model).values_list("pk", "state", "held_from")
        for pk, state, held_from in stored:
            model = self.job_model[pk]
            assert (state, held_from) == (model["state"], model["held_from"])
            assert held_from == "" or state == JobState.ON_HOLD

    @invariant()
    def every_recorded_move_is_in_the_rule_table(self):
        held_from: dict[int, str] = {}
        moves = JobMove.objects.filter(job_id__in=self.job_model).order_by("job_id", "id")
        for job_id, source, target in moves.values_list("job_id", "from_state", "to_state"):
            assert target in ALLOWED_MOVES[source], (source, target)
            if source == JobState.ON_HOLD:
                assert target == held_from[job_id], (held_from[job_id], target)
            if target == JobState.ON_HOLD:
                held_from[job_id] = source

    @invariant()
    def closed_tests_never_change(self):
        for test_id, model in self.test_model.items():
            stored = PowerUpTest.objects.get(pk=test_id)
            assert (stored.status == "open") == model["open"]
            if model["open"]:
                assert Reading.objects.filter(test_id=test_id).count() == model["readings"]
            else:
                assert _reading_rows(test_id) == model["rows"]
                verdict = Verdict.objects.filter(test_id=test_id)
                assert (
                    verdict.values_list("outcome", "reasons", "per_reading")[0]
                    == (model["verdict"])
                )

    @invariant()
    def certificates_answer_their_history(self):
        stored = Certificate.objects.filter(pk__in=self.certificate_model)
        for certificate in stored:
            assert certificate_status(certificate) == self.certificate_model[certificate.pk]
        numbers = list(Certificate.objects.values_list("number", flat=True))
        assert len(numbers) == len(set(numbers))
        for job in self.job_model:
            valid = [
                c
                for c in Certificate.objects.filter(job_id=job)
                if certificate_status(c) == "valid"
            ]
            assert len(valid) <= 1, (job, valid)


@pytest.fixture
def shop_world(staff, unit, rig, lamps):
    return {"staff": staff, "unit": unit, "rig": rig, "lamp": lamps[60]}


def test_random_sequences_never_reach_an_illegal_state(shop_world):
    machine = type("BoundShopRules", (ShopRules,), {"world": shop_world})
    ShopRules.seen.clear()
    run_state_machine_as_test(
        machine,
        settings=settings(
            max_examples=RUNS,
            stateful_step_count=STEPS_PER_RUN,
            deadline=None,
            derandomize=True,
            database=None,
            suppress_health_check=[HealthCheck.too_slow, HealthCheck.filter_too_much],
        ),
    )
    seen = ShopRules.seen
    print(dict(seen))
    for outcome in EXPECTED_OUTCOMES:
        assert seen[outcome] >= MIN_EACH_OUTCOME, (outcome, dict(seen))
