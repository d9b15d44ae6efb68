"""What the certificate says in the shop's own terms: local time with the zone's name, the
ambient in degrees Celsius, each accuracy with its unit."""

from __future__ import annotations

import io
import json
from datetime import UTC, datetime

import pypdf

from reports import services
from reports.pdf import render_certificate
from shop.intake import services as intake
from tests.reports.test_certificate_pdf import certificate_snapshot


def text_of(pdf: bytes) -> str:
    pages = pypdf.PdfReader(io.BytesIO(pdf)).pages
    return " ".join(" ".join(page.extract_text().split()) for page in pages)


def issued_text(certificate) -> str:
    with certificate.pdf.open("rb") as stored:
        return text_of(stored.read())


def test_the_issue_time_prints_in_the_shops_zone_with_its_name():
    snapshot = certificate_snapshot()
    snapshot["certificate"]["issued_at"] = "2026-12-01T21:50:00+00:00"
    snapshot["time_zone"] = "Europe/Berlin"
    text = text_of(render_certificate(snapshot))
    assert "Issued 1 December 2026, 22:50 CET (Europe/Berlin)" in text
    assert "21:50" not in text


def test_a_snapshot_from_before_zones_were_recorded_still_prints_utc():
    snapshot = certificate_snapshot()
    snapshot.pop("time_zone", None)
    assert "Issued 1 December 2026, 21:50 UTC" in text_of(render_certificate(snapshot))


def test_an_issued_certificate_prints_local_times_and_local_dates(closed_test, staff, settings):
    settings.TIME_ZONE = "America/Chicago"
    # 03:30 UTC on 21 November is the evening of 20 November in Chicago.
    intake.repair_step_add(
        job=closed_test.job,
        technician=staff["technician"],
        action="Reflowed the rectifier joints",
        performed_at=datetime(2026, 11, 21, 3, 30, tzinfo=UTC),
    )
    certificate = services.certificate_issue(job=closed_test.job, issued_by=staff["lead"])
    snapshot = json.loads(certificate.snapshot)
    assert snapshot["time_zone"] == "America/Chicago"
    text = issued_text(certificate)
    assert "(America/Chicago)" in text
    assert " UTC" not in text
    assert "20 November 2026 Reflowed the rectifier joints" in text


def test_the_ambient_prints_in_degrees_celsius_beside_the_kelvin_used(closed_test, staff):
    certificate = services.certificate_issue(job=closed_test.job, issued_by=staff["lead"])
    # The fixture's test keeps the default ambient, 300 K.
    assert "Ambient 26.9 \u00b0C (300 K)" in issued_text(certificate)


def test_the_accuracy_keeps_the_unit_of_its_counts(closed_test, staff):
    certificate = services.certificate_issue(job=closed_test.job, issued_by=staff["lead"])
    # The fixture's meter: 0.8 % + 3 counts at a resolution of 0.1, used as a voltmeter.
    assert "0.8 % + 3 counts of 0.1 V" in issued_text(certificate)


def test_a_parts_note_prints_only_when_marked_for_the_customer(closed_test, client_for):
    parts = [
        {"part": "47 uF 450 V electrolytic", "quantity": "2", "note": "bin C-14, quoted 9.40"},
        {
            "part": "2-core mains cord",
            "quantity": "1",
            "note": "brown, as original",
            "note_for_customer": True,
        },
    ]
    step = client_for("technician").post(
        "/api/steps/",
        {"job": closed_test.job_id, "action": "Recapped", "parts": parts},
        format="json",
    )
    assert step.status_code == 201, step.content
    assert [part["note_for_customer"] for part in step.json()["parts"]] == [False, True]
    issued = client_for("lead").post(
        "/api/certificates/", {"job": closed_test.job_id}, format="json"
    )
    assert issued.status_code == 201, issued.content
    pdf = client_for("lead").get(f"/api/certificates/{issued.json()['id']}/pdf/")
    text = text_of(pdf.content)
    assert "47 uF 450 V electrolytic" in text
    assert "bin C-14" not in text and "9.40" not in text
    assert "brown, as original" in text


def test_the_declared_load_shows_the_models_total_beside_the_nameplate(closed_test, staff):
    certificate = services.certificate_issue(job=closed_test.job, issued_by=staff["lead"])
    # The fixture's unit: nameplate 60 W; its test declares a 60 W resistive load.
    assert "the model draws 60 W in all (nameplate: 60 W)" in issued_text(certificate)


def test_the_tolerances_behind_the_healthy_band_are_stated(closed_test, staff):
    certificate = services.certificate_issue(job=closed_test.job, issued_by=staff["lead"])
    used = closed_test.verdict.inputs["settings"]
    text = issued_text(certificate)
    assert (
        f"The band allows {used['load_tolerance'] * 100:.3g} % either way on the declared load, "
        f"{used['lamp_power_tolerance'] * 100:.3g} % spread of the lamp's rated power"
    ) in text
    assert f"{used['meter_absolute_accuracy']:g} V)" in text
