"""Shared fixtures: named staff in each role, API clients signed in as them, and intake records."""

from __future__ import annotations

import os
from decimal import Decimal

import pytest
from django.contrib.auth.models import Group, User
from django.db import connection
from rest_framework.test import APIClient

from shop.core.roles import FRONT_DESK, LEAD, TECHNICIAN
from shop.intake import services
from shop.intake.models import Construction

# Bench fixtures (rigs, lamps, meters, open tests) serve the bench and reports tests alike.
pytest_plugins = ["tests.fixtures_bench"]

ROLE_USERNAMES = {FRONT_DESK: "desk_dana", TECHNICIAN: "tech_theo", LEAD: "lead_lena"}


@pytest.fixture(autouse=True)
def _postgres_gate(request):
    """Tests marked `postgres` need PostgreSQL; they fail, not skip, when CI demands it."""
    if request.node.get_closest_marker("postgres") is None or connection.vendor == "postgresql":
        return
    if os.environ.get("REQUIRE_POSTGRES") == "1":
        pytest.fail("This run must use PostgreSQL (REQUIRE_POSTGRES=1) but DATABASE_URL is not it.")
    pytest.skip("needs PostgreSQL: set DATABASE_URL=postgres://... to run it")


def make_staff(role: str | None, username: str | None = None) -> User:
    user = User.objects.create_user(username=username or f"user_{role}", password="not-a-real-pw-1")
    if role:
        user.groups.add(Group.objects.get_or_create(name=role)[0])
    return user


@pytest.fixture
def staff(db) -> dict[str, User]:
    """One user per role, plus `nobody` (signed in, no role)."""
    users = {role: make_staff(role, name) for role, name in ROLE_USERNAMES.items()}
    users["nobody"] = make_staff(None, "no_role_nick")
    return users


@pytest.fixture
def client_for(staff):
    """client_for("technician") -> an APIClient signed in as that role (None: anonymous)."""

    def build(role: str | None) -> APIClient:
        client = APIClient()
        if role is not None:
            client.force_authenticate(staff[role])
        return client

    return build


@pytest.fixture
def customer(staff):
    return services.customer_create(
        actor=staff["front_desk"], name="Orla Quennell", phone="555-0142", email="orla@example.org"
    )


@pytest.fixture
def unit(customer, staff):
    return services.unit_create(
        actor=staff["front_desk"],
        owner=customer,
        category="radio",
        maker="Brightwave",
        model_name="Console 7",
        serial="BW-7-0001",
        rated_voltage=Decimal("120"),
        rated_power=Decimal("60"),
        construction=Construction.ISOLATING_TRANSFORMER,
    )


@pytest.fixture
def job(unit, staff):
    return services.job_create(
        actor=staff["front_desk"], unit=unit, complaint="Hums loudly, no sound after warm-up."
    )
