"""The job workflow: which state may move to which, and who may make each move."""

from __future__ import annotations

from shop.core.roles import FRONT_DESK, LEAD, TECHNICIAN

from .models import JobState as S

# Every move a job may make. `on_hold` returns only to the state it was entered from
# (the job's `held_from`); that rule is applied in `allowed_targets`.
ALLOWED_MOVES: dict[str, frozenset[str]] = {
    S.RECEIVED: frozenset({S.DIAGNOSING, S.ON_HOLD}),
    S.DIAGNOSING: frozenset({S.AWAITING_APPROVAL, S.ON_HOLD}),
    S.AWAITING_APPROVAL: frozenset({S.REPAIRING, S.DECLINED, S.ON_HOLD}),
    S.REPAIRING: frozenset({S.TESTING, S.ON_HOLD}),
    S.TESTING: frozenset({S.READY, S.REPAIRING, S.ON_HOLD}),
    S.READY: frozenset({S.RETURNED}),
    S.DECLINED: frozenset({S.READY}),
    S.ON_HOLD: frozenset({S.RECEIVED, S.DIAGNOSING, S.AWAITING_APPROVAL, S.REPAIRING, S.TESTING}),
    S.RETURNED: frozenset(),
}

# States from which a job may be put on hold.
OPEN_STATES = frozenset({S.RECEIVED, S.DIAGNOSING, S.AWAITING_APPROVAL, S.REPAIRING, S.TESTING})

# The targets each role may move a job to.
ROLE_TARGETS: dict[str, frozenset[str]] = {
    FRONT_DESK: frozenset({S.DIAGNOSING}),
    TECHNICIAN: frozenset(set(S.values) - {S.RETURNED}),
    LEAD: frozenset(S.values),
}


def allowed_targets(state: str, held_from: str = "") -> list[str]:
    """The states a job in `state` may move to next, sorted for stable answers."""
    if state == S.ON_HOLD:
        return [held_from] if held_from else []
    return sorted(ALLOWED_MOVES[state])


def role_may_move_to(roles: frozenset[str], target: str) -> bool:
    """Whether any of the user's roles may move a job to `target`."""
    return any(target in ROLE_TARGETS.get(role, frozenset()) for role in roles)
