"""The API root lists every resource; /api/me/ answers who is signed in and their roles."""

from __future__ import annotations

import pytest
from django.contrib.auth.models import User

RESOURCES = {
    "customers",
    "units",
    "jobs",
    "steps",
    "evidence",
    "rigs",
    "lamps",
    "lamp-banks",
    "instruments",
    "powerups",
    "certificates",
    "audit",
}


def test_the_api_root_lists_every_resource_of_every_app(client_for):
    response = client_for("technician").get("/api/", HTTP_ACCEPT="application/json")
    assert response.status_code == 200
    listed = response.json()
    assert RESOURCES | {"me", "predict"} <= set(listed)
    assert listed["powerups"].endswith("/api/powerups/")
    assert listed["certificates"].endswith("/api/certificates/")
    assert listed["me"].endswith("/api/me/")


def test_every_resource_the_root_lists_answers_the_lead(client_for):
    lead = client_for("lead")
    listed = lead.get("/api/", HTTP_ACCEPT="application/json").json()
    for name in RESOURCES | {"me"}:
        assert lead.get(listed[name]).status_code == 200, name


def test_the_api_root_is_not_for_anonymous_callers(client_for, db):
    assert client_for(None).get("/api/").status_code == 401


@pytest.mark.parametrize(
    ("role", "roles"),
    [("front_desk", ["front_desk"]), ("technician", ["technician"]), ("lead", ["lead"])],
)
def test_me_answers_the_signed_in_user_and_roles(client_for, staff, role, roles):
    response = client_for(role).get("/api/me/")
    assert response.status_code == 200
    body = response.json()
    assert (body["id"], body["username"], body["roles"]) == (
        staff[role].pk,
        staff[role].username,
        roles,
    )
    assert body["admin_access"] is False


def test_me_for_a_user_without_a_role_lists_none(client_for):
    assert client_for("nobody").get("/api/me/").json()["roles"] == []


def test_me_for_a_superuser_lists_every_role(db):
    from rest_framework.test import APIClient

    client = APIClient()
    client.force_authenticate(User.objects.create_superuser("root_rosa", password="x-pw-12345"))
    body = client.get("/api/me/").json()
    assert body["roles"] == ["front_desk", "lead", "technician"]
    assert body["admin_access"] is True


def test_me_is_not_for_anonymous_callers(client_for, db):
    response = client_for(None).get("/api/me/")
    assert response.status_code == 401
    assert response.json()["error"]["code"] == "not_authenticated"
