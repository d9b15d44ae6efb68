"""Evidence uploads: size limit, type sniffed from content, spoofed names, duplicates."""

from __future__ import annotations

import hashlib

import pytest
from django.core.files.uploadedfile import SimpleUploadedFile

from shop.intake.models import Evidence

PNG = b"\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR" + bytes(range(64))
PDF = b"%PDF-1.4\n1 0 obj << /Type /Catalog >> endobj\ntrailer << >>\n%%EOF\n"
CSV = b"source_v,load_v,current_a\n30,28.1,0.05\n60,55.2,0.11\n90,83.0,0.16\n"
EXE = b"MZ\x90\x00\x03\x00\x00\x00\x04\x00\x00\x00\xff\xff" + bytes(48)


def upload(client, job, name, content):
    return client.post(
        "/api/evidence/",
        {"job": job.pk, "file": SimpleUploadedFile(name, content)},
        format="multipart",
    )


@pytest.mark.parametrize(
    ("name", "content", "content_type"),
    [
        ("chassis.png", PNG, "image/png"),
        ("schematic.pdf", PDF, "application/pdf"),
        ("ramp.csv", CSV, "text/csv"),
        ("notes.txt", b"Filter cap bulging.\n", "text/plain"),
        ("no-extension", PNG, "image/png"),
    ],
)
def test_allowed_files_are_stored_with_type_hash_and_size(
    job, client_for, name, content, content_type
):
    response = upload(client_for("technician"), job, name, content)
    assert response.status_code == 201, response.content
    body = response.json()
    assert body["content_type"] == content_type
    assert body["sha256"] == hashlib.sha256(content).hexdigest()
    assert body["size"] == len(content)
    assert body["label"] == name
    stored = Evidence.objects.get(pk=body["id"])
    assert name not in stored.file.name
    assert stored.file.read() == content


def test_the_download_returns_the_same_bytes(job, client_for):
    client = client_for("front_desk")
    body = upload(client, job, "chassis.png", PNG).json()
    response = client.get(f"/api/evidence/{body['id']}/download/")
    assert response.status_code == 200
    assert b"".join(response.streaming_content) == PNG
    assert response["Content-Type"] == "image/png"


def test_a_file_over_the_limit_is_refused(job, client_for, settings):
    settings.EVIDENCE_MAX_BYTES = 1000
    response = upload(client_for("technician"), job, "big.png", PNG + bytes(2000))
    assert response.status_code == 400
    assert response.json()["error"]["code"] == "file_too_large"
    assert response.json()["error"]["field"] == "file"
    assert Evidence.objects.count() == 0


@pytest.mark.parametrize(
    ("name", "content"),
    [
        ("setup.exe", EXE),
        ("photo.jpg", EXE),
        ("page.txt", b"<!DOCTYPE html><script>x</script>"),
        ("drawing.png", b"<svg xmlns='http://www.w3.org/2000/svg'/>"),
        ("photo.png", PDF),
        ("scan.pdf", CSV),
        ("blob.bin", bytes(range(256)) * 4),
    ],
)
def test_wrong_or_spoofed_files_are_refused(job, client_for, name, content):
    response = upload(client_for("technician"), job, name, content)
    assert response.status_code == 400
    assert response.json()["error"]["field"] == "file"
    assert Evidence.objects.count() == 0


def test_an_empty_file_is_refused(job, client_for):
    response = upload(client_for("technician"), job, "empty.txt", b"")
    assert response.status_code == 400
    assert response.json()["error"]["field"] == "file"


def test_the_same_file_twice_answers_the_existing_record(job, client_for):
    client = client_for("technician")
    first = upload(client, job, "chassis.png", PNG)
    second = upload(client, job, "chassis-again.png", PNG)
    assert (first.status_code, second.status_code) == (201, 200)
    assert second.json()["id"] == first.json()["id"]
    assert Evidence.objects.count() == 1


def test_evidence_is_never_changed_or_deleted(job, client_for):
    body = upload(client_for("lead"), job, "chassis.png", PNG).json()
    client = client_for("lead")
    assert client.patch(f"/api/evidence/{body['id']}/", {"label": "x"}).status_code == 405
    assert client.delete(f"/api/evidence/{body['id']}/").status_code == 405
    assert Evidence.objects.count() == 1
