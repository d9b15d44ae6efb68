"""Writes for intake records: each validates, runs in one transaction and bumps versions."""

from __future__ import annotations

import hashlib
from datetime import UTC, date, datetime, timedelta

from django.conf import settings
from django.core.exceptions import ValidationError
from django.db import IntegrityError, transaction
from django.utils import timezone

from shop.bench.readiness import readiness_refusal
from shop.core.audit import audit_record
from shop.core.errors import ApplicationError, Conflict, Forbidden
from shop.core.numbering import next_in_year
from shop.core.roles import FRONT_DESK, LEAD, TECHNICIAN, has_role, user_roles
from shop.core.services import create_validated, only_fields, update_versioned
from shop.core.versioning import check_version

from . import selectors
from .facts import hazard_lowering, rule_fields_changed, unit_facts
from .models import (
    RECORDABLE_METHODS,
    Customer,
    CustomerDecision,
    Decision,
    Evidence,
    HoldReason,
    Job,
    JobMove,
    JobNumberCounter,
    JobState,
    RepairStep,
    Unit,
)
from .sniffing import SIZE_KIND, SNIFF_BYTES, UnacceptableFile, sniff
from .workflow import (
    ESTIMATE_SETTLED_STATES,
    NEEDS_APPROVAL,
    REAPPROVAL_STATES,
    allowed_targets,
    role_may_move_to,
)

# A repair step's time: not before this (no shop kept records on this service earlier), and
# not later than now plus a little clock difference between the bench's device and the server.
PERFORMED_AT_FLOOR = datetime(2000, 1, 1, tzinfo=UTC)
PERFORMED_AT_SKEW = timedelta(minutes=5)
CUSTOMER_FIELDS = ("name", "phone", "email", "notes")
UNIT_FIELDS = (
    "owner",
    "category",
    "maker",
    "model_name",
    "serial",
    "year",
    "rated_voltage",
    "rated_power",
    "rated_power_unit",
    "rated_frequency",
    "fuse_rating",
    "fuse_type",
    "voltage_selector_as_found",
    "voltage_selector_setting",
    "construction",
    "protection_class",
    "cord",
)
JOB_FIELDS = (
    "complaint",
    "condition_at_intake",
    "received_on",
    "promised_on",
    "assigned_technician",
    "estimate",
)
HASH_CHUNK = 1 << 20
# A declined job goes back unrepaired: no power-up test stands behind its "ready".
UNREPAIRED_STATES = frozenset({JobState.DECLINED})


def _duplicate_warning(kind: str, existing, described: str) -> dict:
    return {
        "code": f"possible_duplicate_{kind}",
        "message": f"{described} is already recorded as {kind} {existing.pk}; check before "
        "keeping both.",
        "existing": {"type": kind, "id": existing.pk},
    }


@transaction.atomic
def customer_create(
    *, actor, name: str, phone: str = "", email: str = "", notes: str = ""
) -> Customer:
    """Record a customer; `warnings` on the result names any customer of the same name and
    phone (the record is kept: two people may share both)."""
    customer = create_validated(
        Customer,
        {"name": name, "phone": phone, "email": email, "notes": notes},
        actor=actor,
        action="customer.create",
    )
    customer.warnings = [
        _duplicate_warning("customer", other, f"{other.name} ({other.phone})")
        for other in selectors.customer_duplicates(name=name, phone=phone, exclude=customer.pk)
    ]
    return customer


@transaction.atomic
def customer_update(
    *, customer: Customer, expected_version: int | None, actor, **changes
) -> Customer:
    return update_versioned(
        customer,
        expected=expected_version,
        changes=only_fields(changes, CUSTOMER_FIELDS),
        actor=actor,
        action="customer.update",
    )


@transaction.atomic
def unit_create(*, actor, **fields) -> Unit:
    """Record a unit; `warnings` on the result names any unit of the same maker and serial."""
    unit = create_validated(
        Unit, only_fields(fields, UNIT_FIELDS), actor=actor, action="unit.create"
    )
    unit.warnings = [
        _duplicate_warning(
            "unit", other, f"{other.maker} serial {other.serial} (owner {other.owner.name})"
        )
        for other in selectors.unit_duplicates(
            maker=unit.maker, serial=unit.serial, exclude=unit.pk
        )
    ]
    return unit


def _guarded_fields(unit: Unit, changes: dict) -> list[str]:
    """The changes only a lead may make: those lowering the recorded hazard, and any change
    of a rule fact once the unit has been powered up (a test was judged on the old facts)."""
    guarded = hazard_lowering(unit, changes)
    if unit.jobs.filter(powerups__isnull=False).exists():
        guarded += [name for name in rule_fields_changed(unit, changes) if name not in guarded]
    return guarded


