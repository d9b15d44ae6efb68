"""List and detail endpoints cost a fixed number of queries however many rows there are."""

from __future__ import annotations

import pytest
from django.db import connection
from django.test.utils import CaptureQueriesContext
from rest_framework.test import APIClient

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


def token_client_for(user) -> APIClient:
    """A client that signs in at the token endpoint, as a real caller does."""
    anonymous = APIClient()
    response = anonymous.post(
        "/api/auth/token/", {"username": user.username, "password": "not-a-real-pw-1"}
    )
    assert response.status_code == 200, response.content
    client = APIClient()
    client.credentials(HTTP_AUTHORIZATION=f"Token {response.json()['token']}")
    return client


def captured_sql(client, path: str) -> list[str]:
    with CaptureQueriesContext(connection) as captured:
        response = client.get(path)
    assert response.status_code == 200, response.content
    return [query["sql"] for query in captured]


def test_token_job_list_costs_three_queries_without_distinct_or_password(customer, staff):
    """Token with user and roles, the count, the page; no DISTINCT, no password hash read."""
    add_records(customer, staff["technician"], 3)
    client = token_client_for(staff["front_desk"])
    for path in ("/api/jobs/", "/api/jobs/?state=received&state=diagnosing"):
        queries = captured_sql(client, path)
        assert len(queries) == 3, queries
        assert not any("DISTINCT" in sql.upper() for sql in queries), queries
        assert not any('"password"' in sql for sql in queries if "intake_job" in sql), queries


def test_token_job_detail_costs_two_queries(customer, staff):
    """Token with user and roles, then the job with its unit, owner and technician."""
    add_records(customer, staff["technician"], 1)
    job = customer.units.first().jobs.first()
    queries = captured_sql(token_client_for(staff["technician"]), f"/api/jobs/{job.pk}/")
    assert len(queries) == 2, queries
    assert not any('"password"' in sql for sql in queries if "intake_job" in sql), queries


def test_roles_read_with_the_token_still_gate_each_operation(customer, staff):
    """The roles come with the token: a front-desk token may not add a repair step."""
    add_records(customer, staff["technician"], 1)
    job = customer.units.first().jobs.first()
    step = {"job": job.pk, "action": "Looked inside"}
    desk = token_client_for(staff["front_desk"]).post("/api/steps/", step, format="json")
    assert desk.status_code == 403
    bench = token_client_for(staff["technician"]).post("/api/steps/", step, format="json")
    assert bench.status_code == 201, bench.content
    nobody = token_client_for(staff["nobody"]).get("/api/jobs/")
    assert nobody.status_code == 403
