"""Readings: one at a time, many at once, CSV import; all or nothing, errors by field or row."""

from __future__ import annotations

import pytest
from django.core.files.uploadedfile import SimpleUploadedFile

from shop.bench.models import Reading

GOOD = {"source_voltage": 60, "load_voltage": 52.5, "glow_seen": "dark"}
HEADER = "source_v,load_v,current_a,glow,behaviour,held_s,bypassed\n"


def post(client, test, body):
    return client.post(f"/api/powerups/{test.pk}/readings/", body, format="json")


def csv_upload(client, test, text: str | bytes, name="ramp.csv"):
    content = text.encode() if isinstance(text, str) else text
    return client.post(
        f"/api/powerups/{test.pk}/readings/import/",
        {"file": SimpleUploadedFile(name, content)},
        format="multipart",
    )


def test_one_reading_is_kept_with_the_next_sequence(open_test, client_for):
    client = client_for("technician")
    assert post(client, open_test, GOOD).status_code == 201
    response = post(client, open_test, {**GOOD, "source_voltage": 90, "load_voltage": 78})
    assert response.json()[0]["sequence"] == 2


def test_dial_percent_is_converted_with_the_rig_output(open_test, client_for):
    response = post(
        client_for("technician"),
        open_test,
        {"dial_percent": 50, "load_voltage": 55, "glow_seen": "dark"},
    )
    assert response.status_code == 201
    assert response.json()[0]["source_voltage"] == pytest.approx(65.0)  # 50 % of 130 V


def test_a_batch_names_the_bad_reading_by_position(open_test, client_for):
    response = post(
        client_for("technician"), open_test, {"readings": [GOOD, {**GOOD, "source_voltage": 400}]}
    )
    assert response.status_code == 400
    assert response.json()["error"]["field"] == "readings.1.source_voltage"
    assert Reading.objects.count() == 0


def test_a_batch_with_one_bad_reading_keeps_nothing(open_test, client_for):
    response = post(
        client_for("technician"),
        open_test,
        {"readings": [GOOD, {**GOOD, "load_voltage": -3}, GOOD]},
    )
    assert response.status_code == 400
    assert response.json()["error"]["field"] == "readings.1.load_voltage"
    assert Reading.objects.count() == 0


@pytest.mark.parametrize(
    ("body", "field"),
    [
        ({**GOOD, "source_voltage": 400}, "source_voltage"),
        ({**GOOD, "source_voltage": 10000}, "source_voltage"),
        ({**GOOD, "load_voltage": 100}, "load_voltage"),
        ({**GOOD, "glow_seen": "blinding"}, "glow_seen"),
        ({**GOOD, "current": "NaN"}, "current"),
        ({"load_voltage": 3, "glow_seen": "dark"}, "source_voltage"),
    ],
)
def test_readings_outside_physics_are_refused_by_name(open_test, client_for, body, field):
    response = post(client_for("technician"), open_test, body)
    assert response.status_code == 400
    assert response.json()["error"]["field"] == field
    assert Reading.objects.count() == 0


def test_a_good_csv_is_imported(open_test, client_for):
    text = HEADER + "30,28.5,,dark,steady,10,no\n60,55,0.21,dark,,10,no\n120,101,0.4,faint,,30,no\n"
    response = csv_upload(client_for("technician"), open_test, text)
    assert response.status_code == 201, response.content
    assert [r["load_voltage"] for r in response.json()] == [28.5, 55.0, 101.0]
    assert response.json()[1]["current"] == 0.21


def test_a_csv_with_a_bad_row_keeps_nothing_and_names_row_and_column(open_test, client_for):
    text = HEADER + "30,28.5,,dark,,,no\n60,fifty,,dark,,,no\n"
    response = csv_upload(client_for("technician"), open_test, text)
    assert response.status_code == 400
    error = response.json()["error"]
    assert error["field"] == "row 3.load_v"
    assert "Row 3, column load_v" in error["message"]
    assert Reading.objects.count() == 0


def test_a_csv_in_the_wrong_encoding_is_refused(open_test, client_for):
    text = (HEADER + "30,28.5,,dark,steady,,no\n").replace("steady", "st\u00e9ady")
    response = csv_upload(client_for("technician"), open_test, text.encode("utf-16"))
    assert response.status_code == 400
    assert "UTF-8" in response.json()["error"]["message"]


def test_a_csv_without_its_header_is_refused(open_test, client_for):
    response = csv_upload(client_for("technician"), open_test, "30,28.5,,dark\n60,55,,dark\n")
    assert response.status_code == 400
    assert "column" in response.json()["error"]["message"]
    assert Reading.objects.count() == 0


def test_a_csv_over_the_row_cap_is_refused(open_test, client_for, settings):
    settings.READINGS_CSV_MAX_ROWS = 5
    text = HEADER + "".join(f"{v},{v * 0.9:.1f},,dark,,,no\n" for v in range(10, 80, 10))
    response = csv_upload(client_for("technician"), open_test, text)
    assert response.status_code == 400
    assert "more than 5" in response.json()["error"]["message"]


def test_ten_thousand_rows_import(open_test, client_for):
    rows = "".join(
        f"{(i % 120) + 1},{((i % 120) + 1) * 0.8:.2f},,dark,,,no\n" for i in range(10_000)
    )
    response = csv_upload(client_for("technician"), open_test, HEADER + rows)
    assert response.status_code == 201
    assert Reading.objects.filter(test=open_test).count() == 10_000
