"""Walk a job through its workflow the way the shop does: the desk records the approval."""

from __future__ import annotations

from decimal import Decimal

from shop.intake import services
from shop.intake.models import HoldReason, Job, JobState

WALK_ESTIMATE = Decimal("85.00")


def walk(job: Job, targets, actor, *, approver=None, ready_override: str = "") -> Job:
    """Move `job` through `targets`; reaching repairing goes through the customer's approval.

    A job without an estimate gets `WALK_ESTIMATE` before the approval; holds wait for parts;
    a move to ready carries `ready_override`, a lead's reason to pass the readiness gate.
    """
    for target in targets:
        if target == JobState.REPAIRING and job.state == JobState.AWAITING_APPROVAL:
            if job.estimate is None:
                job = services.job_update(
                    job=job, expected_version=None, actor=actor, estimate=WALK_ESTIMATE
                )
            job = services.job_approve(
                job=job, actor=approver or actor, method="phone", customer_name="Orla"
            )
        elif target == JobState.ON_HOLD:
            job = services.job_transition(
                job=job, to_state=target, actor=actor, hold_reason=HoldReason.WAITING_FOR_PARTS
            )
        elif target == JobState.READY:
            job = services.job_transition(
                job=job, to_state=target, actor=actor, ready_override=ready_override
            )
        else:
            job = services.job_transition(job=job, to_state=target, actor=actor)
    return job
