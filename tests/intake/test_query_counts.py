"""List and detail endpoints cost a fixed number of queries however many rows there are."""

from __future__ import annotations

import pytest
from django.db import connection
from django.test.utils import CaptureQueriesContext

from shop.intake import services


def add_records(customer, technician, count: int) -> None:
    for index in range(count):
        unit = services.unit_create(
            actor=technician,
            owner=customer,
            category="radio",
            maker=f"Maker {index}",
            rated_voltage=120,
            rated_power=50,
        )
        job = services.job_create(
            actor=technician, unit=unit, complaint="Dead", assigned_technician=technician
        )
        services.repair_step_add(
            job=job,
            technician=technician,
            action="Looked inside",
            parts=[{"part": "fuse", "quantity": 1.0, "note": ""}],
        )


def queries_for(client, path: str) -> int:
    client.get(path)  # warm-up: the user's roles are read once, then cached
    with CaptureQueriesContext(connection) as captured:
        response = client.get(path)
    assert response.status_code == 200
    return len(captured)


@pytest.mark.parametrize(
    "path",
    [
        "/api/jobs/",
        "/api/units/",
        "/api/customers/",
        "/api/steps/",
        "/api/jobs/?state=received&ordering=-number",
    ],
)
def test_list_query_count_does_not_grow_with_rows(customer, staff, client_for, path):
    client = client_for("lead")
    add_records(customer, staff["technician"], 2)
    few = queries_for(client, path)
    add_records(customer, staff["technician"], 20)
    assert queries_for(client, path) == few


def test_job_detail_query_count_is_constant(customer, staff, client_for):
    client = client_for("technician")
    add_records(customer, staff["technician"], 1)
    first = services.job_create(actor=staff["lead"], unit=customer.units.first(), complaint="Dead")
    few = queries_for(client, f"/api/jobs/{first.pk}/")
    add_records(customer, staff["technician"], 10)
    assert queries_for(client, f"/api/jobs/{first.pk}/") == few
