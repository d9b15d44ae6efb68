"""Certificate API, receipt, public verification and the re-hash command."""

from __future__ import annotations

import io
from io import StringIO

import pytest
from django.core.management import call_command
from django.core.management.base import CommandError
from django.db import connection
from django.test.utils import CaptureQueriesContext
from pypdf import PdfReader

from reports import selectors, services
from reports.models import Certificate

ROLES = ["front_desk", "technician", "lead", "nobody", None]


@pytest.fixture
def certificate(closed_test, staff):
    return services.certificate_issue(job=closed_test.job, issued_by=staff["lead"])


def pdf_text(content: bytes) -> str:
    return " ".join(
        " ".join(page.extract_text().split()) for page in PdfReader(io.BytesIO(content)).pages
    )


def tamper(certificate: Certificate, new_snapshot: str) -> None:
    # Raw SQL on purpose: the models refuse the change, an attacker with the database does not.
    table = Certificate._meta.db_table
    with connection.cursor() as cursor:
        cursor.execute(
            f"UPDATE {table} SET snapshot = %s WHERE id = %s", [new_snapshot, certificate.pk]
        )


def test_a_lead_issues_downloads_and_supersedes_and_the_old_one_verifies_superseded(
    closed_test, client_for
):
    lead = client_for("lead")
    issued = lead.post("/api/certificates/", {"job": closed_test.job_id}, format="json")
    assert issued.status_code == 201, issued.content
    body = issued.json()
    pdf = lead.get(f"/api/certificates/{body['id']}/pdf/")
    assert pdf.status_code == 200
    assert pdf["Content-Type"] == "application/pdf"
    assert f'filename="certificate-{body["number"]}.pdf"' in pdf["Content-Disposition"]
    text = pdf_text(pdf.content)
    assert body["number"] in text
    assert "not an electrical safety" in text.lower()
    newer = lead.post(
        f"/api/certificates/{body['id']}/supersede/",
        {"reason": "Serial number corrected"},
        format="json",
    )
    assert newer.status_code == 201
    check = client_for(None).get(
        f"/verify/{body['number']}/", {"code": body["verification_code"], "format": "json"}
    )
    assert check.status_code == 200
    assert check.json()["status"] == "superseded"
    assert check.json()["superseded_by"] == newer.json()["number"]


def test_the_same_certificate_renders_identical_bytes(certificate, client_for):
    lead = client_for("lead")
    first = lead.get(f"/api/certificates/{certificate.pk}/pdf/").content
    assert lead.get(f"/api/certificates/{certificate.pk}/pdf/").content == first


@pytest.mark.parametrize("role", ROLES)
def test_only_leads_issue(closed_test, client_for, role):
    response = client_for(role).post(
        "/api/certificates/", {"job": closed_test.job_id}, format="json"
    )
    expected = {None: 401, "lead": 201}.get(role, 403)
    assert response.status_code == expected
    assert Certificate.objects.count() == (1 if role == "lead" else 0)


@pytest.mark.parametrize("role", ROLES)
def test_every_role_reads_certificates_and_receipts(certificate, client_for, role):
    client = client_for(role)
    expected = 401 if role is None else 403 if role == "nobody" else 200
    assert client.get("/api/certificates/").status_code == expected
    assert client.get(f"/api/certificates/{certificate.pk}/").status_code == expected
    assert client.get(f"/api/certificates/{certificate.pk}/pdf/").status_code == expected
    assert client.get(f"/api/jobs/{certificate.job_id}/receipt.pdf").status_code == expected


@pytest.mark.parametrize("role", ["front_desk", "technician"])
def test_only_leads_supersede_and_revoke(certificate, client_for, role):
    client = client_for(role)
    base = f"/api/certificates/{certificate.pk}"
    assert client.post(f"{base}/supersede/", {"reason": "x"}, format="json").status_code == 403
    assert client.post(f"{base}/revoke/", {"reason": "x"}, format="json").status_code == 403


def test_an_issued_certificate_cannot_be_edited_or_deleted_over_the_api(certificate, client_for):
    lead = client_for("lead")
    assert (
        lead.patch(
            f"/api/certificates/{certificate.pk}/", {"number": "X"}, format="json"
        ).status_code
        == 405
    )
    assert lead.delete(f"/api/certificates/{certificate.pk}/").status_code == 405