@transaction.atomic
def unit_update(
    *,
    unit: Unit,
    expected_version: int | None,
    actor,
    hazard_change_reason: str = "",
    **changes,
) -> Unit:
    """Update a unit. Lowering its recorded hazard (a live-chassis or unknown construction made
    safe, an unknown class or frequency stated) or changing a rule fact of a unit already
    powered up is a lead's act with a stated reason, kept in the audit trail."""
    only_fields(changes, UNIT_FIELDS)
    locked = Unit.objects.select_for_update().get(pk=unit.pk)
    check_version(locked, expected_version)
    guarded = _guarded_fields(locked, changes)
    reason = hazard_change_reason.strip()
    if guarded and not has_role(actor, LEAD):
        raise Forbidden(
            f"Only a lead may change {', '.join(guarded)} here: the change lowers the recorded "
            "hazard or alters facts a power-up test was judged on. Ask a lead.",
            field=guarded[0],
            code="lead_required",
        )
    if guarded and not reason:
        raise ApplicationError(
            f"State why {', '.join(guarded)} changes (hazard_change_reason); the reason is "
            "kept with the change.",
            field="hazard_change_reason",
            code="reason_required",
        )
    before = unit_facts(locked)
    updated = update_versioned(
        locked, expected=None, changes=changes, actor=actor, action="unit.update"
    )
    if guarded:
        audit_record(
            actor=actor,
            action="unit.rule_facts_change",
            instance=updated,
            changes={
                "fields": guarded,
                "before": before,
                "after": unit_facts(updated),
                "reason": reason,
            },
        )
    return updated


def _check_technician(user) -> None:
    if user is not None and not has_role(user, TECHNICIAN):
        raise ValidationError(
            {"assigned_technician": f"{user.get_username()} is not in the technician group."}
        )


def job_number_allocate(*, year: int) -> str:
    """Take the next job number of `year` ("2026-0042"); run inside a transaction."""
    return f"{year}-{next_in_year(JobNumberCounter, year=year):04d}"


@transaction.atomic
def job_create(
    *, actor, unit: Unit, complaint: str, received_on: date | None = None, **fields
) -> Job:
    """Open a job for a unit and give it the next number of its intake year."""
    received_on = received_on or timezone.localdate()
    only_fields(fields, JOB_FIELDS)
    _check_technician(fields.get("assigned_technician"))
    job = Job(unit=unit, complaint=complaint, received_on=received_on, **fields)
    job.number = "pending"
    job.full_clean(exclude=["number"])
    job.number = job_number_allocate(year=received_on.year)
    job.save()
    audit_record(
        actor=actor,
        action="job.create",
        instance=job,
        changes={
            "number": job.number,
            "unit": unit,
            "complaint": complaint,
            "received_on": received_on,
            **fields,
        },
    )
    return job


@transaction.atomic
def job_update(*, job: Job, expected_version: int | None, actor, **changes) -> Job:
    """Change a job's own fields; raising the estimate above an approved figure asks again.

    The approval no longer covers the job: a job repairing or testing goes back to
    awaiting_approval (a recorded move), a held one will resume there. A job ready or
    returned has settled its estimate and refuses a raise.
    """
    only_fields(changes, JOB_FIELDS)
    if "assigned_technician" in changes:
        _check_technician(changes["assigned_technician"])
    locked = _lock(job, expected_version)
    if not _raises_approved_estimate(locked, changes.get("estimate")):
        return update_versioned(
            locked, expected=None, changes=changes, actor=actor, action="job.update"
        )
    if locked.state in ESTIMATE_SETTLED_STATES:
        raise Conflict(
            f"A job in '{locked.state}' has settled its estimate; it cannot be raised.",
            field="estimate",
            code="estimate_settled",
        )
    note = (
        f"Estimate raised from {locked.approval.estimate} to {changes['estimate']} after the "
        "customer's approval; the customer must approve the new figure."
    )
    if locked.state in REAPPROVAL_STATES:
        _record_move(locked, to_state=JobState.AWAITING_APPROVAL, actor=actor, note=note)
        changes["state"] = JobState.AWAITING_APPROVAL
    elif locked.state == JobState.ON_HOLD and locked.held_from in REAPPROVAL_STATES:
        changes["held_from"] = JobState.AWAITING_APPROVAL
    changes["approval"] = None
    return update_versioned(
        locked, expected=None, changes=changes, actor=actor, action="job.estimate_raised"
    )


