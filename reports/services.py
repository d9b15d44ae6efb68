"""Writes for certificates: issue, supersede and revoke; issued rows never change."""

from __future__ import annotations

import base64
import hashlib
import json
import secrets

from django.core.files.base import ContentFile
from django.db import transaction
from django.utils import timezone

from shop.bench.models import PowerUpTest, TestStatus
from shop.bench.selectors import calibration_state
from shop.core.audit import audit_record
from shop.core.errors import ApplicationError, Conflict, Forbidden
from shop.core.numbering import next_in_year
from shop.core.roles import LEAD, has_role
from shop.core.stored_files import file_written, removed_on_failure
from shop.intake.models import Job, JobState

from .canonical import canonical_json, sha256_hex
from .models import (
    Certificate,
    CertificateEvent,
    CertificateEventKind,
    CertificateNumberCounter,
    CertificateStatus,
    certificate_status,
)
from .pdf import render_certificate
from .signing import certificate_sign
from .snapshot import build_certificate_snapshot, instruments_used

# A job is certified only once it is on or past the test bench.
CERTIFIABLE_STATES = frozenset({JobState.TESTING, JobState.READY})
# A job's valid certificate may be superseded (corrected) even after the unit went back.
SUPERSEDABLE_STATES = CERTIFIABLE_STATES | {JobState.RETURNED}
AUTOMATIC_REASON = "A later certificate was issued for the same job."
CODE_BYTES = 15  # 120 random bits (at least 80 asked for), not derived from number or hash
CODE_GROUP = 5


def verification_code() -> str:
    """A fresh random secret, grouped for reading aloud: 'K7QXM-2PD9F-...'."""
    raw = base64.b32encode(secrets.token_bytes(CODE_BYTES)).decode().rstrip("=")
    return "-".join(raw[i : i + CODE_GROUP] for i in range(0, len(raw), CODE_GROUP))


def _require_lead(user) -> None:
    if not has_role(user, LEAD):
        raise Forbidden("Only a shop lead issues, supersedes or revokes certificates.")


def _closed_tests(job: Job) -> list[PowerUpTest]:
    return list(
        job.powerups.filter(status=TestStatus.CLOSED)
        .select_related(
            "verdict",
            "rig",
            "lamp",
            "bank",
            "technician",
            "override_by",
            "source_meter",
            "load_meter",
            "current_meter",
            "rig__builtin_meter",
        )
        .order_by("closed_at", "id")
    )


def _tests_for(
    job: Job, tests: list[PowerUpTest] | None, left_out_reason: str
) -> tuple[list[PowerUpTest], list[dict]]:
    """The closed tests a certificate covers, and those it leaves out with the reason.

    All closed tests unless `tests` names some; leaving any out needs a stated reason.
    """
    closed = _closed_tests(job)
    left_out: list[PowerUpTest] = []
    if tests is not None:
        wanted = {test.pk for test in tests}
        strangers = wanted - {test.pk for test in job.powerups.all()}
        if strangers:
            raise ApplicationError("Those tests belong to another job.", field="tests")
        still_open = list(
            job.powerups.filter(pk__in=wanted)
            .exclude(status=TestStatus.CLOSED)
            .values_list("pk", flat=True)
        )
        if still_open:
            raise Conflict(
                f"Test {still_open[0]} is still open: close it first.",
                field="tests",
                code="test_open",
            )
        left_out = [test for test in closed if test.pk not in wanted]
        closed = [test for test in closed if test.pk in wanted]
    if not closed:
        raise Conflict(
            "A certificate needs at least one closed power-up test of this job.",
            field="tests",
            code="no_closed_test",
        )
    if left_out and not left_out_reason.strip():
        raise ApplicationError(
            "The certificate leaves out closed test(s) "
            + ", ".join(str(test.pk) for test in left_out)
            + ": state why in left_out_reason (it is printed), or cover every closed test.",
            field="left_out_reason",
            code="left_out_reason_required",
        )
    named = [
        {"id": test.pk, "outcome": test.verdict.outcome, "reason": left_out_reason.strip()}
        for test in left_out
    ]
    return closed, named


def _calibration_override(tests: list[PowerUpTest], reason: str, user) -> dict | None:
    overdue = [
        f"{meter} (test {test.pk})"
        for test in tests
        for _, meter in instruments_used(test)
        if calibration_state(meter)["past_due"]
    ]
    if not overdue:
        return None
    if not reason.strip():
        raise Conflict(
            "Out of calibration: " + ", ".join(overdue) + ". Recalibrate, or state a reason "
            "in calibration_override to certify anyway (it is printed on the certificate).",
            field="calibration_override",
            code="instrument_out_of_calibration",
        )
    return {
        "reason": reason.strip(),
        "by": user.get_full_name() or user.get_username(),
        "instruments": overdue,
    }


def _valid_certificates(job: Job) -> list[Certificate]:
    """The job's certificates that still answer `valid` (read under the job's row lock)."""
    return [
        certificate
        for certificate in job.certificates.prefetch_related("events").order_by("issued_at", "id")
        if certificate_status(certificate) == CertificateStatus.VALID
    ]


