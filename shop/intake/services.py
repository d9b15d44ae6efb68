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
from shop.core.roles import LEAD, TECHNICIAN, has_role, user_roles
from shop.core.services import create_validated, only_fields, update_versioned
from shop.core.versioning import check_version

from .facts import hazard_lowering, rule_fields_changed, unit_facts
from .models import (
    Customer,
    Evidence,
    Job,
    JobMove,
    JobNumberCounter,
    JobState,
    RepairStep,
    Unit,
)
from .sniffing import SNIFF_BYTES, UnacceptableFile, sniff
from .workflow import allowed_targets, role_may_move_to

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
    "condition_notes",
)
JOB_FIELDS = (
    "complaint",
    "received_on",
    "promised_on",
    "assigned_technician",
    "estimate",
    "approved_by",
    "approved_at",
)
HASH_CHUNK = 1 << 20
# A declined job goes back unrepaired: no power-up test stands behind its "ready".
UNREPAIRED_STATES = frozenset({JobState.DECLINED})


@transaction.atomic
def customer_create(
    *, actor, name: str, phone: str = "", email: str = "", notes: str = ""
) -> Customer:
    return create_validated(
        Customer,
        {"name": name, "phone": phone, "email": email, "notes": notes},
        actor=actor,
        action="customer.create",
    )


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
    return create_validated(
        Unit, only_fields(fields, UNIT_FIELDS), actor=actor, action="unit.create"
    )


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
    only_fields(changes, JOB_FIELDS)
    if "assigned_technician" in changes:
        _check_technician(changes["assigned_technician"])
    return update_versioned(
        job, expected=expected_version, changes=changes, actor=actor, action="job.update"
    )


@transaction.atomic
def job_transition(
    *,
    job: Job,
    to_state: str,
    actor,
    note: str = "",
    expected_version: int | None = None,
    approved_by: str = "",
    ready_override: str = "",
) -> Job:
    """Move a job to `to_state` under a row lock, and record who moved it, when and why.

    Moving from awaiting_approval to repairing needs the customer's approval: pass
    `approved_by` (who approved) unless the job already records it. Moving to ready (but
    from declined) needs the latest closed power-up test to have passed, or a lead's stated
    reason (`ready_override`), kept on the job.
    """
    locked = Job.objects.select_for_update().get(pk=job.pk)
    check_version(locked, expected_version)
    if to_state not in JobState.values:
        raise ApplicationError(
            f"'{to_state}' is not a job state. Known states: {', '.join(JobState.values)}.",
            field="to_state",
        )
    targets = allowed_targets(locked.state, locked.held_from)
    if to_state not in targets:
        raise Conflict(
            f"A job in '{locked.state}' cannot move to '{to_state}'. "
            f"Allowed next: {', '.join(targets) or 'none (the job is closed)'}.",
            field="to_state",
            code="illegal_move",
            extra={"allowed_targets": targets, "state": locked.state},
        )
    if not role_may_move_to(user_roles(actor), to_state):
        raise Forbidden(
            f"Your role may not move a job to '{to_state}'. Ask a shop lead.",
            field="to_state",
        )
    changes: dict = {"state": to_state}
    if to_state == JobState.ON_HOLD:
        changes["held_from"] = locked.state
    elif locked.state == JobState.ON_HOLD:
        changes["held_from"] = ""
    if locked.state == JobState.AWAITING_APPROVAL and to_state == JobState.REPAIRING:
        if approved_by:
            changes.update(approved_by=approved_by, approved_at=timezone.now())
        elif not locked.approved_by:
            raise ApplicationError(
                "Record who approved the repair (approved_by) before moving to repairing.",
                field="approved_by",
                code="approval_required",
            )
    if to_state == JobState.READY and locked.state not in UNREPAIRED_STATES:
        changes.update(_readiness(locked, actor, ready_override))
    JobMove.objects.create(
        job=locked, from_state=locked.state, to_state=to_state, moved_by=actor, note=note
    )
    return update_versioned(
        locked, expected=None, changes=changes, actor=actor, action="job.transition"
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


def evidence_attach(*, job: Job, upload, uploaded_by) -> tuple[Evidence, bool]:
    """Store an uploaded file on a job; return (record, created).

    The same content twice on one job answers the existing record with created=False.
    """
    limit = settings.EVIDENCE_MAX_BYTES
    if upload.size > limit:
        raise ApplicationError(
            f"The file is {upload.size} bytes; the limit is {limit} bytes.",
            field="file",
            code="file_too_large",
        )
    digest, head = _digest_and_head(upload)
    label = (upload.name or "")[:255]
    try:
        kind = sniff(head, label)
    except UnacceptableFile as exc:
        raise ApplicationError(str(exc), field="file", code="file_type_refused") from exc
    existing = Evidence.objects.filter(job=job, sha256=digest).first()
    if existing:
        return existing, False
    evidence = Evidence(
        job=job,
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
