"""The job workflow: which state may move to which, and who may make each move."""

from __future__ import annotations

from shop.core.roles import FRONT_DESK, LEAD, TECHNICIAN

from .models import JobState as S

# Every move a job may make. `on_hold` returns only to the state it was entered from
# (the job's `held_from`); that rule is applied in `allowed_targets`. Going back to
# awaiting_approval (more work found, or the estimate raised) drops the customer's approval.
ALLOWED_MOVES: dict[str, frozenset[str]] = {
    S.RECEIVED: frozenset({S.DIAGNOSING, S.ON_HOLD}),
    S.DIAGNOSING: frozenset({S.AWAITING_APPROVAL, S.ON_HOLD}),
    S.AWAITING_APPROVAL: frozenset({S.REPAIRING, S.DECLINED, S.ON_HOLD}),
    S.REPAIRING: frozenset({S.TESTING, S.AWAITING_APPROVAL, S.ON_HOLD}),
    S.TESTING: frozenset({S.READY, S.REPAIRING, S.AWAITING_APPROVAL, S.ON_HOLD}),
    S.READY: frozenset({S.RETURNED}),
    S.DECLINED: frozenset({S.READY}),
    S.ON_HOLD: frozenset({S.RECEIVED, S.DIAGNOSING, S.AWAITING_APPROVAL, S.REPAIRING, S.TESTING}),
    S.RETURNED: frozenset(),
}

# States from which a job may be put on hold.
OPEN_STATES = frozenset({S.RECEIVED, S.DIAGNOSING, S.AWAITING_APPROVAL, S.REPAIRING, S.TESTING})

# The targets each role may move a job to. The front desk books units in, records the
# customer's answer to the estimate (repairing or declined), holds and resumes jobs, and hands
# units back. Any role that may hold a job may also resume it to where it was.
ROLE_TARGETS: dict[str, frozenset[str]] = {
    FRONT_DESK: frozenset({S.DIAGNOSING, S.REPAIRING, S.DECLINED, S.ON_HOLD, S.RETURNED}),
    TECHNICIAN: frozenset(set(S.values) - {S.RETURNED}),
    LEAD: frozenset(S.values),
}

# A job reaches these states only on the customer's recorded approval of the current estimate.
NEEDS_APPROVAL = frozenset({S.REPAIRING})

# States in which raising the estimate above the approved figure sends the job back to
# awaiting_approval; in READY and RETURNED the work is done and the estimate is settled.
REAPPROVAL_STATES = frozenset({S.REPAIRING, S.TESTING})
ESTIMATE_SETTLED_STATES = frozenset({S.READY, S.RETURNED})


def allowed_targets(state: str, held_from: str = "") -> list[str]:
    """The states a job in `state` may move to next, sorted for stable answers."""
    if state == S.ON_HOLD:
        return [held_from] if held_from else []
    return sorted(ALLOWED_MOVES[state])


def role_may_move_to(roles: frozenset[str], target: str, state: str = "") -> bool:
    """Whether any of the user's roles may move a job in `state` to `target`.

    Resuming a job on hold is allowed to every role that may put a job on hold.
    """
    wanted = S.ON_HOLD if state == S.ON_HOLD else target
    return any(wanted in ROLE_TARGETS.get(role, frozenset()) for role in roles)
