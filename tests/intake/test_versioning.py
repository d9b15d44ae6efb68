"""Optimistic concurrency: ETag on reads, If-Match honoured on writes, stale writes refused."""

from __future__ import annotations

import pytest


@pytest.mark.parametrize("kind", ["customers", "units", "jobs"])
def test_detail_carries_an_etag_of_its_version(kind, job, client_for):
    record_id = {"customers": job.unit.owner_id, "units": job.unit_id, "jobs": job.pk}[kind]
    response = client_for("lead").get(f"/api/{kind}/{record_id}/")
    assert response["ETag"] == f'"v{response.json()["version"]}"'


def test_a_write_with_the_current_etag_lands_and_bumps_the_version(customer, client_for):
    client = client_for("front_desk")
    etag = client.get(f"/api/customers/{customer.pk}/")["ETag"]
    response = client.patch(
        f"/api/customers/{customer.pk}/",
        {"notes": "calls after 5"},
        format="json",
        HTTP_IF_MATCH=etag,
    )
    assert response.status_code == 200
    assert response.json()["version"] == customer.version + 1
    assert response["ETag"] == f'"v{customer.version + 1}"'


def test_a_stale_write_is_refused_with_412_and_never_lands(customer, client_for):
    desk, lead = client_for("front_desk"), client_for("lead")
    etag = desk.get(f"/api/customers/{customer.pk}/")["ETag"]
    assert (
        lead.patch(
            f"/api/customers/{customer.pk}/", {"notes": "first"}, format="json", HTTP_IF_MATCH=etag
        ).status_code
        == 200
    )
    stale = desk.patch(
        f"/api/customers/{customer.pk}/", {"notes": "second"}, format="json", HTTP_IF_MATCH=etag
    )
    assert stale.status_code == 412
    assert stale.json()["error"]["code"] == "stale_version"
    customer.refresh_from_db()
    assert customer.notes == "first"


def test_a_write_without_if_match_is_accepted(unit, client_for):
    response = client_for("technician").patch(
        f"/api/units/{unit.pk}/", {"model_name": "Console 7B"}, format="json"
    )
    assert response.status_code == 200
    assert response.json()["version"] == unit.version + 1


def test_a_malformed_if_match_is_a_400_naming_the_header(unit, client_for):
    response = client_for("lead").patch(
        f"/api/units/{unit.pk}/", {"model_name": "x"}, format="json", HTTP_IF_MATCH="banana"
    )
    assert response.status_code == 400
    assert response.json()["error"]["field"] == "If-Match"


def test_a_stale_transition_is_refused_with_412(job, client_for):
    client = client_for("lead")
    etag = client.get(f"/api/jobs/{job.pk}/")["ETag"]
    client.patch(f"/api/jobs/{job.pk}/", {"complaint": "also smells hot"}, format="json")
    response = client.post(
        f"/api/jobs/{job.pk}/transition/",
        {"to_state": "diagnosing"},
        format="json",
        HTTP_IF_MATCH=etag,
    )
    assert response.status_code == 412
    job.refresh_from_db()
    assert job.state == "received"