def _raises_approved_estimate(job: Job, estimate) -> bool:
    if job.approval is None or estimate is None:
        return False
    approved = job.approval.estimate
    return approved is None or estimate > approved


def _check_move(locked: Job, *, to_state: str, actor) -> None:
    """Refuse a move the workflow table or the actor's role does not allow."""
    targets = allowed_targets(locked.state, locked.held_from)
    if to_state not in targets:
        raise Conflict(
            f"A job in '{locked.state}' cannot move to '{to_state}'. "
            f"Allowed next: {', '.join(targets) or 'none (the job is closed)'}.",
            field="to_state",
            code="illegal_move",
            extra={"allowed_targets": targets, "state": locked.state},
        )
    if not role_may_move_to(user_roles(actor), to_state, locked.state):
        raise Forbidden(
            f"Your role may not move a job to '{to_state}'. Ask a shop lead.",
            field="to_state",
        )


def _record_move(locked: Job, *, to_state: str, actor, note: str) -> None:
    JobMove.objects.create(
        job=locked, from_state=locked.state, to_state=to_state, moved_by=actor, note=note
    )


def _move(
    locked: Job,
    *,
    to_state: str,
    actor,
    note: str,
    changes: dict | None = None,
    ready_override: str = "",
) -> Job:
    """Check and make one move of a locked job, recording it; `changes` ride along.

    Every move to ready (but from declined) passes the readiness gate here, whichever service
    asked for it.
    """
    _check_move(locked, to_state=to_state, actor=actor)
    changes = {**(changes or {}), "state": to_state}
    if to_state == JobState.READY and locked.state not in UNREPAIRED_STATES:
        changes.update(_readiness(locked, actor, ready_override))
    elif ready_override and to_state != JobState.READY:
        raise ApplicationError(
            "A ready override goes only with a move to ready.", field="ready_override"
        )
    if to_state == JobState.AWAITING_APPROVAL:
        changes["approval"] = None
    if to_state in NEEDS_APPROVAL and changes.get("approval", locked.approval) is None:
        raise Conflict(
            f"Job {locked.number} has no customer approval of its current estimate. The desk "
            f"records it with POST /api/jobs/{locked.pk}/approve/.",
            field="approval",
            code="approval_required",
        )
    if locked.state == JobState.ON_HOLD:
        changes.update(held_from="", hold_reason="", hold_note="")
    _record_move(locked, to_state=to_state, actor=actor, note=note)
    return update_versioned(
        locked, expected=None, changes=changes, actor=actor, action="job.transition"
    )


def _lock(job: Job, expected_version: int | None) -> Job:
    # Lock the job row alone: PostgreSQL refuses FOR UPDATE on the nullable side of a join.
    locked = Job.objects.select_for_update(of=("self",)).select_related("approval").get(pk=job.pk)
    check_version(locked, expected_version)
    return locked


@transaction.atomic
def job_transition(
    *,
    job: Job,
    to_state: str,
    actor,
    note: str = "",
    expected_version: int | None = None,
    hold_reason: str = "",
    ready_override: str = "",
) -> Job:
    """Move a job to `to_state` under a row lock, and record who moved it, when and why.

    Putting a job on hold needs a `hold_reason` (and a note when the reason is "other").
    Reaching repairing needs the customer's approval recorded by `job_approve`. Moving to
    ready (but from declined) needs the latest closed power-up test to have passed, or a
    lead's stated reason (`ready_override`), kept on the job.
    """
    locked = _lock(job, expected_version)
    if to_state not in JobState.values:
        raise ApplicationError(
            f"'{to_state}' is not a job state. Known states: {', '.join(JobState.values)}.",
            field="to_state",
        )
    _check_move(locked, to_state=to_state, actor=actor)
    changes: dict = {}
    if to_state == JobState.ON_HOLD:
        changes = _hold_changes(locked, hold_reason=hold_reason, note=note)
    elif hold_reason:
        raise ApplicationError(
            "A hold reason goes only with a move to on_hold.", field="hold_reason"
        )
    return _move(
        locked,
        to_state=to_state,
        actor=actor,
        note=note,
        changes=changes,
        ready_override=ready_override,
    )


def _hold_changes(locked: Job, *, hold_reason: str, note: str) -> dict:
    if hold_reason not in HoldReason.values:
        raise ApplicationError(
            f"Say why the job is held: hold_reason one of {', '.join(HoldReason.values)}.",
            field="hold_reason",
            code="hold_reason_required",
        )
    if hold_reason == HoldReason.OTHER and not note.strip():
        raise ApplicationError(
            "A hold for another reason needs a note saying what the job waits for.",
            field="note",
        )
    return {"held_from": locked.state, "hold_reason": hold_reason, "hold_note": note}


