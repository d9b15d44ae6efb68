"""Backups carry no sign-in secret, an edited archive is refused, and restore trusts no size or row.

The archives here are crafted the way someone who can edit a backup file would: members
changed, every SHA-256 recomputed, the manifest made to agree. Only RECORD_SIGNING_KEY, which
lives in the server's environment and never in the archive, stands between such an archive and
the shop's records.
"""

from __future__ import annotations

import hashlib
import json
import re
import zipfile
from io import StringIO
from pathlib import Path

import pytest
from django.contrib.auth.models import User
from django.contrib.contenttypes.models import ContentType
from django.core.management import CommandError, call_command
from django.db import connection, transaction
from django.test import Client, override_settings
from rest_framework.test import APIClient

from reports.canonical import canonical_json, sha256_hex
from reports.models import Certificate
from reports.pdf import render_certificate
from shop.core.backup import MANIFEST, SIGNATURE, SIGNING_PURPOSE, SUMS
from shop.core.signing import record_sign

from .test_backup import load_demo_shop_with_evidence, shop_is_empty

PASSWORD = "not-a-real-pw-1"  # the password tests/conftest.py gives every staff member
DEMO_PASSWORD = "bench-demo-2026"  # the demo shop's staff password (README)
ANOTHER_SHOPS_KEY = "another-shops-record-signing-key"


@pytest.fixture(scope="module")
def signed_in_archive(django_db_setup, django_db_blocker, tmp_path_factory):
    """The demo shop backed up while its lead holds an API token and a browser session.

    Returns the archive, the token key and the session key.
    """
    folder = tmp_path_factory.mktemp("trust")
    with django_db_blocker.unblock(), override_settings(MEDIA_ROOT=folder / "media"):
        with transaction.atomic():
            load_demo_shop_with_evidence()
            key = (
                APIClient()
                .post(
                    "/api/auth/token/",
                    {"username": "lena", "password": DEMO_PASSWORD},
                    format="json",
                )
                .json()["token"]
            )
            browser = Client()
            browser.post("/api/auth/login/", {"username": "lena", "password": DEMO_PASSWORD})
            session_key = browser.session.session_key
            assert session_key
            call_command("backup", output=folder / "shop.zip", stdout=StringIO())
            transaction.set_rollback(True)
    ContentType.objects.clear_cache()
    return folder / "shop.zip", key, session_key


@pytest.fixture
def archive(signed_in_archive) -> Path:
    return signed_in_archive[0]


def members_of(path: Path) -> dict[str, bytes]:
    with zipfile.ZipFile(path) as source:
        return {name: source.read(name) for name in source.namelist()}


def repack(
    members: dict[str, bytes], target: Path, *, sign_with: str | None, fix_sizes: bool = True
) -> Path:
    """Write `members` as an archive whose sums all match, as an editor of the file would.

    The manifest's sizes are made to agree (unless `fix_sizes` is off), SHA256SUMS is
    recomputed, and SIGNATURE is the original one (`sign_with` None: the editor lacks the key)
    or made with the key `sign_with`.
    """
    members = dict(members)
    manifest = json.loads(members[MANIFEST])
    if fix_sizes:
        for entry in manifest["models"] + manifest["media"]:
            entry["bytes"] = len(members[entry["member"]])
    members[MANIFEST] = json.dumps(manifest).encode()
    body = {name: data for name, data in members.items() if name not in (SUMS, SIGNATURE)}
    sums = "".join(
        f"{hashlib.sha256(body[name]).hexdigest()}  {name}\n" for name in sorted(body)
    ).encode()
    if sign_with is not None:
        with override_settings(RECORD_SIGNING_KEY=sign_with):
            members[SIGNATURE] = record_sign(purpose=SIGNING_PURPOSE, message=sums).encode()
    with zipfile.ZipFile(target, "w", zipfile.ZIP_DEFLATED) as new:
        for name, data in body.items():
            new.writestr(name, data)
        new.writestr(SUMS, sums)
        new.writestr(SIGNATURE, members[SIGNATURE])
    return target


