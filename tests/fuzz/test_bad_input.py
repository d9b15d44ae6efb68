"""Bad input answers a clear 4xx in the single error shape, in bounded memory, writing nothing.

Malformed JSON, wrong content types, huge numbers, NaN and infinity, 10 MB of text in a name,
unicode edge cases in every text field, and a readings CSV over the row cap. These run on
SQLite and on PostgreSQL alike: PostgreSQL refuses some characters SQLite keeps.
"""

from __future__ import annotations

import json
import tracemalloc
from contextlib import contextmanager
from unittest import mock

import pytest
from django.apps import apps
from django.core.files.uploadedfile import SimpleUploadedFile

from reports.models import CertificateEvent
from shop.bench import csv_import
from shop.bench.models import Instrument, Lamp, PowerUpTest, Reading, Rig
from shop.intake.models import Customer, Job, RepairStep, Unit

from .conftest import SEED_DECLARED_LOAD, SEED_READINGS, assert_error_shape

# Generous ceilings on the peak memory of one refused request [bytes]: a few times its size.
TEN_MB = 10 * 1024 * 1024
PEAK_FOR_TEN_MB_BODY = 8 * TEN_MB
PEAK_FOR_LARGE_CSV = 80 * 1024 * 1024
# A small row cap, so a CSV far over it is still far under the upload size limit.
ROW_CAP = 100
ROWS_IN_LARGE_CSV = 100_000
# Text that must be kept exactly: emoji (with a joiner and a skin tone), right-to-left
# marks and an override, combining accents, a byte-order mark and a zero-width space.
KEPT_TEXT = "Zoë 🎸👩🏽‍🔧 \u200fشاي\u200e \u202eevil\u202c e\u0301\u0323 \ufeff\u200b!"
REFUSED_TEXT = {"NUL": "before\x00after", "lone surrogate": "before\ud800after"}
UNIT_BODY = {"category": "radio", "maker": "Brightwave", "rated_voltage": 120, "rated_power": 60}
APPS_WITH_RECORDS = ("intake", "bench", "reports", "core")


def record_counts() -> dict[str, int]:
    """How many rows every model of the shop holds: a refusal must leave all of them alone."""
    return {
        model._meta.label: model.objects.count()
        for label in APPS_WITH_RECORDS
        for model in apps.get_app_config(label).get_models()
    }


@contextmanager
def nothing_written():
    before = record_counts()
    yield
    assert record_counts() == before


@contextmanager
def peak_memory(limit: int):
    tracemalloc.start()
    try:
        yield
        _, peak = tracemalloc.get_traced_memory()
    finally:
        tracemalloc.stop()
    assert peak < limit, f"peak {peak / 1e6:.1f} MB over {limit / 1e6:.1f} MB"


def refused(response, status: int = 400, field: str | None = None, code: str | None = None):
    assert response.status_code == status, (response.status_code, response.content[:300])
    error = assert_error_shape(response)
    if field is not None:
        assert error["field"] == field, error
    if code is not None:
        assert error["code"] == code, error
    return error


@pytest.fixture
def lead(client_for):
    return client_for("lead")


@pytest.fixture
def certificate(lead, open_test):
    """A valid certificate (the test closed through the API), for the reason fields."""
    lead.post(f"/api/powerups/{open_test.pk}/readings/", {"readings": SEED_READINGS}, format="json")
    assert lead.post(f"/api/powerups/{open_test.pk}/close/", format="json").status_code == 200
    response = lead.post("/api/certificates/", {"job": open_test.job_id}, format="json")
    assert response.status_code == 201, response.content
    return response.json()["id"]


# Malformed JSON and wrong content types ------------------------------------------------------

