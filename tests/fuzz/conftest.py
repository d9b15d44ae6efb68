"""Fuzzing fixtures: the demo shop with open tests, evidence and certificates, a token per role,
and the Django app called in-process."""

from __future__ import annotations

import os
from contextlib import contextmanager
from io import StringIO

import pytest
from django.contrib.auth.models import User
from django.core.files.uploadedfile import SimpleUploadedFile
from django.core.handlers.wsgi import WSGIHandler
from django.core.management import call_command
from django.core.signals import request_finished, request_started
from django.db import close_old_connections
from rest_framework.test import APIClient

from reports.models import Certificate
from shop.bench.models import PowerUpTest, Rig, TestStatus
from shop.core.authentication import token_create
from shop.intake.models import Job, JobState

from .content import pdf_document, png_image

# The demo staff who act for each role (fixtures/demo/intake.json).
DEMO_USER_BY_ROLE = {"front_desk": "dana", "technician": "theo", "lead": "lena"}
# Every seeded open test starts with these: a healthy 60 W, 120 V unit's readings.
SEED_READINGS = [
    {"source_voltage": 40.0, "load_voltage": 37.0, "glow_seen": "dark"},
    {"source_voltage": 80.0, "load_voltage": 71.0, "glow_seen": "faint"},
    {"source_voltage": 120.0, "load_voltage": 101.0, "glow_seen": "faint"},
]
SEED_DECLARED_LOAD = {
    "kind": "resistive",
    "parameters": {"power": 60, "voltage": 120},
    "basis": "nameplate",
}
# The fuzz runs (schemathesis and the state machine) run once per CI run: on the SQLite pass,
# where DATABASE_URL is unset; the PostgreSQL pass sets it.
once_per_ci_run = pytest.mark.skipif(
    bool(os.environ.get("DATABASE_URL")),
    reason="runs once per CI run, on the SQLite pass (DATABASE_URL unset)",
)
# The host name schemathesis' WSGI client sends.
IN_PROCESS_HOST = "localhost"
CERTIFIABLE_STATES = (JobState.TESTING, JobState.READY)


def assert_error_shape(response) -> dict:
    """Assert that a refusal is a 4xx in the single error shape; return its `error` object."""
    assert 400 <= response.status_code < 500, (response.status_code, response.content[:500])
    body = response.json()
    assert set(body) == {"error"}, body
    error = body["error"]
    assert isinstance(error["code"], str) and error["code"], error
    assert isinstance(error["message"], str) and error["message"], error
    assert error["field"] is None or isinstance(error["field"], str), error
    assert isinstance(error["fields"], dict), error
    return error


def _api_as(username: str) -> APIClient:
    client = APIClient()
    client.force_authenticate(User.objects.get(username=username))
    return client


def _expect(response, status: int):
    assert response.status_code == status, response.content[:500]
    return response.json()


def seed_through_api() -> None:
    """Open a test with readings on every job still on the bench (not yet ready), attach
    evidence to the first job, and issue a certificate for every certifiable job that lacks
    one: through the API, as the demo staff would."""
    tech = _api_as(DEMO_USER_BY_ROLE["technician"])
    on_bench = Job.objects.exclude(
        state__in=[JobState.RETURNED, JobState.DECLINED, JobState.READY]
    ).select_related("unit")
    for job in on_bench.order_by("id"):
        # The demo rig of the unit's mains (120 V or 230 V), as the bench would choose.
        rig = Rig.objects.filter(mains_voltage=120 if job.unit.rated_voltage < 180 else 230)
        rig = rig.order_by("id").first()
        lamp = rig.lamps.order_by("rated_power").last()
        test = _expect(
            tech.post(
                "/api/powerups/",
                {
                    "job": job.pk,
                    "rig": rig.pk,
                    "lamp": lamp.pk,
                    "declared_load": SEED_DECLARED_LOAD,
                },
                format="json",
            ),
            201,
        )
        _expect(
            tech.post(
                f"/api/powerups/{test['id']}/readings/", {"readings": SEED_READINGS}, format="json"
            ),
            201,
        )
    desk = _api_as(DEMO_USER_BY_ROLE["front_desk"])
    first_job = Job.objects.order_by("id").first()
    for name, content in (
        ("bench.png", png_image(4, 4, b"\x10\x80")),
        ("scope.pdf", pdf_document("ripple at full source")),
    ):
        upload = SimpleUploadedFile(name, content)
        _expect(desk.post("/api/evidence/", {"job": first_job.pk, "file": upload}), 201)
    lead = _api_as(DEMO_USER_BY_ROLE["lead"])
    closed = PowerUpTest.objects.filter(status=TestStatus.CLOSED)
    for job in Job.objects.filter(state__in=CERTIFIABLE_STATES, powerups__in=closed).distinct():
        if not Certificate.objects.filter(job=job).exists():
            _expect(lead.post("/api/certificates/", {"job": job.pk}, format="json"), 201)


@pytest.fixture
def demo_shop(db, settings):
    """The demo shop, seeded further through the API so every kind of record has live ids."""
    settings.ALLOWED_HOSTS = [IN_PROCESS_HOST, "testserver"]
    call_command("demo_load", stdout=StringIO())
    seed_through_api()


@pytest.fixture
def role_tokens(demo_shop):
    """{"lead": "Token ...", ...}: an Authorization header value for each role's demo user."""
    return {
        role: f"Token {token_create(user=User.objects.get(username=name))[1]}"
        for role, name in DEMO_USER_BY_ROLE.items()
    }


@contextmanager
def in_process_app():
    """The Django WSGI app, called in this thread inside the test's transaction.

    A real request closes "old" database connections when it starts and when it finishes;
    inside a test transaction that would discard the transaction, so those handlers are off
    meanwhile (as in Django's own test client).
    """
    request_started.disconnect(close_old_connections)
    request_finished.disconnect(close_old_connections)
    try:
        yield WSGIHandler()
    finally:
        request_started.connect(close_old_connections)
        request_finished.connect(close_old_connections)
