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


def ftyp(major: bytes, *compatible: bytes) -> bytes:
    """The opening `ftyp` box of an ISO base media file (ISO/IEC 14496-12 layout), then data."""
    body = major + b"\x00\x00\x00\x00" + b"".join(compatible)
    return (8 + len(body)).to_bytes(4, "big") + b"ftyp" + body + bytes(range(200))


# Brand sets as phones write them (from memory): an iPhone photo "heic" with "mif1"; an
# Android HEIF still "mif1"; an Android video "isom"/"mp42"; an iPhone MP4 export "mp42".
IPHONE_HEIC = ftyp(b"heic", b"mif1", b"heic")
ANDROID_HEIF = ftyp(b"mif1", b"heic", b"mif1")
ANDROID_MP4 = ftyp(b"isom", b"isom", b"iso2", b"avc1", b"mp41")
EXPORTED_MP4 = ftyp(b"mp42", b"mp41", b"isom")
QUICKTIME = ftyp(b"qt  ", b"qt  ")


@pytest.mark.parametrize(
    ("name", "content", "content_type"),
    [
        ("IMG_0042.HEIC", IPHONE_HEIC, "image/heic"),
        ("PXL_2026.heif", ANDROID_HEIF, "image/heif"),
        ("PXL_2026.heic", ANDROID_HEIF, "image/heif"),
        ("VID_0007.mp4", ANDROID_MP4, "video/mp4"),
        ("clip.m4v", EXPORTED_MP4, "video/mp4"),
    ],
)
def test_phone_photos_and_short_videos_are_accepted_by_their_content(
    job, client_for, name, content, content_type
):
    response = upload(client_for("technician"), job, name, content)
    assert response.status_code == 201, response.content
    assert response.json()["content_type"] == content_type


@pytest.mark.parametrize(
    ("name", "content"),
    [
        ("clip.mov", QUICKTIME),
        ("photo.heic", ANDROID_MP4),
        ("video.mp4", IPHONE_HEIC),
        ("photo.heic", PNG[:8] + b"ftypheic" + bytes(40)),
    ],
)
def test_phone_media_dressed_as_something_else_is_refused(job, client_for, name, content):
    response = upload(client_for("technician"), job, name, content)
    assert response.status_code == 400, response.content
    assert response.json()["error"]["code"] == "file_type_refused"


def test_each_kind_has_its_own_size_limit(job, client_for, settings):
    settings.EVIDENCE_MAX_BYTES = 1000
    settings.EVIDENCE_MAX_BYTES_BY_KIND = {"video": 5000}
    technician = client_for("technician")
    video = ANDROID_MP4 + bytes(3000)
    assert upload(technician, job, "long.mp4", video).status_code == 201
    too_long = upload(technician, job, "longer.mp4", ANDROID_MP4 + bytes(6000))
    assert too_long.status_code == 400
    assert too_long.json()["error"]["code"] == "file_too_large"
    # A photo of the video's size is over the photo limit.
    photo = upload(technician, job, "big.heic", IPHONE_HEIC + bytes(3000))
    assert photo.status_code == 400
    assert "image/heic" in photo.json()["error"]["message"]
    assert Evidence.objects.count() == 1


def test_evidence_is_refused_on_a_returned_job(job, client_for, staff):
    from tests.jobs import walk

    job = walk(
        job,
        ["diagnosing", "awaiting_approval", "repairing", "testing", "ready", "returned"],
        staff["lead"],
        ready_override="Evidence test: no power-up test belongs to this job.",
    )
    response = upload(client_for("technician"), job, "late.png", PNG)
    assert response.status_code == 409
    assert response.json()["error"]["code"] == "job_closed"
    assert Evidence.objects.count() == 0


def test_evidence_links_to_a_step_of_its_job_and_carries_a_caption(job, client_for, staff):
    from shop.intake import services

    step = services.repair_step_add(job=job, technician=staff["technician"], action="New cap.")
    response = client_for("technician").post(
        "/api/evidence/",
        {
            "job": job.pk,
            "step": step.pk,
            "caption": "C12 after replacement, polarity marked.",
            "file": SimpleUploadedFile("c12.png", PNG),
        },
        format="multipart",
    )
    assert response.status_code == 201, response.content
    body = response.json()
    assert (body["step"], body["caption"]) == (step.pk, "C12 after replacement, polarity marked.")
    listed = client_for("lead").get("/api/evidence/", {"step": step.pk}).json()["results"]
    assert [row["id"] for row in listed] == [body["id"]]


def test_evidence_cannot_link_to_another_jobs_step(job, client_for, staff):
    from shop.intake import services

    other = services.job_create(actor=staff["front_desk"], unit=job.unit, complaint="Other.")
    step = services.repair_step_add(job=other, technician=staff["technician"], action="X.")
    response = client_for("technician").post(
        "/api/evidence/",
        {"job": job.pk, "step": step.pk, "file": SimpleUploadedFile("c.png", PNG)},
        format="multipart",
    )
    assert response.status_code == 400
    assert response.json()["error"]["field"] == "step"
    assert Evidence.objects.count() == 0
