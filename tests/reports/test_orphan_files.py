"""A write that fails leaves no file behind; files no record points at are reported."""

from __future__ import annotations

from io import StringIO

import pytest
from django.core.files.base import ContentFile
from django.core.files.storage import default_storage
from django.core.management import call_command
from django.core.management.base import CommandError

from reports import services
from reports.models import Certificate


def stored_files(media) -> list[str]:
    return sorted(str(path.relative_to(media)) for path in media.rglob("*") if path.is_file())


class AfterTheWrite(Exception):
    """Raised by the audit trail, which is written after the PDF is stored."""


@pytest.fixture
def failing_audit(monkeypatch):
    def refuse(**kwargs):
        raise AfterTheWrite

    monkeypatch.setattr(services, "audit_record", refuse)


def test_a_certificate_whose_issue_fails_after_the_pdf_is_written_leaves_no_file(
    own_media, closed_test, staff, failing_audit
):
    with pytest.raises(AfterTheWrite):
        services.certificate_issue(job=closed_test.job, issued_by=staff["lead"])
    assert not Certificate.objects.exists()
    assert stored_files(own_media) == []


def test_a_supersede_that_fails_after_the_pdf_is_written_leaves_no_file(
    own_media, closed_test, staff, monkeypatch
):
    old = services.certificate_issue(job=closed_test.job, issued_by=staff["lead"])
    kept = stored_files(own_media)
    monkeypatch.setattr(services.CertificateEvent, "full_clean", lambda self: _raise())
    with pytest.raises(AfterTheWrite):
        services.certificate_supersede(certificate=old, by=staff["lead"], reason="wrong lamp")
    assert list(Certificate.objects.values_list("number", flat=True)) == [old.number]
    assert stored_files(own_media) == kept


def _raise():
    raise AfterTheWrite


def test_certificates_verify_lists_planted_orphans_and_fails(own_media, closed_test, staff):
    services.certificate_issue(job=closed_test.job, issued_by=staff["lead"])
    planted = [
        default_storage.save("certificates/C-2026-0002-left-by-a-crash.pdf", ContentFile(b"%PDF")),
        default_storage.save(
            f"evidence/{closed_test.job_id}/left-by-a-crash.jpg", ContentFile(b"x")
        ),
    ]
    err = StringIO()
    with pytest.raises(CommandError, match="2 stored files belong to no record"):
        call_command("certificates_verify", stdout=StringIO(), stderr=err)
    listed = [line.split()[1].rstrip(":") for line in err.getvalue().splitlines()]
    assert listed == sorted(planted)
