"""Evidence and certificate PDFs in S3-compatible object storage, against moto's stand-in."""

from __future__ import annotations

import hashlib
import json
import os
import subprocess
import sys
from pathlib import Path

import boto3
import pytest
from django.core.files.base import ContentFile
from django.core.files.storage import default_storage
from django.core.files.uploadedfile import SimpleUploadedFile
from moto import mock_aws

from reports import services as reports
from shop.bench import services as bench
from shop.intake.models import Evidence
from shop.settings.base import object_storage

ROOT = Path(__file__).resolve().parents[2]
BUCKET = "lantern-row-records"
PNG = b"\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR" + bytes(range(64))
READINGS = [
    {"source_voltage": 60.0, "load_voltage": 54.5, "glow_seen": "dark"},
    {"source_voltage": 120.0, "load_voltage": 101.0, "glow_seen": "faint"},
]


@pytest.fixture
def bucket(monkeypatch, settings):
    """An empty bucket in moto's in-process S3, and the default storage pointed at it."""
    for name, value in {
        "AWS_ACCESS_KEY_ID": "testing",
        "AWS_SECRET_ACCESS_KEY": "testing",
        "AWS_DEFAULT_REGION": "us-east-1",
    }.items():
        monkeypatch.setenv(name, value)
    with mock_aws():
        client = boto3.client("s3", region_name="us-east-1")
        client.create_bucket(Bucket=BUCKET)
        settings.STORAGES = {**settings.STORAGES, "default": object_storage(BUCKET)}
        yield client


def stored_keys(client) -> list[str]:
    return [item["Key"] for item in client.list_objects_v2(Bucket=BUCKET).get("Contents", [])]


def stored_bytes(client, key: str) -> bytes:
    return client.get_object(Bucket=BUCKET, Key=key)["Body"].read()


def test_the_object_storage_entry_never_overwrites_and_keeps_objects_private():
    entry = object_storage(BUCKET, "https://objects.example.org")
    assert entry["BACKEND"] == "storages.backends.s3.S3Storage"
    assert entry["OPTIONS"]["bucket_name"] == BUCKET
    assert entry["OPTIONS"]["endpoint_url"] == "https://objects.example.org"
    assert entry["OPTIONS"]["file_overwrite"] is False
    assert entry["OPTIONS"]["default_acl"] is None
    assert entry["OPTIONS"]["querystring_auth"] is True


def test_setting_a_bucket_in_the_environment_selects_object_storage():
    script = (
        "import django, json; django.setup()\n"
        "from django.conf import settings; print(json.dumps(settings.STORAGES['default']))\n"
    )
    env = {
        **os.environ,
        "DJANGO_SETTINGS_MODULE": "shop.settings.test",
        "AWS_STORAGE_BUCKET_NAME": BUCKET,
        "AWS_S3_ENDPOINT_URL": "http://127.0.0.1:9000",
    }
    result = subprocess.run(
        [sys.executable, "-c", script],
        cwd=ROOT,
        env=env,
        capture_output=True,
        text=True,
        timeout=120,
    )
    assert result.returncode == 0, result.stderr
    assert json.loads(result.stdout.strip().splitlines()[-1]) == object_storage(
        BUCKET, "http://127.0.0.1:9000"
    )


def test_evidence_round_trips_through_object_storage_under_a_generated_key(bucket, job, client_for):
    client = client_for("technician")
    response = client.post(
        "/api/evidence/",
        {"job": job.pk, "file": SimpleUploadedFile("../../etc/chassis.png", PNG)},
        format="multipart",
    )
    assert response.status_code == 201, response.content
    body = response.json()
    evidence = Evidence.objects.get(pk=body["id"])
    assert stored_keys(bucket) == [evidence.file.name]
    key = evidence.file.name
    assert key.startswith(f"evidence/{job.pk}/") and key.endswith(".png")
    assert ".." not in key and "chassis" not in key
    assert hashlib.sha256(stored_bytes(bucket, key)).hexdigest() == body["sha256"]

    download = client.get(f"/api/evidence/{evidence.pk}/download/")
    assert download.status_code == 200
    assert b"".join(download.streaming_content) == PNG


def test_a_certificate_pdf_round_trips_through_object_storage(bucket, open_test, staff, client_for):
    bench.readings_add(test=open_test, readings=READINGS, actor=staff["technician"])
    bench.powerup_close(test=open_test, actor=staff["technician"])
    certificate = reports.certificate_issue(job=open_test.job, issued_by=staff["lead"])
    pdf = client_for("lead").get(f"/api/certificates/{certificate.pk}/pdf/").content
    assert pdf.startswith(b"%PDF")
    # Issuing stored the PDF in the bucket under a generated key; the API serves those bytes.
    key = certificate.pdf.name
    assert key.startswith(f"certificates/{certificate.number}-")
    assert stored_keys(bucket) == [key]
    assert stored_bytes(bucket, key) == pdf
    with default_storage.open(key, "rb") as stored:
        assert stored.read() == pdf


def test_saving_to_an_existing_key_stores_a_new_object_and_leaves_the_first_alone(bucket):
    first = default_storage.save("certificates/LR-2026-0001.pdf", ContentFile(b"%PDF issued"))
    second = default_storage.save("certificates/LR-2026-0001.pdf", ContentFile(b"%PDF forged"))
    assert first == "certificates/LR-2026-0001.pdf"
    assert second != first
    assert second.startswith("certificates/LR-2026-0001")
    assert sorted(stored_keys(bucket)) == sorted([first, second])
    assert stored_bytes(bucket, first) == b"%PDF issued"
    assert stored_bytes(bucket, second) == b"%PDF forged"