def member_of(members: dict[str, bytes], label: str) -> str:
    return next(
        name for name in members if name.startswith("db/") and name.endswith(f"{label}.jsonl")
    )


def edit_rows(members: dict[str, bytes], label: str, change) -> None:
    """Replace the rows of model `label` by change(rows), keeping the manifest's count true."""
    member = member_of(members, label)
    rows = [json.loads(line) for line in members[member].decode().splitlines()]
    rows = change(rows)
    members[member] = "".join(json.dumps(row) + "\n" for row in rows).encode()
    manifest = json.loads(members[MANIFEST])
    next(e for e in manifest["models"] if e["member"] == member)["records"] = len(rows)
    members[MANIFEST] = json.dumps(manifest).encode()


def add_model_member(members: dict[str, bytes], label: str, rows: list[dict]) -> None:
    member = f"db/999-{label}.jsonl"
    members[member] = "".join(json.dumps(row) + "\n" for row in rows).encode()
    manifest = json.loads(members[MANIFEST])
    manifest["models"].append({"model": label, "member": member, "records": len(rows)})
    members[MANIFEST] = json.dumps(manifest).encode()


def the_probes_forgery(members: dict[str, bytes]) -> dict[str, bytes]:
    """Every certificate's outcomes turned around with a re-rendered PDF, a token dated 2099
    planted, the audit trail emptied."""
    members = dict(members)

    def turn_around(rows):
        for row in rows:
            snapshot = json.loads(row["fields"]["snapshot"])
            for test in snapshot["tests"]:
                test["outcome"] = "fail" if test["outcome"] == "pass" else "pass"
            text = canonical_json(snapshot)
            pdf = render_certificate(json.loads(text))
            row["fields"].update(
                snapshot=text, sha256=sha256_hex(text), pdf_sha256=hashlib.sha256(pdf).hexdigest()
            )
            members["media/" + row["fields"]["pdf"]] = pdf
        return rows

    edit_rows(members, "reports.certificate", turn_around)
    edit_rows(members, "core.auditevent", lambda rows: [])
    lead = json.loads(members[member_of(members, "auth.user")].decode().splitlines()[0])["pk"]
    add_model_member(
        members,
        "core.apitoken",
        [
            {
                "model": "core.apitoken",
                "pk": 1,
                "fields": {
                    "key_sha256": hashlib.sha256(b"a key the forger knows").hexdigest(),
                    "user": lead,
                    "created": "2099-01-01T00:00:00Z",
                    "password_stamp": "x",
                },
            }
        ],
    )
    return members


def refused_everywhere(path: Path, match: str) -> None:
    """Both `restore --verify-only` and `restore` refuse the archive, and nothing is loaded."""
    with pytest.raises(CommandError, match=match):
        call_command("restore", str(path), verify_only=True, stdout=StringIO())
    with pytest.raises(CommandError, match=match):
        call_command("restore", str(path), stdout=StringIO())
    assert shop_is_empty()


# --- sign-in secrets stay out of backups -----------------------------------------------------


def test_no_sign_in_key_or_session_is_in_a_backup(db, signed_in_archive):
    path, key, session_key = signed_in_archive
    members = members_of(path)
    labels = [name for name in members if name.startswith("db/")]
    assert not [n for n in labels if re.search(r"sessions\.|axes\.|authtoken\.|apitoken", n)]
    everything = b"".join(members.values())
    assert key.encode() not in everything
    assert session_key.encode() not in everything


def test_a_restored_shop_signs_in_again_no_key_from_the_archive_opens_it(
    db, settings, tmp_path, signed_in_archive
):
    path, key, _ = signed_in_archive
    settings.MEDIA_ROOT = tmp_path / "media"
    call_command("restore", str(path), stdout=StringIO())
    text = b"".join(members_of(path).values()).decode("utf-8", "replace")
    candidates = set(re.findall(r"\b[0-9a-f]{40}\b|\b[0-9a-f]{64}\b", text)) | {key}
    for candidate in candidates:
        client = APIClient()
        client.credentials(HTTP_AUTHORIZATION=f"Token {candidate}")
        assert client.get("/api/jobs/").status_code == 401
    fresh = APIClient().post(
        "/api/auth/token/", {"username": "lena", "password": DEMO_PASSWORD}, format="json"
    )
    assert fresh.status_code == 200


