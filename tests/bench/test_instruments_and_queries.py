"""Meter checks store a fitted correction; bench pages cost a fixed number of queries."""

from __future__ import annotations

from datetime import date

import pytest
from django.db import connection
from django.test.utils import CaptureQueriesContext

from shop.bench import services


def test_a_meter_check_fits_and_keeps_a_correction(meter, client_for):
    response = client_for("lead").post(
        f"/api/instruments/{meter.pk}/calibrations/",
        {
            "calibrated_on": "2026-11-01",
            "due_on": "2027-11-01",
            "reference": "Lab reference",
            "paired_readings": [
                {"reference": r, "indicated": 0.98 * r + 0.4} for r in (20, 60, 120, 230)
            ],
        },
        format="json",
    )
    assert response.status_code == 201, response.content
    body = response.json()
    # indicated = 0.98 r + 0.4  =>  true = indicated / 0.98 - 0.4 / 0.98
    assert body["correction_gain"] == pytest.approx(1 / 0.98, rel=1e-9)
    assert body["correction_offset"] == pytest.approx(-0.4 / 0.98, rel=1e-9)
    assert body["largest_residual"] < 1e-9


def test_a_due_date_before_the_calibration_is_refused(meter, client_for):
    response = client_for("lead").post(
        f"/api/instruments/{meter.pk}/calibrations/",
        {"calibrated_on": "2026-11-01", "due_on": "2026-10-01", "reference": "Lab"},
        format="json",
    )
    assert response.status_code == 400
    assert response.json()["error"]["field"] == "due_on"


def test_the_latest_calibration_sets_the_due_date(meter, staff):
    services.calibration_record_add(
        instrument=meter,
        calibrated_on=date(2020, 1, 1),
        due_on=date(2021, 1, 1),
        reference="old",
        recorded_by=staff["lead"],
    )
    from shop.bench.selectors import calibration_state, instrument_list

    state = calibration_state(instrument_list().get(pk=meter.pk))
    assert state["past_due"] is False and state["due_on"] > date(2026, 1, 1)


def count_queries(client, path):
    client.get(path)
    with CaptureQueriesContext(connection) as captured:
        assert client.get(path).status_code == 200
    return len(captured)


def test_test_detail_and_readings_cost_the_same_with_100_readings(open_test, client_for, staff):
    client = client_for("technician")
    reading = {"source_voltage": 60, "load_voltage": 50, "glow_seen": "dark"}
    services.readings_add(test=open_test, readings=[reading], actor=staff["technician"])
    paths = [
        f"/api/powerups/{open_test.pk}/",
        f"/api/powerups/{open_test.pk}/readings/",
        "/api/powerups/",
    ]
    few = [count_queries(client, path) for path in paths]
    services.readings_add(test=open_test, readings=[reading] * 99, actor=staff["technician"])
    assert [count_queries(client, path) for path in paths] == few


def test_lists_cost_the_same_as_rows_grow(rig, lamps, meter, overdue_meter, client_for, staff):
    client = client_for("lead")
    paths = ["/api/lamps/", "/api/instruments/", "/api/rigs/"]
    few = [count_queries(client, path) for path in paths]
    for watts in (200, 300):
        from tests.fixtures_bench import make_lamp

        make_lamp(rig, watts)
    services.instrument_create(
        actor=staff["lead"], kind="ammeter", response="true_rms", maker="Hale", accuracy_percent=2
    )
    assert [count_queries(client, path) for path in paths] == few