MALFORMED_JSON = {
    "truncated": b'{"name": "Orla',
    "trailing comma": b'{"name": "Orla",}',
    "single quotes": b"{'name': 'Orla'}",
    "not UTF-8": b'{"name": "\xff\xfe"}',
    "empty": b"",
    "NaN literal": b'{"name": "Orla", "notes": NaN}',
    "Infinity literal": b'{"name": "Orla", "notes": -Infinity}',
    "a 5000-digit number": b'{"name": ' + b"9" * 5000 + b"}",
    "nested 100,000 deep": b'{"name": ' + b"[" * 100_000 + b"]" * 100_000 + b"}",
}


@pytest.mark.parametrize("body", MALFORMED_JSON.values(), ids=MALFORMED_JSON.keys())
def test_malformed_json_is_refused_and_writes_nothing(lead, db, body):
    with nothing_written():
        response = lead.post("/api/customers/", body, content_type="application/json")
    refused(response)


@pytest.mark.parametrize(
    "body", [b"[]", b'"Orla"', b"42", b"null"], ids=["array", "string", "number", "null"]
)
def test_json_that_is_not_an_object_is_refused(lead, db, body):
    with nothing_written():
        refused(lead.post("/api/customers/", body, content_type="application/json"))


def test_wrong_content_types_answer_415(lead, job, open_test):
    with nothing_written():
        refused(
            lead.post("/api/customers/", b"name=Orla", content_type="text/plain"),
            415,
            code="unsupported_media_type",
        )
        refused(
            lead.post("/api/customers/", b"<name>Orla</name>", content_type="application/xml"),
            415,
        )
        refused(lead.post("/api/evidence/", {"job": job.pk}, format="json"), 415)
        refused(lead.post(f"/api/powerups/{open_test.pk}/readings/import/", {}, format="json"), 415)


def test_an_accept_header_we_cannot_serve_answers_406(lead, db):
    refused(lead.get("/api/jobs/", HTTP_ACCEPT="application/xml"), 406, code="not_acceptable")


# Huge numbers, NaN and infinity -----------------------------------------------------------


def _unit_body(customer, **changes):
    return {**UNIT_BODY, "owner": customer.pk, **changes}


HUGE_UNIT_VALUES = {
    "rated_voltage 1e308": ("rated_voltage", 1e308),
    "rated_voltage -1e308": ("rated_voltage", -1e308),
    "rated_power 10**30": ("rated_power", 10**30),
    "year 10**30": ("year", 10**30),
    "owner 10**30": ("owner", 10**30),
    "rated_voltage 1e-320": ("rated_voltage", 1e-320),
}


@pytest.mark.parametrize("name, value", HUGE_UNIT_VALUES.values(), ids=HUGE_UNIT_VALUES.keys())
def test_huge_numbers_are_refused_by_field(lead, customer, name, value):
    with nothing_written():
        refused(
            lead.post("/api/units/", _unit_body(customer, **{name: value}), format="json"),
            400,
            name,
        )


NOT_FINITE = ["NaN", "nan", "Infinity", "-inf", "1e999"]


@pytest.mark.parametrize("value", NOT_FINITE)
@pytest.mark.parametrize("encoding", ["json", "multipart"])
def test_nan_and_infinity_are_refused_by_field(lead, open_test, value, encoding):
    reading = {"source_voltage": value, "load_voltage": "10", "glow_seen": "dark"}
    with nothing_written():
        response = lead.post(f"/api/powerups/{open_test.pk}/readings/", reading, format=encoding)
    refused(response, 400, "source_voltage")


@pytest.mark.parametrize("value", ["NaN", "Infinity", "1e999"])
def test_nan_inside_a_declared_load_is_refused_by_its_path(lead, open_test, value):
    document = {**SEED_DECLARED_LOAD, "parameters": {"power": value, "voltage": 120}}
    with nothing_written():
        response = lead.patch(
            f"/api/powerups/{open_test.pk}/", {"declared_load": document}, format="json"
        )
    refused(response, 400, "declared_load.parameters.power")
    # A form field carrying the document as text may not smuggle in a bare NaN either.
    text = json.dumps(document).replace(f'"{value}"', value)
    with nothing_written():
        response = lead.patch(
            f"/api/powerups/{open_test.pk}/", {"declared_load": text}, format="multipart"
        )
    refused(response, 400)


