"""Job numbers: year plus sequence, never duplicated, even when intakes race."""

from __future__ import annotations

import threading
from datetime import date

import pytest
from django.db import close_old_connections

from shop.intake import services
from shop.intake.models import Job, JobMove, JobState


def test_numbers_count_up_within_a_year_and_restart_in_the_next(unit, staff):
    numbers = [
        services.job_create(
            actor=staff["front_desk"], unit=unit, complaint="x", received_on=date(2026, 3, d)
        ).number
        for d in (1, 2, 3)
    ]
    assert numbers == ["2026-0001", "2026-0002", "2026-0003"]
    assert services.job_create(
        actor=staff["front_desk"], unit=unit, complaint="x", received_on=date(2027, 1, 2)
    ).number == ("2027-0001")


def run_in_threads(count: int, work) -> list:
    results, barrier = [], threading.Barrier(count)

    def runner():
        try:
            barrier.wait()
            results.append(work())
        except Exception as exc:  # collected and asserted on by the caller
            results.append(exc)
        finally:
            close_old_connections()

    threads = [threading.Thread(target=runner) for _ in range(count)]
    for thread in threads:
        thread.start()
    for thread in threads:
        thread.join(timeout=60)
    return results


@pytest.mark.postgres
@pytest.mark.django_db(transaction=True)
def test_parallel_intakes_never_share_a_number(unit, staff):
    results = run_in_threads(
        8,
        lambda: services.job_create(
            actor=staff["front_desk"],
            unit=unit,
            complaint="rush",
            received_on=date(2026, 5, 1),
        ),
    )
    assert not [r for r in results if isinstance(r, Exception)], results
    numbers = sorted(Job.objects.values_list("number", flat=True))
    assert numbers == [f"2026-{n:04d}" for n in range(1, 9)]


@pytest.mark.postgres
@pytest.mark.django_db(transaction=True)
def test_two_people_moving_one_job_at_once_never_lose_a_move(job, staff):
    def move():
        return services.job_transition(job=job, to_state=JobState.DIAGNOSING, actor=staff["lead"])

    results = run_in_threads(2, move)
    succeeded = [r for r in results if isinstance(r, Job)]
    refused = [r for r in results if not isinstance(r, Job)]
    assert len(succeeded) == 1
    assert len(refused) == 1 and getattr(refused[0], "code", "") == "illegal_move"
    job.refresh_from_db()
    assert job.state == JobState.DIAGNOSING
    assert JobMove.objects.filter(job=job).count() == 1
    assert job.version == 2


@pytest.mark.postgres
@pytest.mark.django_db(transaction=True)
def test_two_api_moves_of_one_job_give_one_winner_and_no_server_error(job, staff):
    from rest_framework.test import APIClient

    etag = f'"v{job.version}"'

    def move():
        client = APIClient()
        client.force_authenticate(staff["lead"])
        return client.post(
            f"/api/jobs/{job.pk}/transition/",
            {"to_state": "diagnosing"},
            format="json",
            HTTP_IF_MATCH=etag,
        ).status_code

    statuses = sorted(run_in_threads(2, move))
    assert statuses[0] == 200
    assert statuses[1] in {409, 412}
    assert JobMove.objects.filter(job=job).count() == 1