# What each answer does to the job: the state it moves to, and how the move reads.
ANSWER_MOVES = {Decision.APPROVED: JobState.REPAIRING, Decision.DECLINED: JobState.DECLINED}


def _answer(
    *,
    job: Job,
    expected_version: int | None,
    decision: str,
    actor,
    method: str,
    customer_name: str,
    estimate,
    note: str,
) -> Job:
    """Record the customer's answer to the estimate and make the move it calls for."""
    job = _lock(job, expected_version)
    if not has_role(actor, FRONT_DESK, LEAD):
        raise Forbidden("The front desk or a lead records the customer's answer.", field="decision")
    if method not in RECORDABLE_METHODS:
        raise ApplicationError(
            f"Say how the customer answered: method one of {', '.join(RECORDABLE_METHODS)}.",
            field="method",
        )
    if job.state != JobState.AWAITING_APPROVAL:
        raise Conflict(
            f"Job {job.number} is '{job.state}'; the customer answers an estimate only while "
            "the job is awaiting_approval.",
            field="state",
            code="not_awaiting_approval",
            extra={"state": job.state},
        )
    if job.estimate is None:
        raise Conflict(
            f"Job {job.number} has no estimate; record the estimate before the answer.",
            field="estimate",
            code="estimate_missing",
        )
    if estimate is not None and estimate != job.estimate:
        raise Conflict(
            f"The job's estimate is {job.estimate}, not {estimate}; the customer answers the "
            "job's current estimate (change it first if it is wrong).",
            field="estimate",
            code="estimate_mismatch",
        )
    record = CustomerDecision(
        job=job,
        decision=decision,
        method=method,
        customer_name=customer_name,
        estimate=job.estimate,
        recorded_by=actor,
        decided_at=timezone.now(),
        note=note,
    )
    record.full_clean()
    record.save()
    audit_record(
        actor=actor,
        action=f"job.{'approve' if decision == Decision.APPROVED else 'decline'}",
        instance=record,
        changes={
            "job": job,
            "decision": decision,
            "method": method,
            "customer_name": customer_name,
            "estimate": job.estimate,
            "note": note,
        },
    )
    move_note = note or f"{record.get_decision_display()} {record.get_method_display().lower()}."
    changes = {"approval": record} if decision == Decision.APPROVED else {}
    return _move(job, to_state=ANSWER_MOVES[decision], actor=actor, note=move_note, changes=changes)


@transaction.atomic
def job_approve(
    *,
    job: Job,
    actor,
    method: str,
    estimate=None,
    customer_name: str = "",
    note: str = "",
    expected_version: int | None = None,
) -> Job:
    """Record the customer's approval of the job's estimate and move the job to repairing.

    `estimate`, when given, must be the job's current estimate: the figure the customer heard.
    """
    return _answer(
        job=job,
        expected_version=expected_version,
        decision=Decision.APPROVED,
        actor=actor,
        method=method,
        customer_name=customer_name,
        estimate=estimate,
        note=note,
    )


@transaction.atomic
def job_decline(
    *,
    job: Job,
    actor,
    method: str,
    customer_name: str = "",
    note: str = "",
    expected_version: int | None = None,
) -> Job:
    """Record that the customer declined the estimate and move the job to declined."""
    return _answer(
        job=job,
        expected_version=expected_version,
        decision=Decision.DECLINED,
        actor=actor,
        method=method,
        customer_name=customer_name,
        estimate=None,
        note=note,
    )


def _readiness(job: Job, actor, reason: str) -> dict:
    """The job's ready-override fields after the readiness gate, or its refusal."""
    refusal = readiness_refusal(job)
    if refusal is None:
        return {"ready_override": "", "ready_override_by": None}
    code, message = refusal
    if not reason.strip():
        raise Conflict(
            f"{message} A job moves to ready only when its latest closed test passed; "
            "a lead may override with a stated reason (ready_override).",
            field="to_state",
            code=code,
        )
    if not has_role(actor, LEAD):
        raise Forbidden(
            "Only a lead may move a job to ready without a passed test.", field="ready_override"
        )
    return {"ready_override": reason.strip(), "ready_override_by": actor}