# --- an edited archive is refused ------------------------------------------------------------


def test_the_probes_forged_archive_is_refused_by_verify_only_and_restore(db, tmp_path, archive):
    forged = repack(the_probes_forgery(members_of(archive)), tmp_path / "f.zip", sign_with=None)
    refused_everywhere(forged, "not vouched for: its signature does not match its content")


def test_an_archive_signed_by_another_key_is_refused(db, tmp_path, archive):
    forged = repack(
        the_probes_forgery(members_of(archive)), tmp_path / "f.zip", sign_with=ANOTHER_SHOPS_KEY
    )
    refused_everywhere(forged, "signed with key [0-9a-f]+, which this server does not hold")


def test_an_archive_without_its_signature_is_refused(db, tmp_path, archive):
    members = members_of(archive)
    del members[SIGNATURE]
    with zipfile.ZipFile(tmp_path / "bare.zip", "w") as new:
        for name, data in members.items():
            new.writestr(name, data)
    refused_everywhere(tmp_path / "bare.zip", "has no SIGNATURE")


def test_even_signed_an_archive_carrying_api_tokens_is_refused(db, tmp_path, archive):
    members = the_probes_forgery(members_of(archive))
    forged = repack(
        members, tmp_path / "f.zip", sign_with="test-only-record-signing-key-not-for-production"
    )
    refused_everywhere(forged, "core.apitoken rows: sign-in secrets")


def test_even_signed_a_row_dated_after_the_archive_is_refused_naming_its_field(
    db, tmp_path, archive
):
    members = members_of(archive)

    def in_2099(rows):
        rows[0]["fields"]["performed_at"] = "2099-01-01T00:00:00Z"
        return rows

    edit_rows(members, "intake.repairstep", in_2099)
    signed = repack(members, tmp_path / "f.zip", sign_with=settings_key())
    refused_everywhere(signed, r"intake.repairstep row \d+: performed_at: 2099-01-01")


def settings_key() -> str:
    from django.conf import settings

    return settings.RECORD_SIGNING_KEY


# --- restore trusts no size or row -----------------------------------------------------------


def test_a_media_file_larger_than_its_manifest_says_is_refused(db, tmp_path, archive):
    members = members_of(archive)
    name = next(n for n in members if n.startswith("media/evidence/"))
    members[name] = members[name] + b"0" * 100_000
    signed = repack(members, tmp_path / "big.zip", sign_with=settings_key(), fix_sizes=False)
    refused_everywhere(signed, f"{name} is refused: it unpacks to 100\\d+ bytes; the manifest")


def test_a_member_over_the_size_cap_is_refused_before_it_is_unpacked(
    db, settings, tmp_path, archive
):
    largest = max(zipfile.ZipFile(archive).infolist(), key=lambda info: info.file_size)
    settings.BACKUP_MAX_MEMBER_BYTES = largest.file_size - 1
    refused_everywhere(archive, f"{largest.filename} is refused: it unpacks to .* over BACKUP")


def test_a_row_beyond_a_field_limit_is_refused_naming_the_field(db, tmp_path, archive):
    members = members_of(archive)

    def too_long(rows):
        rows[0]["fields"]["action"] = "x" * 4001  # RepairStep.action allows 4,000
        return rows

    edit_rows(members, "intake.repairstep", too_long)
    signed = repack(members, tmp_path / "long.zip", sign_with=settings_key())
    refused_everywhere(signed, r"intake.repairstep row \d+: action: Ensure this value has at most")


def test_a_customer_note_beyond_its_limit_is_refused(db, tmp_path, archive):
    from shop.intake.models import Customer

    limit = Customer._meta.get_field("notes").max_length
    members = members_of(archive)

    def too_long(rows):
        rows[0]["fields"]["notes"] = "n" * (limit + 1)
        return rows

    edit_rows(members, "intake.customer", too_long)
    signed = repack(members, tmp_path / "notes.zip", sign_with=settings_key())
    refused_everywhere(signed, r"intake.customer row \d+: notes: Ensure this value has at most")


