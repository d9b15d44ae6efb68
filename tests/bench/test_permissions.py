"""The permission matrix for every bench endpoint: each role and anonymous callers."""

from __future__ import annotations

import pytest
from django.core.files.uploadedfile import SimpleUploadedFile

from shop.bench import services

ROLES = ["front_desk", "technician", "lead", "nobody", None]
EVERYONE = {"front_desk", "technician", "lead"}
BENCH = {"technician", "lead"}
LEAD = {"lead"}
READING = {"source_voltage": 60, "load_voltage": 50, "glow_seen": "dark"}


@pytest.fixture
def records(open_test, rig, lamps, meter, unit, staff):
    services.readings_add(test=open_test, readings=[READING], actor=staff["technician"])
    return {"test": open_test, "rig": rig, "lamp": lamps[60], "meter": meter, "unit": unit}


def body_for(name, r):
    return {
        "rig_create": {
            "name": "Bench C",
            "mains_voltage": "230",
            "mains_frequency": 50,
            "source_kind": "fixed_mains",
            "source_current_rating": "5",
        },
        "rig_update": {"internal_resistance": "1.2"},
        "lamp_create": {
            "rig": r["rig"].pk,
            "label": "200 W",
            "technology": "tungsten",
            "rated_voltage": "120",
            "rated_power": "200",
        },
        "lamp_update": {"label": "60 W pearl"},
        "bank_create": {
            "rig": r["rig"].pk,
            "label": "pair",
            "lamps": [r["lamp"].pk, r["lamp"].pk + 1],
        },
        "instrument_create": {
            "kind": "clamp_meter",
            "response": "true_rms",
            "maker": "Hale",
            "accuracy_percent": "2",
        },
        "instrument_update": {"serial": "H-77"},
        "calibration_add": {
            "calibrated_on": "2026-11-01",
            "due_on": "2027-11-01",
            "reference": "Lab",
            "paired_readings": [
                {"reference": 100, "indicated": 101},
                {"reference": 200, "indicated": 201.5},
            ],
        },
        "powerup_create": {"job": r["test"].job_id, "rig": r["rig"].pk, "lamp": r["lamp"].pk},
        "powerup_update": {"notes": "fan noisy"},
        "reading_add": READING,
        "reading_import": {
            "file": SimpleUploadedFile("r.csv", b"source_v,load_v,glow\n90,70,dark\n")
        },
        "close": {},
        "predict": {
            "lamp": {"technology": "tungsten", "rated_voltage": 120, "rated_power": 60},
            "rig": {"mains_voltage": 120, "mains_frequency": 60},
            "declared_load": {
                "kind": "resistive",
                "parameters": {"resistance": 240},
                "basis": "estimate",
            },
        },
    }.get(name)


MATRIX = [
    ("rig_list", "GET", "/api/rigs/", EVERYONE, 200),
    ("rig_create", "POST", "/api/rigs/", LEAD, 201),
    ("rig_update", "PATCH", "/api/rigs/{rig}/", LEAD, 200),
    ("lamp_list", "GET", "/api/lamps/", EVERYONE, 200),
    ("lamp_create", "POST", "/api/lamps/", LEAD, 201),
    ("lamp_update", "PATCH", "/api/lamps/{lamp}/", LEAD, 200),
    ("bank_list", "GET", "/api/lamp-banks/", EVERYONE, 200),
    ("bank_create", "POST", "/api/lamp-banks/", LEAD, 201),
    ("instrument_list", "GET", "/api/instruments/", EVERYONE, 200),
    ("instrument_create", "POST", "/api/instruments/", LEAD, 201),
    ("instrument_update", "PATCH", "/api/instruments/{meter}/", LEAD, 200),
    ("calibration_list", "GET", "/api/instruments/{meter}/calibrations/", EVERYONE, 200),
    ("calibration_add", "POST", "/api/instruments/{meter}/calibrations/", LEAD, 201),
    ("powerup_list", "GET", "/api/powerups/", EVERYONE, 200),
    ("powerup_detail", "GET", "/api/powerups/{test}/", EVERYONE, 200),
    ("powerup_create", "POST", "/api/powerups/", BENCH, 201),
    ("powerup_update", "PATCH", "/api/powerups/{test}/", BENCH, 200),
    ("reading_list", "GET", "/api/powerups/{test}/readings/", EVERYONE, 200),
    ("reading_add", "POST", "/api/powerups/{test}/readings/", BENCH, 201),
    ("reading_import", "POST", "/api/powerups/{test}/readings/import/", BENCH, 201),
    ("close", "POST", "/api/powerups/{test}/close/", BENCH, 200),
    ("plot", "GET", "/api/powerups/{test}/plot.svg", EVERYONE, 200),
    ("predict", "POST", "/api/predict/", EVERYONE, 200),
    ("advice", "GET", "/api/units/{unit}/lamp-advice/?rig={rig}", EVERYONE, 200),
]
CASES = [(*row, role) for row in MATRIX for role in ROLES]


@pytest.mark.parametrize(
    ("name", "method", "url", "allowed", "ok", "role"),
    CASES,
    ids=[f"{c[0]}-{c[5] or 'anonymous'}" for c in CASES],
)
def test_bench_permission_matrix(records, client_for, name, method, url, allowed, ok, role):
    path = url.format(**{key: value.pk for key, value in records.items()})
    fmt = "multipart" if name == "reading_import" else "json"
    response = getattr(client_for(role), method.lower())(path, body_for(name, records), format=fmt)
    expected = 401 if role is None else ok if role in allowed else 403
    assert response.status_code == expected, response.content[:300]


def test_the_verdict_is_readable_by_every_role_once_closed(records, client_for):
    services.powerup_close(test=records["test"], actor=records["test"].technician)
    for role in EVERYONE:
        assert (
            client_for(role).get(f"/api/powerups/{records['test'].pk}/verdict/").status_code == 200
        )
    assert client_for(None).get(f"/api/powerups/{records['test'].pk}/verdict/").status_code == 401