def test_huge_page_numbers_and_ids_answer_4xx(lead, job):
    refused(lead.get("/api/jobs/?page=99999999999999999999999"), 404)
    refused(lead.get("/api/jobs/99999999999999999999999999/"), 404)
    refused(lead.get("/api/jobs/?unit=99999999999999999999999"), 400, "unit")
    refused(lead.post("/api/predict/", {"points": 10**30, "declared_load": {}}, format="json"), 400)


# Ten megabytes of text --------------------------------------------------------------------


@pytest.mark.parametrize("encoding", ["json", "multipart", "urlencoded"])
def test_ten_megabytes_in_a_name_is_refused_in_bounded_memory(lead, db, encoding):
    name = "x" * TEN_MB
    if encoding == "urlencoded":
        kwargs = {"data": f"name={name}", "content_type": "application/x-www-form-urlencoded"}
    else:
        kwargs = {"data": {"name": name}, "format": encoding}
    with nothing_written(), peak_memory(PEAK_FOR_TEN_MB_BODY):
        response = lead.post("/api/customers/", **kwargs)
    refused(response, 400, code="too_large")


def test_thousands_of_form_fields_are_refused(lead, db):
    body = "&".join(f"field{i}=1" for i in range(5000))
    with nothing_written():
        response = lead.post(
            "/api/customers/", body, content_type="application/x-www-form-urlencoded"
        )
    refused(response, 400, code="too_many_fields")


# Unicode edge cases in every text field -------------------------------------------------------


def text_field_cases(world) -> list[tuple]:
    """(label, method, path, body with TEXT where the text goes, field named on refusal, stored
    value reader). Every free-text field a client can write."""
    job, test = world["job"], world["open_test"]

    def latest(model, field):
        return lambda: getattr(model.objects.order_by("-pk").first(), field)

    def reread(instance, field):
        return lambda: getattr(type(instance).objects.get(pk=instance.pk), field)

    unit = _unit_body(world["customer"])
    rig = {
        "name": "Bench Z",
        "mains_voltage": 230,
        "mains_frequency": 50,
        "source_kind": "fixed_mains",
        "source_current_rating": 5,
    }
    lamp = {"rig": world["rig"].pk, "label": "L", "technology": "tungsten"}
    lamp.update(rated_voltage=120, rated_power=60)
    instrument = {"kind": "voltmeter", "response": "true_rms", "maker": "M", "accuracy_percent": 1}
    calibration = {"calibrated_on": "2026-01-01", "due_on": "2027-01-01", "reference": "R"}
    step = {"job": job.pk, "action": "Replaced C12."}
    return [
        (
            "customer name",
            "post",
            "/api/customers/",
            {"name": "TEXT"},
            "name",
            latest(Customer, "name"),
        ),
        (
            "customer phone",
            "post",
            "/api/customers/",
            {"name": "N", "phone": "TEXT"},
            "phone",
            latest(Customer, "phone"),
        ),
        (
            "customer notes",
            "post",
            "/api/customers/",
            {"name": "N", "notes": "TEXT"},
            "notes",
            latest(Customer, "notes"),
        ),
        *[
            (
                f"unit {field}",
                "post",
                "/api/units/",
                {**unit, field: "TEXT"},
                field,
                latest(Unit, field),
            )
            for field in (
                "maker",
                "model_name",
                "serial",
                "voltage_selector_as_found",
            )
        ],
        (
            "job complaint",
            "post",
            "/api/jobs/",
            {"unit": world["unit"].pk, "complaint": "TEXT"},
            "complaint",
            latest(Job, "complaint"),
        ),
        (
            "job condition at intake",
            "post",
            "/api/jobs/",
            {"unit": world["unit"].pk, "complaint": "C", "condition_at_intake": "TEXT"},
            "condition_at_intake",
            latest(Job, "condition_at_intake"),
        ),
        (
            "move note",
            "post",
            f"/api/jobs/{job.pk}/transition/",
            {"to_state": "on_hold", "hold_reason": "waiting_for_customer", "note": "TEXT"},
            "note",
            lambda: job.moves.order_by("-pk").first().note,
        ),
        (
            "step action",
            "post",
            "/api/steps/",
            {**step, "action": "TEXT"},
            "action",
            latest(RepairStep, "action"),
        ),
        (
            "step part",
            "post",
            "/api/steps/",
            {**step, "parts": [{"part": "TEXT", "quantity": 1}]},
            "parts.0.part",
            lambda: RepairStep.objects.order_by("-pk").first().parts[0]["part"],
        ),
        ("rig name", "post", "/api/rigs/", {**rig, "name": "TEXT"}, "name", latest(Rig, "name")),
        (
            "lamp label",
            "post",
            "/api/lamps/",
            {**lamp, "label": "TEXT"},
            "label",
            latest(Lamp, "label"),
        ),
        *[
            (
                f"instrument {field}",
                "post",
                "/api/instruments/",
                {**instrument, field: "TEXT"},
                field,
                latest(Instrument, field),
            )
            for field in ("maker", "model_name", "serial")
        ],
        (
            "calibration reference",
            "post",
            f"/api/instruments/{world['meter'].pk}/calibrations/",
            {**calibration, "reference": "TEXT"},
            "reference",
            lambda: world["meter"].calibrations.order_by("-pk").first().reference,
        ),
        (
            "test notes",
            "patch",
            f"/api/powerups/{test.pk}/",
            {"notes": "TEXT"},
            "notes",
            reread(test, "notes"),
        ),
        (
            "declared load notes",
            "patch",
            f"/api/powerups/{test.pk}/",
            {"declared_load": {**SEED_DECLARED_LOAD, "configuration": {"notes": "TEXT"}}},
            "declared_load.configuration.notes",
            lambda: PowerUpTest.objects.get(pk=test.pk).declared_load["configuration"]["notes"],
        ),
        (
            "revoke reason",
            "post",
            f"/api/certificates/{world['certificate']}/revoke/",
            {"reason": "TEXT"},
            "reason",
            latest(CertificateEvent, "reason"),
        ),
    ]