def test_revoking_twice_answers_409(certificate, client_for):
    lead = client_for("lead")
    url = f"/api/certificates/{certificate.pk}/revoke/"
    assert lead.post(url, {"reason": "Wrong unit tested"}, format="json").status_code == 200
    again = lead.post(url, {"reason": "again"}, format="json")
    assert again.status_code == 409
    assert again.json()["error"]["code"] == "already_revoked"


def test_issuing_without_a_closed_test_answers_409(open_test, client_for):
    response = client_for("lead").post(
        "/api/certificates/", {"job": open_test.job_id}, format="json"
    )
    assert response.status_code == 409
    assert response.json()["error"]["code"] == "no_closed_test"


def test_verification_answers_without_contact_data(certificate, client_for):
    response = client_for(None).get(
        f"/verify/{certificate.number}/", {"code": certificate.verification_code, "format": "json"}
    )
    body = response.json()
    assert (body["status"], body["intact"]) == ("valid", True)
    assert body["outcomes"] == [certificate.tests.get().verdict.outcome]
    owner = certificate.job.unit.owner
    assert owner.phone not in response.content.decode()
    assert owner.email not in response.content.decode()
    assert owner.name not in response.content.decode()


def test_a_wrong_code_and_an_unknown_number_answer_alike(certificate, client_for):
    anonymous = client_for(None)
    wrong = anonymous.get(f"/verify/{certificate.number}/", {"code": "AAAAA", "format": "json"})
    unknown = anonymous.get("/verify/C-1999-0001/", {"code": "AAAAA", "format": "json"})
    assert wrong.status_code == unknown.status_code == 404
    strip = {"number"}
    assert {k: v for k, v in wrong.json().items() if k not in strip} == {
        k: v for k, v in unknown.json().items() if k not in strip
    }


def test_a_wrong_code_costs_what_an_unknown_number_costs(certificate, monkeypatch):
    """Same queries and one comparison of the same length on both paths: nothing to time."""
    compared = []
    real_compare = selectors.hmac.compare_digest

    def recording_compare(a, b):
        compared.append((len(a), len(b)))
        return real_compare(a, b)

    monkeypatch.setattr(selectors.hmac, "compare_digest", recording_compare)
    wrong_code = "ABCDE-FGHIJ-KLMNO-PQRST-UVWX"
    with CaptureQueriesContext(connection) as known:
        assert selectors.certificate_for_verification(certificate.number, wrong_code) is None
    with CaptureQueriesContext(connection) as unknown:
        assert selectors.certificate_for_verification("C-1999-0001", wrong_code) is None
    assert len(known.captured_queries) == len(unknown.captured_queries) == 1
    # Codes are compared as typed letters alone: no dashes, upper case.
    plain = len(certificate.verification_code.replace("-", ""))
    assert compared == [(plain, len(wrong_code.replace("-", "")))] * 2


def test_the_verification_page_is_html_for_browsers(certificate, client_for):
    response = client_for(None).get(
        f"/verify/{certificate.number}/",
        {"code": certificate.verification_code},
        HTTP_ACCEPT="text/html",
    )
    assert response.status_code == 200
    assert response["Content-Type"].startswith("text/html")
    assert f"Certificate {certificate.number}: valid" in response.content.decode()


def test_tampering_is_caught_by_verification_and_the_command(certificate, client_for):
    tamper(certificate, certificate.snapshot.replace('"outcome":"', '"outcome":"x'))
    body = (
        client_for(None)
        .get(
            f"/verify/{certificate.number}/",
            {"code": certificate.verification_code, "format": "json"},
        )
        .json()
    )
    assert (body["status"], body["intact"]) == ("tampered", False)
    with pytest.raises(CommandError, match="1 of 1"):
        call_command("certificates_verify", stdout=StringIO(), stderr=StringIO())


def test_the_command_passes_untouched_certificates(own_media, certificate):
    out = StringIO()
    call_command("certificates_verify", stdout=out)
    assert "All 1 certificates match their hash and signature; no orphan files" in out.getvalue()


def test_the_receipt_is_a_pdf_with_the_job_and_the_caution(job, client_for):
    response = client_for("front_desk").get(f"/api/jobs/{job.pk}/receipt.pdf")
    assert response.status_code == 200
    assert f'filename="receipt-{job.number}.pdf"' in response["Content-Disposition"]
    text = pdf_text(response.content)
    assert job.number in text
    assert "controlled conditions" in text
    assert job.unit.serial in text


