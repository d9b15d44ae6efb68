"""List endpoints refuse query parameters they do not understand, naming them."""

from __future__ import annotations

import pytest
from drf_spectacular.generators import SchemaGenerator


def list_paths() -> list[str]:
    """Every top-level list of the API, read from the schema (operation ids ending in _list)."""
    schema = SchemaGenerator().get_schema(request=None, public=True)
    return sorted(
        path
        for path, operations in schema["paths"].items()
        if operations.get("get", {}).get("operationId", "").endswith("_list") and "{" not in path
    )


def test_the_schema_names_the_lists():
    paths = list_paths()
    assert {"/api/jobs/", "/api/customers/", "/api/powerups/", "/api/audit/"} <= set(paths)


@pytest.mark.parametrize("path", list_paths())
def test_every_list_refuses_an_unknown_parameter_naming_it(client_for, path):
    response = client_for("lead").get(path, {"stat": "received", "page": 1})
    assert response.status_code == 400, (path, response.content)
    error = response.json()["error"]
    assert (error["code"], error["field"]) == ("unknown_parameter", "stat")
    assert error["unknown_parameters"] == ["stat"]
    assert "stat" in error["message"]


def test_several_unknown_parameters_are_all_named(client_for):
    response = client_for("lead").get("/api/jobs/", {"zeta": 1, "alpha": 2, "state": "received"})
    assert response.status_code == 400
    assert response.json()["error"]["unknown_parameters"] == ["alpha", "zeta"]


def test_pagination_filters_ordering_search_and_format_stay_allowed(client_for, job):
    response = client_for("lead").get(
        "/api/jobs/",
        {
            "page": 1,
            "page_size": 10,
            "state": "received",
            "received_after": "2000-01-01",
            "customer": job.unit.owner_id,
            "search": job.number,
            "ordering": "-received_on",
            "format": "json",
        },
    )
    assert response.status_code == 200, response.content
    assert [row["number"] for row in response.json()["results"]] == [job.number]


def test_a_detail_view_ignores_the_list_rule(client_for, job):
    response = client_for("lead").get(f"/api/jobs/{job.pk}/", {"format": "json"})
    assert response.status_code == 200