def _with_text(body, text: str):
    return json.loads(json.dumps(body).replace('"TEXT"', json.dumps(text)))


@pytest.fixture
def world(lead, customer, unit, job, rig, lamps, meter, certificate):
    """Records for every text field to be written to, with a test still open."""
    response = lead.post(
        "/api/powerups/",
        {"job": job.pk, "rig": rig.pk, "lamp": lamps[60].pk, "declared_load": SEED_DECLARED_LOAD},
        format="json",
    )
    assert response.status_code == 201, response.content
    open_test = PowerUpTest.objects.get(pk=response.json()["id"])
    return {
        "customer": customer,
        "unit": unit,
        "job": job,
        "rig": rig,
        "meter": meter,
        "open_test": open_test,
        "certificate": certificate,
    }


def test_every_text_field_refuses_nul_and_lone_surrogates_by_name(lead, world):
    for label, method, path, body, field, _ in text_field_cases(world):
        for kind, text in REFUSED_TEXT.items():
            # ensure_ascii writes the surrogate as \ud800, the only way JSON can carry it.
            payload = json.dumps(_with_text(body, text), ensure_ascii=True)
            with nothing_written():
                response = getattr(lead, method)(path, payload, content_type="application/json")
            error = refused(response, 400)
            assert field in error["fields"], (label, kind, error)


def test_every_text_field_keeps_emoji_rtl_and_combining_marks_exactly(lead, world):
    for label, method, path, body, _, stored in text_field_cases(world):
        response = getattr(lead, method)(path, _with_text(body, KEPT_TEXT), format="json")
        assert response.status_code in (200, 201), (label, response.content[:300])
        assert stored() == KEPT_TEXT, label


