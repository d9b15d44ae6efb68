"""Issuing, superseding and revoking certificates, and every refusal on the way."""

from __future__ import annotations

import json
from datetime import timedelta

import pytest
from django.core.exceptions import ValidationError
from django.utils import timezone

from reports import services
from reports.canonical import canonical_json, sha256_hex
from reports.models import Certificate, CertificateEvent, certificate_status
from shop.bench import services as bench
from shop.core.errors import Conflict, Forbidden
from shop.core.safety import CAVEATS


def issue(closed_test, staff, **extra):
    return services.certificate_issue(job=closed_test.job, issued_by=staff["lead"], **extra)


def test_a_certificate_stores_canonical_json_and_its_hash(closed_test, staff):
    certificate = issue(closed_test, staff)
    assert certificate.number.startswith(f"C-{timezone.now().year}-")
    snapshot = json.loads(certificate.snapshot)
    assert canonical_json(snapshot) == certificate.snapshot
    assert sha256_hex(certificate.snapshot) == certificate.sha256
    assert snapshot["tests"][0]["outcome"] == closed_test.verdict.outcome
    assert [r["source_voltage"] for r in snapshot["tests"][0]["readings"]] == [30, 60, 90, 120]
    assert {c["code"] for c in snapshot["caveats"]} >= {code for code, _ in CAVEATS}
    assert snapshot["customer"] == {"name": closed_test.job.unit.owner.name}
    assert "phone" not in json.dumps(snapshot["customer"])


def test_the_verification_code_is_random_and_long(closed_test, staff):
    code = issue(closed_test, staff).verification_code
    letters = code.replace("-", "")
    assert len(letters) * 5 >= 80  # base32: 5 bits a letter
    assert services.verification_code() != services.verification_code()


def test_front_desk_cannot_issue(closed_test, staff):
    with pytest.raises(Forbidden):
        services.certificate_issue(job=closed_test.job, issued_by=staff["front_desk"])
    assert Certificate.objects.count() == 0


def test_a_job_without_a_closed_test_cannot_be_certified(open_test, staff):
    with pytest.raises(Conflict) as caught:
        services.certificate_issue(job=open_test.job, issued_by=staff["lead"])
    assert caught.value.code == "no_closed_test"


def test_a_job_before_testing_cannot_be_certified(closed_test, staff):
    from shop.intake import services as intake

    intake.job_transition(
        job=closed_test.job, to_state="on_hold", actor=staff["lead"], hold_reason="other", note="x"
    )
    with pytest.raises(Conflict) as caught:
        issue(closed_test, staff)
    assert caught.value.code == "job_not_certifiable"


def test_an_out_of_calibration_meter_needs_a_stated_override(open_test, staff, overdue_meter):
    from tests.reports.conftest import READINGS

    bench.powerup_update(
        test=open_test, expected_version=None, actor=staff["technician"], source_meter=overdue_meter
    )
    bench.readings_add(test=open_test, readings=READINGS, actor=staff["technician"])
    bench.powerup_close(test=open_test, actor=staff["technician"])
    with pytest.raises(Conflict) as caught:
        services.certificate_issue(job=open_test.job, issued_by=staff["lead"])
    assert caught.value.code == "instrument_out_of_calibration"
    certificate = services.certificate_issue(
        job=open_test.job,
        issued_by=staff["lead"],
        calibration_override="Checked against C9-001 today",
    )
    override = json.loads(certificate.snapshot)["tests"][0]["calibration_override"]
    assert override["reason"] == "Checked against C9-001 today"


def test_an_issued_certificate_refuses_save_and_delete(closed_test, staff):
    certificate = issue(closed_test, staff)
    certificate.snapshot = "{}"
    with pytest.raises(ValidationError):
        certificate.save()
    with pytest.raises(ValidationError):
        certificate.delete()
    assert Certificate.objects.get(pk=certificate.pk).snapshot != "{}"


def test_supersede_issues_a_successor_and_marks_the_old(closed_test, staff):
    old = issue(closed_test, staff)
    new = services.certificate_supersede(
        certificate=old, by=staff["lead"], reason="Serial number corrected"
    )
    assert new.supersedes == old
    assert certificate_status(Certificate.objects.get(pk=old.pk)) == "superseded"
    assert certificate_status(new) == "valid"
    assert json.loads(new.snapshot)["certificate"]["supersedes"] == old.number


def test_revoking_twice_is_refused(closed_test, staff):
    certificate = issue(closed_test, staff)
    services.certificate_revoke(certificate=certificate, by=staff["lead"], reason="Wrong unit")
    with pytest.raises(Conflict) as caught:
        services.certificate_revoke(certificate=certificate, by=staff["lead"], reason="again")
    assert caught.value.code == "already_revoked"
    assert CertificateEvent.objects.count() == 1


def test_a_superseded_certificate_cannot_be_superseded_again(closed_test, staff):
    old = issue(closed_test, staff)
    services.certificate_supersede(certificate=old, by=staff["lead"], reason="fix")
    with pytest.raises(Conflict):
        services.certificate_supersede(certificate=old, by=staff["lead"], reason="fix again")


def test_numbers_count_up(closed_test, staff):
    first, second = issue(closed_test, staff), issue(closed_test, staff)
    assert int(second.number.rsplit("-", 1)[1]) == int(first.number.rsplit("-", 1)[1]) + 1


def test_tests_of_another_job_are_refused(closed_test, staff, unit, rig, lamps):
    from shop.intake import services as intake

    other_job = intake.job_create(actor=staff["front_desk"], unit=unit, complaint="other")
    other = bench.powerup_open(
        job=other_job, rig=rig, lamp=lamps[40], technician=staff["technician"]
    )
    with pytest.raises(Exception) as caught:
        issue(closed_test, staff, tests=[other])
    assert caught.value.field == "tests"


def test_calibration_due_dates_are_in_the_snapshot(closed_test, staff, meter):
    instrument = json.loads(issue(closed_test, staff).snapshot)["tests"][0]["instruments"][0]
    assert instrument["calibration_due"] == (timezone.localdate() + timedelta(300)).isoformat()
    assert instrument["in_calibration"] is True
