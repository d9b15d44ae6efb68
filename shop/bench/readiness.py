"""The readiness gate: may a job leave the bench as ready, judged by its power-up tests?"""

from __future__ import annotations

from shop.intake.models import Job

from .models import PowerUpTest, TestStatus

PASSING_OUTCOME = "pass"


def latest_closed_test(job: Job) -> PowerUpTest | None:
    """The job's most recently closed power-up test, with its verdict, or None."""
    return (
        job.powerups.filter(status=TestStatus.CLOSED)
        .select_related("verdict")
        .order_by("-closed_at", "-id")
        .first()
    )


def readiness_refusal(job: Job) -> tuple[str, str] | None:
    """Why the job may not move to ready as (code, message), or None when it may.

    The job's unit must have a closed test, the latest closed one must have passed, and no
    test may still be open (its verdict could yet change the answer).
    """
    still_open = list(
        job.powerups.filter(status=TestStatus.OPEN).order_by("id").values_list("pk", flat=True)
    )
    if still_open:
        return (
            "test_open",
            f"Power-up test {still_open[0]} of job {job.number} is still open: close it first.",
        )
    latest = latest_closed_test(job)
    if latest is None:
        return "no_closed_test", f"Job {job.number} has no closed power-up test."
    outcome = latest.verdict.outcome
    if outcome != PASSING_OUTCOME:
        return (
            "latest_test_not_passed",
            f"The latest closed power-up test of job {job.number} (test {latest.pk}) is "
            f"'{outcome}', not 'pass'.",
        )
    return None