def _issue(
    *,
    job: Job,
    tests,
    issued_by,
    calibration_override: str,
    left_out_reason: str = "",
    reason: str = "",
    superseding: Certificate | None = None,
) -> Certificate:
    """Issue a certificate under the job's row lock, superseding the job's valid one.

    The lock serialises every issue for one job, so however many leads issue at once, the job
    ends with exactly one valid certificate: each new one supersedes the one before it.
    """
    job = Job.objects.select_for_update().select_related("unit__owner").get(pk=job.pk)
    valid = _valid_certificates(job)
    if superseding is not None and superseding.pk not in {c.pk for c in valid}:
        status = certificate_status(
            Certificate.objects.prefetch_related("events").get(pk=superseding.pk)
        )
        raise Conflict(
            f"Certificate {superseding.number} is already {status}.", code=f"already_{status}"
        )
    allowed = SUPERSEDABLE_STATES if valid else CERTIFIABLE_STATES
    if job.state not in allowed:
        raise Conflict(
            f"Job {job.number} is {job.state}; a certificate is issued in testing or ready"
            + (" (a returned job's certificate may be superseded by a lead)." if valid else "."),
            field="job",
            code="job_not_certifiable",
        )
    chosen, left_out = _tests_for(job, tests, left_out_reason)
    override = _calibration_override(chosen, calibration_override, issued_by)
    issued_at = timezone.now()
    number = f"C-{issued_at.year}-{next_in_year(CertificateNumberCounter, year=issued_at.year):04d}"
    code = verification_code()
    previous = valid[-1] if valid else None
    snapshot = canonical_json(
        build_certificate_snapshot(
            job=job,
            tests=chosen,
            number=number,
            code=code,
            issued_by=issued_by,
            issued_at=issued_at,
            supersedes=previous.number if previous else None,
            calibration_override=override,
            left_out=left_out,
        )
    )
    pdf = render_certificate(json.loads(snapshot))
    certificate = Certificate(
        number=number,
        job=job,
        issued_by=issued_by,
        issued_at=issued_at,
        snapshot=snapshot,
        sha256=sha256_hex(snapshot),
        verification_code=code,
        supersedes=previous,
    )
    certificate.pdf_sha256 = hashlib.sha256(pdf).hexdigest()
    certificate.signature = certificate_sign(
        number=number, snapshot=snapshot, pdf_sha256=certificate.pdf_sha256
    )
    certificate.pdf.save(f"{number}.pdf", ContentFile(pdf), save=False)
    file_written(certificate.pdf)
    certificate.full_clean()
    certificate.save()
    certificate.tests.set(chosen)
    audit_record(
        actor=issued_by,
        action="certificate.issue",
        instance=certificate,
        changes={
            "number": number,
            "job": job,
            "tests": chosen,
            "left_out": left_out,
            "sha256": certificate.sha256,
            "supersedes": previous,
            "calibration_override": override,
        },
    )
    for old in valid:
        _supersede(old, certificate, by=issued_by, reason=reason or AUTOMATIC_REASON)
    return certificate


def _supersede(old: Certificate, new: Certificate, *, by, reason: str) -> None:
    event = CertificateEvent(
        certificate=old, kind=CertificateEventKind.SUPERSEDED, by=by, reason=reason, replacement=new
    )
    event.full_clean()
    event.save()
    audit_record(
        actor=by,
        action="certificate.supersede",
        instance=old,
        changes={"reason": reason, "replacement": new},
    )


@removed_on_failure
@transaction.atomic
def certificate_issue(
    *,
    job: Job,
    issued_by,
    tests: list[PowerUpTest] | None = None,
    calibration_override: str = "",
    left_out_reason: str = "",
) -> Certificate:
    """Issue a certificate for a job's closed tests (all of them unless `tests` names some,
    with `left_out_reason`); the job's valid certificate, if any, is superseded by it."""
    _require_lead(issued_by)
    return _issue(
        job=job,
        tests=tests,
        issued_by=issued_by,
        calibration_override=calibration_override,
        left_out_reason=left_out_reason,
    )


def _lock_valid(certificate: Certificate) -> Certificate:
    locked = Certificate.objects.select_for_update().get(pk=certificate.pk)
    status = certificate_status(locked)
    if status != CertificateStatus.VALID:
        raise Conflict(
            f"Certificate {locked.number} is already {status}.", code=f"already_{status}"
        )
    return locked


@removed_on_failure
@transaction.atomic
def certificate_supersede(
    *,
    certificate: Certificate,
    by,
    reason: str,
    tests: list[PowerUpTest] | None = None,
    calibration_override: str = "",
    left_out_reason: str = "",
) -> Certificate:
    """Issue a corrected certificate for the same job; the old one answers `superseded`."""
    _require_lead(by)
    return _issue(
        job=certificate.job,
        tests=tests,
        issued_by=by,
        calibration_override=calibration_override,
        left_out_reason=left_out_reason,
        reason=reason,
        superseding=certificate,
    )


@transaction.atomic
def certificate_revoke(*, certificate: Certificate, by, reason: str) -> CertificateEvent:
    """Withdraw a certificate; it answers `revoked` from then on."""
    _require_lead(by)
    # The job's lock first, as an issue takes it: a revoke and an issue never cross.
    Job.objects.select_for_update().get(pk=certificate.job_id)
    locked = _lock_valid(certificate)
    event = CertificateEvent(
        certificate=locked, kind=CertificateEventKind.REVOKED, by=by, reason=reason
    )
    event.full_clean()
    event.save()
    audit_record(actor=by, action="certificate.revoke", instance=locked, changes={"reason": reason})
    return event