def test_the_issued_pdf_is_stored_once_and_a_changed_file_is_refused(certificate, client_for):
    lead = client_for("lead")
    served = lead.get(f"/api/certificates/{certificate.pk}/pdf/").content
    with certificate.pdf.open("rb") as stored:
        assert stored.read() == served
    with open(certificate.pdf.path, "ab") as stored:
        stored.write(b"% appended later\n")
    response = lead.get(f"/api/certificates/{certificate.pk}/pdf/")
    assert response.status_code == 409
    assert response.json()["error"]["code"] == "pdf_altered"
    body = (
        client_for(None)
        .get(
            f"/verify/{certificate.number}/",
            {"code": certificate.verification_code, "format": "json"},
        )
        .json()
    )
    assert body["status"] == "tampered"


def test_a_certificate_names_the_unit_model_and_its_assumptions(
    testing_job, rig, lamps, staff, client_for
):
    from shop.bench import services as bench

    test = bench.powerup_open(
        job=testing_job, rig=rig, lamp=lamps[100], technician=staff["technician"]
    )
    assert test.declared_load["kind"] == "nameplate"
    bench.readings_add(
        test=test,
        actor=staff["technician"],
        readings=[
            {"source_voltage": 60.0, "load_voltage": 50.0, "glow_seen": "dark"},
            {"source_voltage": 120.0, "load_voltage": 104.0, "glow_seen": "faint"},
        ],
    )
    bench.powerup_close(test=test, actor=staff["technician"])
    certificate = services.certificate_issue(job=testing_job, issued_by=staff["lead"], tests=[test])
    load = selectors_snapshot(certificate)["tests"][0]["declared_load"]
    assert load["assumptions"]
    text = pdf_text(client_for("lead").get(f"/api/certificates/{certificate.pk}/pdf/").content)
    assert "Model used" in text
    assert " ".join(load["assumptions"][0].split())[:40] in text


def selectors_snapshot(certificate):
    import json

    return json.loads(certificate.snapshot)


@pytest.mark.parametrize(
    "typed",
    [
        lambda code: code.replace("-", ""),
        lambda code: code.lower(),
        lambda code: " ".join(code.replace("-", "").lower()),
        lambda code: code.replace("O", "0").replace("I", "1").replace("B", "8"),
    ],
    ids=["without dashes", "lower case", "spaced lower case", "digits for look-alike letters"],
)
def test_verification_accepts_the_code_as_people_type_it(certificate, client_for, typed):
    response = client_for(None).get(
        f"/verify/{certificate.number.lower()}/",
        {"code": typed(certificate.verification_code), "format": "json"},
    )
    assert response.status_code == 200, response.content
    assert response.json()["number"] == certificate.number


def test_a_code_missing_one_letter_still_matches_nothing(certificate, client_for):
    plain = certificate.verification_code.replace("-", "")
    response = client_for(None).get(
        f"/verify/{certificate.number}/", {"code": plain[:-1], "format": "json"}
    )
    assert response.status_code == 404


def test_verify_without_a_number_offers_a_form_without_script(client_for, db):
    response = client_for(None).get("/verify/")
    assert response.status_code == 200
    page = response.content.decode()
    assert '<form method="get" action="/verify/">' in page
    assert 'name="number"' in page and 'name="code"' in page
    assert "<script" not in page


def test_the_verify_form_sends_the_browser_to_the_answer(certificate, client_for):
    anonymous = client_for(None)
    response = anonymous.get(
        "/verify/", {"number": certificate.number, "code": certificate.verification_code}
    )
    assert response.status_code == 302
    answer = anonymous.get(response["Location"], HTTP_ACCEPT="text/html")
    assert answer.status_code == 200
    assert f"Certificate {certificate.number}: valid" in answer.content.decode()


def test_the_verify_form_with_one_half_missing_asks_again(client_for, db):
    response = client_for(None).get("/verify/", {"number": "C-2026-0001"})
    assert response.status_code == 200
    assert "Give both the certificate number and its code." in response.content.decode()


def test_a_revoked_certificates_pdf_is_refused_with_410(certificate, client_for):
    lead = client_for("lead")
    assert lead.get(f"/api/certificates/{certificate.pk}/pdf/").status_code == 200
    revoked = lead.post(
        f"/api/certificates/{certificate.pk}/revoke/", {"reason": "Wrong unit"}, format="json"
    )
    assert revoked.status_code == 200, revoked.content
    for role in ("lead", "technician", "front_desk"):
        response = client_for(role).get(f"/api/certificates/{certificate.pk}/pdf/")
        assert response.status_code == 410
        error = response.json()["error"]
        assert error["code"] == "certificate_revoked"
        assert certificate.number in error["message"]
