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
from .snapshot import build_certificate_snapshot, instruments_used

# A job is certified only once it is on or past the test bench.
CERTIFIABLE_STATES = frozenset({JobState.TESTING, JobState.READY})
CODE_BYTES = 15  # 120 random bits (at least 80 asked for), not derived from number or hash
CODE_GROUP = 5


def verification_code() -> str:
    """A fresh random secret, grouped for reading aloud: 'K7QXM-2PD9F-...'."""
    raw = base64.b32encode(secrets.token_bytes(CODE_BYTES)).decode().rstrip("=")
    return "-".join(raw[i : i + CODE_GROUP] for i in range(0, len(raw), CODE_GROUP))


def _require_lead(user) -> None:
    if not has_role(user, LEAD):
        raise Forbidden("Only a shop lead issues, supersedes or revokes certificates.")


def _tests_for(job: Job, tests: list[PowerUpTest] | None) -> list[PowerUpTest]:
    closed = list(
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
        closed = [test for test in closed if test.pk in wanted]
    if not closed:
        raise Conflict(
            "A certificate needs at least one closed power-up test of this job.",
            field="tests",
            code="no_closed_test",
        )
    return closed


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


def _issue(
    *, job: Job, tests, issued_by, calibration_override: str, supersedes: Certificate | None
) -> Certificate:
    job = Job.objects.select_for_update().select_related("unit__owner").get(pk=job.pk)
    if job.state not in CERTIFIABLE_STATES:
        raise Conflict(
            f"Job {job.number} is {job.state}; a certificate is issued in testing or ready.",
            field="job",
            code="job_not_certifiable",
        )
    chosen = _tests_for(job, tests)
    override = _calibration_override(chosen, calibration_override, issued_by)
    issued_at = timezone.now()
    number = f"C-{issued_at.year}-{next_in_year(CertificateNumberCounter, year=issued_at.year):04d}"
    code = verification_code()
    snapshot = canonical_json(
        build_certificate_snapshot(
            job=job,
            tests=chosen,
            number=number,
            code=code,
            issued_by=issued_by,
            issued_at=issued_at,
            supersedes=supersedes.number if supersedes else None,
            calibration_override=override,
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
        supersedes=supersedes,
    )
    certificate.pdf_sha256 = hashlib.sha256(pdf).hexdigest()
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
            "sha256": certificate.sha256,
            "supersedes": supersedes,
            "calibration_override": override,
        },
    )
    return certificate


@removed_on_failure
@transaction.atomic
def certificate_issue(
    *, job: Job, issued_by, tests: list[PowerUpTest] | None = None, calibration_override: str = ""
) -> Certificate:
    """Issue a certificate for a job's closed tests (all of them unless `tests` names some)."""
    _require_lead(issued_by)
    return _issue(
        job=job,
        tests=tests,
        issued_by=issued_by,
        calibration_override=calibration_override,
        supersedes=None,
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
) -> Certificate:
    """Issue a corrected certificate for the same job; the old one answers `superseded`."""
    _require_lead(by)
    old = _lock_valid(certificate)
    new = _issue(
        job=old.job,
        tests=tests,
        issued_by=by,
        calibration_override=calibration_override,
        supersedes=old,
    )
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
    return new


@transaction.atomic
def certificate_revoke(*, certificate: Certificate, by, reason: str) -> CertificateEvent:
    """Withdraw a certificate; it answers `revoked` from then on."""
    _require_lead(by)
    locked = _lock_valid(certificate)
    event = CertificateEvent(
        certificate=locked, kind=CertificateEventKind.REVOKED, by=by, reason=reason
    )
    event.full_clean()
    event.save()
    audit_record(actor=by, action="certificate.revoke", instance=locked, changes={"reason": reason})
    return event
