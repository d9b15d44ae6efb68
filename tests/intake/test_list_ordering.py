"""Paging through a list with ties in the sort column shows every row exactly once."""

from __future__ import annotations

import datetime
from urllib.parse import urlsplit

import pytest
from django.urls import resolve
from rest_framework.test import APIRequestFactory, force_authenticate

from shop.core.ordering import with_unique_tail
from shop.intake.models import Job

JOBS = 240
PAGE = 7


def seed_tied_jobs(unit, count: int) -> None:
    """`count` jobs sharing two intake dates: each page boundary falls inside a tie."""
    days = [datetime.date(2026, 3, 2), datetime.date(2026, 3, 3)]
    Job.objects.bulk_create(
        Job(number=f"T-{index:05d}", unit=unit, complaint="Dead", received_on=days[index % 2])
        for index in range(count)
    )


def page_through(client, query: str) -> list[int]:
    seen: list[int] = []
    url = f"/api/jobs/?{query}&page_size={PAGE}"
    while url:
        response = client.get(url)
        assert response.status_code == 200, response.content
        seen.extend(row["id"] for row in response.json()["results"])
        url = response.json()["next"]
    return seen


@pytest.mark.parametrize(
    "query",
    ["ordering=-received_on", "ordering=received_on", "ordering=state", "state=received"],
)
def test_paging_over_ties_shows_each_job_once(unit, client_for, query):
    seed_tied_jobs(unit, JOBS)
    seen = page_through(client_for("lead"), query)
    assert len(seen) == JOBS
    assert sorted(seen) == sorted(Job.objects.values_list("pk", flat=True))


@pytest.mark.postgres
def test_paging_over_ties_shows_each_job_once_on_postgresql(unit, client_for):
    seed_tied_jobs(unit, JOBS)
    seen = page_through(client_for("lead"), "ordering=-received_on")
    assert sorted(seen) == sorted(Job.objects.values_list("pk", flat=True))


LISTS = [
    "/api/jobs/?ordering=-received_on",
    "/api/jobs/?ordering=state",
    "/api/jobs/?ordering=promised_on",
    "/api/units/?ordering=maker",
    "/api/customers/?ordering=created_at",
    "/api/steps/?ordering=performed_at",
    "/api/evidence/?ordering=size",
    "/api/audit/?ordering=at",
    "/api/rigs/",
    "/api/lamp-banks/?ordering=label",
    "/api/lamps/?ordering=rated_power",
    "/api/instruments/?ordering=maker",
    "/api/powerups/?ordering=started_at",
    "/api/certificates/",
]


@pytest.mark.parametrize("path", LISTS)
def test_every_list_ordering_ends_with_the_primary_key(staff, path):
    """The ordering each list applies, read from the view itself (no rows needed)."""
    match = resolve(urlsplit(path).path)
    view = match.func.cls(**match.func.initkwargs)
    request = APIRequestFactory().get(path)
    force_authenticate(request, user=staff["lead"])
    view.setup(request)
    view.action_map = {"get": "list"}
    view.request = view.initialize_request(request)
    view.action, view.format_kwarg = "list", None
    ordering = view.filter_queryset(view.get_queryset()).query.order_by
    assert ordering, path
    assert ordering[-1].lstrip("-") in {"pk", "id"}, (path, ordering)


def test_unique_tail_follows_the_last_direction():
    assert with_unique_tail(["-received_on"]) == ["-received_on", "-pk"]
    assert with_unique_tail(["state"]) == ["state", "pk"]
    assert with_unique_tail(["-received_on", "-id"]) == ["-received_on", "-id"]
    assert with_unique_tail([]) == ["pk"]