def test_documents_print_names_in_any_script(lead, world):
    customer, job = world["customer"], world["job"]
    lead.patch(f"/api/customers/{customer.pk}/", {"name": KEPT_TEXT}, format="json")
    lead.patch(f"/api/units/{world['unit'].pk}/", {"maker": KEPT_TEXT}, format="json")
    receipt = lead.get(f"/api/jobs/{job.pk}/receipt.pdf")
    assert receipt.status_code == 200 and receipt.content.startswith(b"%PDF")
    issued = lead.post("/api/certificates/", {"job": job.pk}, format="json")
    assert issued.status_code == 201, issued.content
    pdf = lead.get(f"/api/certificates/{issued.json()['id']}/pdf/")
    assert pdf.status_code == 200 and pdf.content.startswith(b"%PDF")


def test_a_choice_quoting_a_lone_surrogate_still_answers_in_utf8(lead, job):
    response = lead.post(
        f"/api/jobs/{job.pk}/transition/",
        b'{"to_state": "\\ud800"}',
        content_type="application/json",
    )
    error = refused(response, 400, "to_state")
    assert "\\ud800" in error["message"]


def test_verification_with_a_nul_matches_nothing(client, db):
    response = client.get("/verify/C-2026-0001%00/?code=AB%00CD", HTTP_ACCEPT="application/json")
    assert response.status_code == 404
    assert response.json()["error"]["code"] == "no_match"


# A readings CSV over the row cap ----------------------------------------------------------


def _csv(rows: int) -> bytes:
    return b"source_v,load_v,glow\n" + b"40,37,dark\n" * rows


def _import(client, test, content: bytes):
    upload = SimpleUploadedFile("readings.csv", content, content_type="text/csv")
    return client.post(f"/api/powerups/{test.pk}/readings/import/", {"file": upload})


def test_a_csv_over_the_row_cap_is_refused_without_reading_on(lead, open_test, settings):
    settings.READINGS_CSV_MAX_ROWS = ROW_CAP
    content = _csv(ROWS_IN_LARGE_CSV)
    assert len(content) < settings.EVIDENCE_MAX_BYTES  # the row cap refuses it, not the size
    validate = mock.patch.object(
        csv_import._CellRules,
        "validate",
        autospec=True,
        side_effect=csv_import._CellRules.validate,
    )
    with nothing_written(), peak_memory(PEAK_FOR_LARGE_CSV), validate as rows_checked:
        response = _import(lead, open_test, content)
    error = refused(response, 400, code="csv_invalid")
    assert str(ROW_CAP) in error["message"]
    # It stops at the cap instead of checking every row of the file.
    assert rows_checked.call_count == ROW_CAP


def test_row_cap_and_size_limit_are_separate(lead, open_test, settings):
    settings.READINGS_CSV_MAX_ROWS = ROW_CAP
    at_cap = _csv(ROW_CAP)
    response = _import(lead, open_test, at_cap)
    assert response.status_code == 201, response.content[:300]
    assert Reading.objects.filter(test=open_test).count() == ROW_CAP
    settings.EVIDENCE_MAX_BYTES = len(at_cap) - 1
    with nothing_written():
        refused(_import(lead, open_test, at_cap), 400, "file", "file_too_large")


def test_a_batch_with_one_bad_reading_keeps_none(lead, open_test):
    batch = [*SEED_READINGS, {"source_voltage": 40, "load_voltage": 400, "glow_seen": "dark"}]
    with nothing_written():
        response = lead.post(
            f"/api/powerups/{open_test.pk}/readings/", {"readings": batch}, format="json"
        )
    refused(response, 400, "readings.3.load_voltage")


def test_dates_out_of_range_are_refused_by_field(lead, meter):
    body = {"calibrated_on": "0000-01-01", "due_on": "99999-01-01", "reference": "R"}
    with nothing_written():
        response = lead.post(f"/api/instruments/{meter.pk}/calibrations/", body, format="json")
    error = refused(response, 400)
    assert {"calibrated_on", "due_on"} <= set(error["fields"]), error
