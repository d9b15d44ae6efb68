"""An oversized request is refused before its body is read; downloads are named by the record."""

from __future__ import annotations

import io

import pytest
from django.core.files.uploadedfile import SimpleUploadedFile

from shop.intake.models import Evidence

PNG = b"\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR" + bytes(range(64))
MEGABYTE = 1024 * 1024


class UnreadBody(io.BytesIO):
    """A request body that fails the test if anything reads it."""

    def read(self, *args, **kwargs):
        raise AssertionError("the request body was read")

    readline = read


def post_declaring(client, length: int):
    return client.generic(
        "POST",
        "/api/evidence/",
        b"",
        content_type="multipart/form-data; boundary=limit",
        CONTENT_LENGTH=str(length),
        **{"wsgi.input": UnreadBody()},
    )


def test_an_upload_declaring_150_megabytes_is_refused_unread(job, client_for, settings):
    response = post_declaring(client_for("technician"), 150 * MEGABYTE)
    assert response.status_code == 413
    error = response.json()["error"]
    assert error["code"] == "request_too_large"
    assert error["field"] == "file"
    assert str(settings.REQUEST_MAX_BYTES) in error["message"]
    assert Evidence.objects.count() == 0


def test_the_cap_leaves_room_for_the_largest_evidence_file(settings):
    assert settings.REQUEST_MAX_BYTES > settings.EVIDENCE_MAX_BYTES


def test_an_anonymous_oversized_request_is_refused_the_same_way(client_for):
    response = post_declaring(client_for(None), 150 * MEGABYTE)
    assert response.status_code == 413
    assert response.json()["error"]["code"] == "request_too_large"


def test_a_request_just_under_the_cap_is_read(job, client_for, settings):
    settings.REQUEST_MAX_BYTES = 64 * 1024
    response = client_for("technician").post(
        "/api/evidence/",
        {"job": job.pk, "file": SimpleUploadedFile("chassis.png", PNG + bytes(40 * 1024))},
        format="multipart",
    )
    assert response.status_code == 201


@pytest.mark.parametrize(
    "name", ["../../etc/passwd", 'invoice".html', "photo.exe", "<script>.png", "Łódź zdjęcie.png"]
)
def test_a_download_is_named_by_job_record_and_detected_type(job, client_for, name):
    client = client_for("front_desk")
    response = client.post(
        "/api/evidence/",
        {"job": job.pk, "file": SimpleUploadedFile(name, PNG)},
        format="multipart",
    )
    assert response.status_code == 201, response.content
    evidence_id = response.json()["id"]
    download = client.get(f"/api/evidence/{evidence_id}/download/")
    assert download.status_code == 200
    assert download["Content-Disposition"] == (
        f'attachment; filename="{job.number}-evidence-{evidence_id}.png"'
    )