@transaction.atomic
def repair_step_add(
    *,
    job: Job,
    technician,
    action: str,
    parts: list[dict] | None = None,
    minutes: int = 0,
    performed_at=None,
    corrects: RepairStep | None = None,
) -> RepairStep:
    """Append a repair step; a correction names the step it corrects, on the same job."""
    now = timezone.now()
    if performed_at is not None and not (
        PERFORMED_AT_FLOOR <= performed_at <= now + PERFORMED_AT_SKEW
    ):
        raise ApplicationError(
            f"performed_at {performed_at.isoformat()} is out of range: give a time from "
            f"{PERFORMED_AT_FLOOR:%Y-%m-%d} up to now (the server's clock reads "
            f"{now:%Y-%m-%d %H:%M} UTC), or leave it out for now.",
            field="performed_at",
            code="out_of_range",
        )
    if corrects is not None and corrects.job_id != job.pk:
        raise ApplicationError(
            "A correction must refer to a step of the same job.", field="corrects"
        )
    if job.state == JobState.RETURNED:
        raise Conflict(
            "The job is closed (returned); open a new job for further work.",
            field="job",
            code="job_closed",
        )
    step = RepairStep(
        job=job,
        technician=technician,
        action=action,
        parts=parts or [],
        minutes=minutes,
        performed_at=performed_at or now,
        corrects=corrects,
    )
    step.full_clean()
    step.save()
    audit_record(
        actor=technician,
        action="repair_step.add",
        instance=step,
        changes={
            "job": job,
            "action": action,
            "parts": step.parts,
            "minutes": minutes,
            "corrects": corrects,
        },
    )
    return step


def _digest_and_head(upload) -> tuple[str, bytes]:
    sha = hashlib.sha256()
    head = b""
    upload.seek(0)
    for chunk in upload.chunks(HASH_CHUNK):
        if len(head) < SNIFF_BYTES:
            head += chunk[: SNIFF_BYTES - len(head)]
        sha.update(chunk)
    upload.seek(0)
    return sha.hexdigest(), head


def evidence_size_limit(content_type: str) -> int:
    """The largest file of this kind kept as evidence [bytes] (settings per kind)."""
    kind = SIZE_KIND.get(content_type, "")
    return settings.EVIDENCE_MAX_BYTES_BY_KIND.get(kind, settings.EVIDENCE_MAX_BYTES)


def _refuse_size(size: int, limit: int, what: str = "file") -> None:
    if size > limit:
        raise ApplicationError(
            f"The {what} is {size} bytes; the limit is {limit} bytes.",
            field="file",
            code="file_too_large",
        )


def evidence_attach(
    *, job: Job, upload, uploaded_by, step: RepairStep | None = None, caption: str = ""
) -> tuple[Evidence, bool]:
    """Store an uploaded file on a job; return (record, created).

    A returned job takes no more evidence. `step`, when given, must belong to the job. The
    same content twice on one job answers the existing record with created=False.
    """
    if job.state == JobState.RETURNED:
        raise Conflict(
            "The job is closed (returned); open a new job for further work.",
            field="job",
            code="job_closed",
        )
    if step is not None and step.job_id != job.pk:
        raise ApplicationError(
            f"Step {step.pk} belongs to another job; link evidence to a step of job {job.number}.",
            field="step",
        )
    largest = max(settings.EVIDENCE_MAX_BYTES, *settings.EVIDENCE_MAX_BYTES_BY_KIND.values())
    _refuse_size(upload.size, largest)
    digest, head = _digest_and_head(upload)
    label = (upload.name or "")[:255]
    try:
        kind = sniff(head, label)
    except UnacceptableFile as exc:
        raise ApplicationError(str(exc), field="file", code="file_type_refused") from exc
    _refuse_size(upload.size, evidence_size_limit(kind.content_type), kind.content_type)
    existing = Evidence.objects.filter(job=job, sha256=digest).first()
    if existing:
        return existing, False
    evidence = Evidence(
        job=job,
        step=step,
        caption=caption,
        label=label,
        content_type=kind.content_type,
        extension=kind.extension,
        size=upload.size,
        sha256=digest,
        uploaded_by=uploaded_by,
    )
    evidence.file.save("upload", upload, save=False)
    try:
        with transaction.atomic():
            evidence.save()
            audit_record(
                actor=uploaded_by,
                action="evidence.attach",
                instance=evidence,
                changes={
                    "job": job,
                    "step": step,
                    "caption": caption,
                    "label": label,
                    "content_type": kind.content_type,
                    "size": upload.size,
                    "sha256": digest,
                },
            )
    except IntegrityError:
        # The same file arrived twice at once: keep the first record, drop our stored copy.
        evidence.file.storage.delete(evidence.file.name)
        return Evidence.objects.get(job=job, sha256=digest), False
    except Exception:
        evidence.file.storage.delete(evidence.file.name)
        raise
    return evidence, True
