"""The large-shop seed writes valid records: counts, histories, verdicts, numbers and hashes."""

from __future__ import annotations

import re
from io import StringIO

import pytest
from django.core.management import CommandError, call_command

from reports.canonical import canonical_json, sha256_hex
from reports.models import Certificate
from reports.selectors import snapshot_intact
from reports.signing import certificate_signature_problem
from reports.snapshot import build_certificate_snapshot
from shop.bench import judging
from shop.bench.models import PowerUpTest, Reading, Verdict
from shop.core.models import AuditEvent
from shop.intake import services
from shop.intake.models import Customer, Job, JobState, Unit
from shop.intake.workflow import ALLOWED_MOVES

JOBS, READINGS, CERTIFICATES = 20, 100, 3


@pytest.fixture
def seeded(db) -> str:
    out = StringIO()
    call_command(
        "seed_large",
        jobs=JOBS,
        readings=READINGS,
        certificates=CERTIFICATES,
        stdout=out,
    )
    return out.getvalue()


def test_seed_writes_the_sizes_asked_for_and_says_how_long_it_took(seeded):
    assert Job.objects.count() == JOBS
    assert Reading.objects.count() == READINGS
    assert Certificate.objects.count() == CERTIFICATES
    assert PowerUpTest.objects.count() == Verdict.objects.count() == READINGS // 10
    assert Unit.objects.count() == 16 and Customer.objects.count() == 8
    assert re.search(r"in \d+\.\d s\.", seeded)
    assert "closed power-up tests: 10 of 10" in seeded
    assert AuditEvent.objects.filter(action="seed.large").count() == 1


def test_every_job_has_the_moves_that_lead_to_its_state(seeded):
    for job in Job.objects.prefetch_related("moves"):
        moves = sorted(job.moves.all(), key=lambda move: move.moved_at)
        state = JobState.RECEIVED
        for move in moves:
            assert move.from_state == state
            assert move.to_state in ALLOWED_MOVES[state]
            state = move.to_state
        assert state == job.state
        assert job.version == 1 + len(moves)


def test_seeded_job_numbers_are_unique_and_the_service_carries_on_after_them(seeded, staff):
    numbers = list(Job.objects.values_list("number", flat=True))
    assert len(set(numbers)) == JOBS
    unit = Unit.objects.first()
    job = services.job_create(actor=staff["front_desk"], unit=unit, complaint="After the seed")
    assert job.number not in numbers


def test_every_test_is_closed_and_its_verdict_is_what_the_physics_says_of_its_readings(seeded):
    for test in PowerUpTest.objects.select_related("verdict", "rig", "lamp", "load_meter"):
        assert test.status == "closed" and test.closed_at > test.started_at
        readings = list(test.readings.order_by("sequence"))
        assert [r.sequence for r in readings] == list(range(1, 11))
        inputs = judging.verdict_inputs(test, readings)
        stored = test.verdict.inputs
        assert inputs == {key: stored[key] for key in inputs}
        assert judging.judge_inputs(stored).outcome == test.verdict.outcome
    assert set(Verdict.objects.values_list("outcome", flat=True)) <= {"pass", "fail", "marginal"}


def test_certificates_hash_right_and_state_what_an_issue_would(seeded):
    certificates = list(Certificate.objects.select_related("job__unit__owner", "issued_by"))
    assert len({c.number for c in certificates}) == CERTIFICATES
    assert len({c.verification_code for c in certificates}) == CERTIFICATES
    for certificate in certificates:
        assert snapshot_intact(certificate)
        assert certificate_signature_problem(certificate) is None
        assert certificate.sha256 == sha256_hex(certificate.snapshot)
        rebuilt = canonical_json(
            build_certificate_snapshot(
                job=certificate.job,
                tests=list(certificate.tests.all()),
                number=certificate.number,
                code=certificate.verification_code,
                issued_by=certificate.issued_by,
                issued_at=certificate.issued_at,
                supersedes=None,
                calibration_override=None,
            )
        )
        assert rebuilt == certificate.snapshot
        assert certificate.job.state in {JobState.READY, JobState.RETURNED}


def test_seeding_a_seeded_database_again_is_refused(seeded):
    with pytest.raises(CommandError, match="already holds a seeded shop"):
        call_command("seed_large", jobs=5, readings=0, certificates=0, stdout=StringIO())
    assert Job.objects.count() == JOBS


@pytest.mark.parametrize(
    ("sizes", "message"),
    [
        ({"jobs": 5, "readings": 15, "certificates": 0}, "multiple"),
        ({"jobs": 5, "readings": 10, "certificates": 2}, "need at least"),
        ({"jobs": 0, "readings": 0, "certificates": 0}, "at least one job"),
    ],
)
def test_sizes_that_do_not_fit_together_are_refused_and_nothing_is_written(db, sizes, message):
    with pytest.raises(CommandError, match=message):
        call_command("seed_large", **sizes, stdout=StringIO())
    assert not Job.objects.exists()
