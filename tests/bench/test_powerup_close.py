"""Closing a test: the stored verdict equals judge() on the same inputs; closed means closed."""

from __future__ import annotations

import threading
import xml.etree.ElementTree as ET
from dataclasses import asdict

import numpy as np
import pytest
from django.db import close_old_connections

from shop.bench import judging, services
from shop.bench.models import PowerUpTest, Verdict
from shop.physics import scenarios as reference
from shop.physics.judgement import judge
from shop.physics.lamp import Lamp
from shop.physics.loads import ResistiveLoad

STEPS = [30.0, 60.0, 90.0, 120.0]
SVG = "{http://www.w3.org/2000/svg}"


def generated(impedance: float, seed: int = 3, **options) -> list[dict]:
    """Readings from the independent scalar generator, for a true lamp near the nominal 60 W."""
    rng = np.random.default_rng(seed)
    true_lamp = reference.random_perturbed_lamp(Lamp(120, 60), rng)
    return [
        {key: value for key, value in asdict(r).items() if value is not None}
        for r in reference.readings(
            true_lamp, impedance, STEPS, rng, source_resistance=2.0, **options
        )
    ]


def send_and_close(client, test, readings):
    assert (
        client.post(
            f"/api/powerups/{test.pk}/readings/", {"readings": readings}, format="json"
        ).status_code
        == 201
    )
    return client.post(f"/api/powerups/{test.pk}/close/", {}, format="json")


def test_closing_stores_the_verdict_judge_gives_on_the_same_inputs(open_test, client_for):
    readings = generated(240.0)
    response = send_and_close(client_for("technician"), open_test, readings)
    assert response.status_code == 200, response.content
    stored = Verdict.objects.get(test=open_test)
    direct = judge(
        Lamp(120.0, 60.0),
        ResistiveLoad.from_rating(120.0, 60.0),
        [reference.Reading(**r) for r in readings],
        nominal_source_voltage=120.0,
        source_resistance=2.0,
        frequency=60.0,
        meter_relative_accuracy=0.8 / 100,
        meter_absolute_accuracy=3 * 0.1,
    )
    expected = judging.verdict_document(direct)
    assert stored.outcome == expected["outcome"] == "pass"
    assert stored.reasons == expected["reasons"]
    assert stored.per_reading == expected["per_reading"]
    assert stored.physics_version == judging.PHYSICS_VERSION
    assert len(stored.data_fingerprint) == 64


@pytest.mark.parametrize(
    ("impedance", "outcome", "code"),
    [
        (0.0, "fail", "draw_high"),
        (80.0, "fail", "draw_high"),
        (float("inf"), "fail", "draw_near_zero"),
    ],
    ids=["shorted", "three_times_declared", "open"],
)
def test_faulty_units_fail_with_the_right_reason(open_test, client_for, impedance, outcome, code):
    response = send_and_close(client_for("technician"), open_test, generated(impedance))
    body = response.json()
    assert body["outcome"] == outcome
    assert code in [reason["code"] for reason in body["reasons"]]
    assert all(reason["message"] for reason in body["reasons"])


def test_a_second_close_is_a_409(open_test, client_for):
    client = client_for("technician")
    send_and_close(client, open_test, generated(240.0))
    again = client.post(f"/api/powerups/{open_test.pk}/close/", {}, format="json")
    assert again.status_code == 409
    assert again.json()["error"]["code"] == "test_closed"


def test_a_closed_test_refuses_every_write(open_test, client_for):
    client = client_for("lead")
    send_and_close(client, open_test, generated(240.0))
    base = f"/api/powerups/{open_test.pk}"
    assert (
        client.post(
            f"{base}/readings/",
            {"source_voltage": 10, "load_voltage": 9, "glow_seen": "dark"},
            format="json",
        ).status_code
        == 409
    )
    assert client.patch(f"{base}/", {"notes": "late"}, format="json").status_code == 409
    from django.core.files.uploadedfile import SimpleUploadedFile

    upload = SimpleUploadedFile("r.csv", b"source_v,load_v,glow\n10,9,dark\n")
    assert (
        client.post(f"{base}/readings/import/", {"file": upload}, format="multipart").status_code
        == 409
    )
    assert open_test.readings.count() == len(STEPS)


def test_closing_without_readings_is_a_409(open_test, client_for):
    response = client_for("technician").post(
        f"/api/powerups/{open_test.pk}/close/", {}, format="json"
    )
    assert response.status_code == 409
    assert response.json()["error"]["code"] == "no_readings"


def test_an_open_test_has_no_verdict_yet(open_test, client_for):
    response = client_for("technician").get(f"/api/powerups/{open_test.pk}/verdict/")
    assert response.status_code == 409
    assert response.json()["error"]["code"] == "no_verdict"


def test_the_plot_is_well_formed_svg_with_axes_band_and_one_marker_per_reading(
    open_test, client_for
):
    client = client_for("front_desk")
    readings = generated(80.0)
    send_and_close(client_for("technician"), open_test, readings)
    response = client.get(f"/api/powerups/{open_test.pk}/plot.svg")
    assert response.status_code == 200
    assert response["Content-Type"] == "image/svg+xml"
    root = ET.fromstring(response.content)
    texts = [t.text for t in root.iter(f"{SVG}text")]
    assert "Source voltage [V RMS]" in texts and "Unit voltage [V RMS]" in texts
    assert root.find(f".//{SVG}polygon[@class='band']") is not None
    markers = root.find(f".//{SVG}g[@class='readings']")
    assert len(list(markers)) == len(readings)
    assert any(t and t.startswith("Fault-current cap: a dead short") for t in texts)
    assert any(t and t.startswith("Declared load: a resistance") for t in texts)


@pytest.mark.postgres
@pytest.mark.django_db(transaction=True)
def test_two_technicians_closing_at_once_make_one_verdict(open_test, staff):
    services.readings_add(test=open_test, readings=generated(240.0), actor=staff["technician"])
    results, barrier = [], threading.Barrier(2)

    def close():
        try:
            barrier.wait()
            results.append(services.powerup_close(test=open_test, actor=staff["technician"]))
        except Exception as exc:  # collected and asserted on below
            results.append(exc)
        finally:
            close_old_connections()

    threads = [threading.Thread(target=close) for _ in range(2)]
    for thread in threads:
        thread.start()
    for thread in threads:
        thread.join(timeout=60)
    assert sum(isinstance(r, Verdict) for r in results) == 1
    assert [getattr(r, "code", None) for r in results if not isinstance(r, Verdict)] == [
        "test_closed"
    ]
    assert Verdict.objects.filter(test=open_test).count() == 1
    assert PowerUpTest.objects.get(pk=open_test.pk).status == "closed"
