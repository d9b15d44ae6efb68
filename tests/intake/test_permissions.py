"""The permission matrix: every intake endpoint, each role, and anonymous callers."""

from __future__ import annotations

import pytest
from django.core.files.uploadedfile import SimpleUploadedFile

from shop.intake import services

ROLES = ["front_desk", "technician", "lead", "nobody", None]
OK = {"GET": 200, "POST": 201, "PATCH": 200}


def png_bytes() -> bytes:
    return b"\x89PNG\r\n\x1a\n" + b"\x00\x00\x00\rIHDR" + bytes(64)


@pytest.fixture
def records(job, staff):
    step = services.repair_step_add(job=job, technician=staff["technician"], action="Checked fuse")
    evidence, _ = services.evidence_attach(
        job=job, upload=SimpleUploadedFile("chassis.png", png_bytes()), uploaded_by=staff["lead"]
    )
    return {
        "job": job,
        "unit": job.unit,
        "customer": job.unit.owner,
        "step": step,
        "evidence": evidence,
    }


def body_for(name, r):
    return {
        "customer_create": {"name": "Piers Vantongeren"},
        "customer_update": {"notes": "prefers email"},
        "unit_create": {
            "owner": r["customer"].pk,
            "category": "amplifier",
            "maker": "Kestrel",
            "rated_voltage": "230",
            "rated_power": "45",
        },
        "unit_update": {"model_name": "Console 7B"},
        "job_create": {"unit": r["unit"].pk, "complaint": "Crackles"},
        "job_update": {"complaint": "Crackles, then silence"},
        "job_transition": {"to_state": "diagnosing"},
        "step_create": {"job": r["job"].pk, "action": "Replaced mains cord", "minutes": 20},
        "evidence_create": {
            "job": r["job"].pk,
            "file": SimpleUploadedFile("label.png", png_bytes()[:-1] + b"\x01"),
        },
    }.get(name)


# (name, method, url template, roles allowed)
MATRIX = [
    ("customer_list", "GET", "/api/customers/", {"front_desk", "technician", "lead"}),
    ("customer_detail", "GET", "/api/customers/{customer}/", {"front_desk", "technician", "lead"}),
    ("customer_create", "POST", "/api/customers/", {"front_desk", "lead"}),
    ("customer_update", "PATCH", "/api/customers/{customer}/", {"front_desk", "lead"}),
    ("unit_list", "GET", "/api/units/", {"front_desk", "technician", "lead"}),
    ("unit_detail", "GET", "/api/units/{unit}/", {"front_desk", "technician", "lead"}),
    ("unit_create", "POST", "/api/units/", {"front_desk", "lead"}),
    ("unit_update", "PATCH", "/api/units/{unit}/", {"front_desk", "technician", "lead"}),
    ("job_list", "GET", "/api/jobs/", {"front_desk", "technician", "lead"}),
    ("job_detail", "GET", "/api/jobs/{job}/", {"front_desk", "technician", "lead"}),
    ("job_create", "POST", "/api/jobs/", {"front_desk", "lead"}),
    ("job_update", "PATCH", "/api/jobs/{job}/", {"front_desk", "lead"}),
    ("job_transition", "POST", "/api/jobs/{job}/transition/", {"front_desk", "technician", "lead"}),
    ("job_moves", "GET", "/api/jobs/{job}/moves/", {"front_desk", "technician", "lead"}),
    ("step_list", "GET", "/api/steps/", {"front_desk", "technician", "lead"}),
    ("step_detail", "GET", "/api/steps/{step}/", {"front_desk", "technician", "lead"}),
    ("step_create", "POST", "/api/steps/", {"technician", "lead"}),
    ("evidence_list", "GET", "/api/evidence/", {"front_desk", "technician", "lead"}),
    ("evidence_detail", "GET", "/api/evidence/{evidence}/", {"front_desk", "technician", "lead"}),
    (
        "evidence_download",
        "GET",
        "/api/evidence/{evidence}/download/",
        {"front_desk", "technician", "lead"},
    ),
    ("evidence_create", "POST", "/api/evidence/", {"front_desk", "technician", "lead"}),
]
CASES = [
    (name, method, url, allowed, role) for name, method, url, allowed in MATRIX for role in ROLES
]


@pytest.mark.parametrize(
    ("name", "method", "url", "allowed", "role"),
    CASES,
    ids=[f"{c[0]}-{c[4] or 'anonymous'}" for c in CASES],
)
def test_permission_matrix(records, staff, client_for, name, method, url, allowed, role):
    client = client_for(role)
    path = url.format(**{key: value.pk for key, value in records.items()})
    data = body_for(name, records)
    fmt = "multipart" if name == "evidence_create" else "json"
    response = getattr(client, method.lower())(path, data, format=fmt)
    if role is None:
        expected = 401
    elif role in allowed:
        expected = 200 if name == "job_transition" else OK[method]
    else:
        expected = 403
    assert response.status_code == expected, response.content[:300]
    if expected >= 400:
        assert set(response.json()["error"]) >= {"code", "message", "field", "fields"}


def test_technicians_see_customer_names_but_not_contact_details(customer, client_for):
    body = client_for("technician").get(f"/api/customers/{customer.pk}/").json()
    assert body["name"] == customer.name
    assert "phone" not in body and "email" not in body


def test_anonymous_reaches_the_schema_and_the_docs_page(client_for, db):
    anonymous = client_for(None)
    assert anonymous.get("/api/schema/").status_code == 200
    assert anonymous.get("/api/docs/").status_code == 200