def test_a_row_longer_than_the_row_cap_is_refused_before_it_is_read_whole(
    db, settings, tmp_path, archive
):
    settings.BACKUP_MAX_ROW_BYTES = 2000
    refused_everywhere(archive, "rows is longer than BACKUP_MAX_ROW_BYTES")


@pytest.mark.parametrize(
    "name", ["evidence\\..\\..\\escape.csv", "evidence/a:b.csv", "evidence/\x01.csv"]
)
def test_odd_media_names_are_refused_by_verify_only_as_by_restore(db, tmp_path, archive, name):
    members = members_of(archive)
    members["media/" + name] = b"seconds,volts\n"
    manifest = json.loads(members[MANIFEST])
    manifest["media"].append({"name": name, "member": "media/" + name, "bytes": 14})
    members[MANIFEST] = json.dumps(manifest).encode()
    signed = repack(members, tmp_path / "odd.zip", sign_with=settings_key())
    refused_everywhere(signed, "is refused: its name")


def test_the_untouched_archive_still_restores(db, settings, tmp_path, archive):
    settings.MEDIA_ROOT = tmp_path / "media"
    call_command("restore", str(archive), verify_only=True, stdout=StringIO())
    call_command("restore", str(archive), stdout=StringIO())
    assert Certificate.objects.exists()
    assert User.objects.filter(username="lena").exists()


# --- live records: certificates_verify and /verify/ ------------------------------------------


def forge_in_the_database(certificate: Certificate) -> None:
    """Turn the certificate's outcomes around in the database and the stored PDF, with every
    SHA-256 recomputed, as someone with write access to both could."""
    snapshot = json.loads(certificate.snapshot)
    for test in snapshot["tests"]:
        test["outcome"] = "fail" if test["outcome"] == "pass" else "pass"
    text = canonical_json(snapshot)
    pdf = render_certificate(json.loads(text))
    Path(certificate.pdf.path).write_bytes(pdf)
    with connection.cursor() as cursor:
        cursor.execute(
            "UPDATE reports_certificate SET snapshot = %s, sha256 = %s, pdf_sha256 = %s "
            "WHERE id = %s",
            [text, sha256_hex(text), hashlib.sha256(pdf).hexdigest(), certificate.pk],
        )


def test_certificates_verify_and_the_verify_page_refuse_a_forged_certificate(
    db, settings, tmp_path
):
    settings.MEDIA_ROOT = tmp_path / "media"
    load_demo_shop_with_evidence()
    certificate = Certificate.objects.get()
    call_command("certificates_verify", stdout=StringIO())
    forge_in_the_database(certificate)
    errors = StringIO()
    with pytest.raises(CommandError, match="1 of 1 certificates no longer match"):
        call_command("certificates_verify", stdout=StringIO(), stderr=errors)
    assert f"MISMATCH {certificate.number}: its signature does not match" in errors.getvalue()
    answer = APIClient().get(
        f"/verify/{certificate.number}/",
        {"code": certificate.verification_code},
        HTTP_ACCEPT="application/json",
    )
    assert answer.status_code == 200
    assert answer.json()["status"] == "tampered"
    assert answer.json()["intact"] is False


def test_after_a_key_rotation_certificates_signed_with_the_former_key_still_verify(
    db, settings, tmp_path
):
    settings.MEDIA_ROOT = tmp_path / "media"
    load_demo_shop_with_evidence()
    former = settings.RECORD_SIGNING_KEY
    settings.RECORD_SIGNING_KEY = "the-new-record-signing-key-after-rotation"
    errors = StringIO()
    with pytest.raises(CommandError, match="1 of 1 certificates no longer match"):
        call_command("certificates_verify", stdout=StringIO(), stderr=errors)
    assert "which this server does not hold" in errors.getvalue()
    settings.RECORD_SIGNING_OLD_KEYS = [former]
    call_command("certificates_verify", stdout=StringIO())
