"""Backup and restore: the demo shop round-trips exactly, and a damaged archive loads nothing."""

from __future__ import annotations

import hashlib
import importlib
import json
import shutil
import struct
import threading
import zipfile
from io import StringIO
from pathlib import Path

import pytest
from django.apps import apps
from django.contrib.admin.models import CHANGE, LogEntry
from django.contrib.auth.models import Group, Permission, User
from django.contrib.contenttypes.models import ContentType
from django.core.files.uploadedfile import SimpleUploadedFile
from django.core.management import CommandError, call_command
from django.core.management.sql import emit_post_migrate_signal
from django.db import connection, connections, transaction
from django.test import override_settings

from reports.models import Certificate
from shop.core.backup import (
    MANIFEST,
    SIGNATURE,
    SIGNING_PURPOSE,
    SUMS,
    backed_up_models,
    backup_create,
)
from shop.core.signing import record_sign
from shop.intake.models import Evidence, Job
from shop.intake.services import evidence_attach, job_create

# Rebuilt by `migrate` in every database; the archive refers to them by natural key.
RENUMBERED = (ContentType, Permission)
SCOPE_CAPTURE = b"seconds,volts\n0.0,0.0\n0.5,61.2\n1.0,118.9\n"
ROLE_MIGRATION = importlib.import_module("shop.core.migrations.0001_shop_roles")


@pytest.fixture(autouse=True)
def _forget_content_type_ids():
    """Tests renumber content types inside a rolled-back transaction: drop the cached ids."""
    yield
    ContentType.objects.clear_cache()


def load_demo_shop_with_evidence() -> Evidence:
    """The demo shop, one evidence file, and rows that refer to content types and permissions."""
    call_command("demo_load", stdout=StringIO())
    lead = User.objects.get(username="lena")
    job = Job.objects.order_by("number").first()
    evidence, created = evidence_attach(
        job=job,
        upload=SimpleUploadedFile("scope.csv", SCOPE_CAPTURE, content_type="text/csv"),
        uploaded_by=lead,
    )
    assert created
    lead.user_permissions.add(Permission.objects.get(codename="view_job"))
    Group.objects.get(name="lead").permissions.add(Permission.objects.get(codename="change_job"))
    LogEntry.objects.create(
        user=lead,
        content_type=ContentType.objects.get_for_model(Job),
        object_id=str(job.pk),
        object_repr=str(job),
        action_flag=CHANGE,
        change_message="[]",
    )
    return evidence


def database_contents() -> dict[str, list[tuple]]:
    """Every row of every model with all its field values, keyed by model.

    Links to content types and permissions are given by natural key (each database numbers
    those itself); many-to-many links as sorted pairs, since a link row's own id is no data.
    """
    named = {
        model: {row.pk: row.natural_key() for row in model.objects.all()} for model in RENUMBERED
    }
    contents = {}
    for model in apps.get_models(include_auto_created=True):
        if model in RENUMBERED:
            continue
        fields = [
            f
            for f in model._meta.concrete_fields
            if not (model._meta.auto_created and f.primary_key)
        ]
        rows = []
        for values in model._base_manager.order_by("pk").values_list(*[f.attname for f in fields]):
            rows.append(
                tuple(
                    named[f.remote_field.model].get(value)
                    if f.is_relation and f.remote_field.model in named
                    else value
                    for f, value in zip(fields, values, strict=True)
                )
            )
        contents[model._meta.label_lower] = sorted(rows) if model._meta.auto_created else rows
    return contents


def media_hashes(root) -> dict[str, str]:
    return {
        path.relative_to(root).as_posix(): hashlib.sha256(path.read_bytes()).hexdigest()
        for path in Path(root).rglob("*")
        if path.is_file()
    }


def empty_like_a_fresh_migrate(media_root) -> None:
    """Flush, renumber content types and permissions, seed the role groups, wipe media."""
    connection.check_constraints()  # fire deferred checks, so PostgreSQL lets flush truncate
    call_command("flush", interactive=False, verbosity=0)
    ContentType.objects.all().delete()
    ContentType.objects.clear_cache()
    ContentType.objects.create(app_label="backup_test", model="shifts_every_id")
    emit_post_migrate_signal(0, False, connection.alias)
    ROLE_MIGRATION.create_roles(apps, None)
    shutil.rmtree(media_root)


def shop_is_empty() -> bool:
    return not any(
        model._base_manager.exists()
        for model in backed_up_models()
        if model._meta.label_lower != "auth.group"
    )


def test_demo_shop_round_trips_every_record_and_file(db, settings, tmp_path):
    settings.MEDIA_ROOT = tmp_path / "media"
    evidence = load_demo_shop_with_evidence()
    job_type_id = ContentType.objects.get_for_model(Job).pk
    before, files_before = database_contents(), media_hashes(settings.MEDIA_ROOT)
    certificate = Certificate.objects.get()
    assert files_before == {
        evidence.file.name: hashlib.sha256(SCOPE_CAPTURE).hexdigest(),
        certificate.pdf.name: certificate.pdf_sha256,
    }
    assert len(before["core.auditevent"]) > 0
    archive = tmp_path / "shop.zip"
    written = StringIO()
    call_command("backup", output=archive, stdout=written)

    empty_like_a_fresh_migrate(settings.MEDIA_ROOT)
    assert shop_is_empty() and not Path(settings.MEDIA_ROOT).exists()
    assert ContentType.objects.get_for_model(Job).pk != job_type_id
    restored = StringIO()
    call_command("restore", str(archive), stdout=restored)

    assert database_contents() == before
    assert media_hashes(settings.MEDIA_ROOT) == files_before
    assert LogEntry.objects.get().get_edited_object() == Job.objects.order_by("number").first()
    assert "intake.job: 12 records" in written.getvalue()
    assert "Media: 2 files, " in written.getvalue()
    assert "intake.job: 12 records" in restored.getvalue()
    assert "Media: 2 files written, 0 already present" in restored.getvalue()


def test_new_rows_after_a_restore_take_fresh_ids(db, settings, tmp_path):
    settings.MEDIA_ROOT = tmp_path / "media"
    load_demo_shop_with_evidence()
    highest = Job.objects.order_by("-pk").first().pk
    archive = tmp_path / "shop.zip"
    call_command("backup", output=archive, stdout=StringIO())
    empty_like_a_fresh_migrate(settings.MEDIA_ROOT)
    call_command("restore", str(archive), stdout=StringIO())
    job = job_create(
        actor=User.objects.get(username="dana"),
        unit=Job.objects.get(pk=highest).unit,
        complaint="Crackles when warm.",
    )
    assert job.pk > highest


@pytest.fixture(scope="module")
def demo_archive(django_db_setup, django_db_blocker, tmp_path_factory) -> Path:
    """An archive of the demo shop with one evidence file, written once for this module."""
    folder = tmp_path_factory.mktemp("backup")
    with django_db_blocker.unblock(), override_settings(MEDIA_ROOT=folder / "media"):
        with transaction.atomic():
            load_demo_shop_with_evidence()
            call_command("backup", output=folder / "shop.zip", stdout=StringIO())
            transaction.set_rollback(True)
    ContentType.objects.clear_cache()
    return folder / "shop.zip"


def flip_one_byte(source: Path, target: Path, member: str) -> None:
    """Copy the archive, changing one byte in the middle of `member`'s stored data."""
    data = bytearray(source.read_bytes())
    info = zipfile.ZipFile(source).getinfo(member)
    name_length, extra_length = struct.unpack_from("<HH", data, info.header_offset + 26)
    start = info.header_offset + 30 + name_length + extra_length
    data[start + info.compress_size // 2] ^= 0x01
    target.write_bytes(bytes(data))


def rewrite_member(
    source: Path, target: Path, member: str, change, *, fix_sums: bool, sign: bool = False
) -> None:
    """Copy the archive with `member` replaced by change(bytes), as a well-formed zip.

    With `fix_sums` the member's line in SHA256SUMS is rewritten to match its new content;
    with `sign` as well, SHA256SUMS is signed again with this server's RECORD_SIGNING_KEY (as
    if the shop itself had written the changed archive).
    """
    with zipfile.ZipFile(source) as old, zipfile.ZipFile(target, "w", zipfile.ZIP_DEFLATED) as new:
        replacement = change(old.read(member))
        sums = old.read(SUMS).decode().splitlines()
        if fix_sums:
            digest = hashlib.sha256(replacement).hexdigest()
            sums = [
                f"{digest}  {member}" if line.endswith(f"  {member}") else line for line in sums
            ]
        sums_bytes = "".join(f"{line}\n" for line in sums).encode()
        for name in old.namelist():
            if name == SIGNATURE and sign:
                new.writestr(name, record_sign(purpose=SIGNING_PURPOSE, message=sums_bytes))
            elif name != SUMS:
                new.writestr(name, replacement if name == member else old.read(name))
        new.writestr(SUMS, sums_bytes)


def member_named(archive: Path, prefix: str, contains: str) -> str:
    return next(
        name
        for name in zipfile.ZipFile(archive).namelist()
        if name.startswith(prefix) and contains in name
    )


def one_byte_changed(data: bytes) -> bytes:
    return data[:10] + bytes([data[10] ^ 0x01]) + data[11:]


@pytest.mark.parametrize(
    ("prefix", "contains"), [("media/evidence/", ""), ("db/", "intake.job.jsonl")]
)
def test_an_archive_with_one_byte_changed_is_refused_naming_the_member(
    db, settings, tmp_path, demo_archive, prefix, contains
):
    settings.MEDIA_ROOT = tmp_path / "media"
    member = member_named(demo_archive, prefix, contains)
    damaged = tmp_path / "damaged.zip"
    flip_one_byte(demo_archive, damaged, member)
    with pytest.raises(CommandError, match=f"archive member {member} is damaged"):
        call_command("restore", str(damaged), stdout=StringIO())
    assert shop_is_empty()
    assert not Path(settings.MEDIA_ROOT).exists()


def test_a_member_whose_sha256_differs_is_refused_and_nothing_is_loaded(
    db, settings, tmp_path, demo_archive
):
    settings.MEDIA_ROOT = tmp_path / "media"
    member = member_named(demo_archive, "db/", "auth.user.jsonl")
    altered = tmp_path / "altered.zip"
    rewrite_member(demo_archive, altered, member, one_byte_changed, fix_sums=False)
    with pytest.raises(CommandError, match=f"{member} is damaged .its SHA-256 differs"):
        call_command("restore", str(altered), stdout=StringIO())
    assert shop_is_empty()


def test_restore_refuses_a_database_that_holds_records(db, settings, tmp_path, demo_archive):
    settings.MEDIA_ROOT = tmp_path / "media"
    call_command("demo_load", stdout=StringIO())
    jobs = list(Job.objects.values_list("pk", "state", "version"))
    with pytest.raises(CommandError, match=r"already holds records: .*intake\.job \(12 records\)"):
        call_command("restore", str(demo_archive), stdout=StringIO())
    assert list(Job.objects.values_list("pk", "state", "version")) == jobs


def test_restore_refuses_an_archive_from_other_migrations(db, settings, tmp_path, demo_archive):
    settings.MEDIA_ROOT = tmp_path / "media"

    def add_migration(data: bytes) -> bytes:
        manifest = json.loads(data)
        manifest["migrations"]["intake"].append("9999_from_a_later_release")
        return json.dumps(manifest).encode()

    later = tmp_path / "later.zip"
    rewrite_member(demo_archive, later, MANIFEST, add_migration, fix_sums=True, sign=True)
    with pytest.raises(CommandError, match="lacks \\['intake.9999_from_a_later_release'\\]"):
        call_command("restore", str(later), stdout=StringIO())
    assert shop_is_empty()


def test_restore_refuses_a_different_file_under_the_same_media_name(
    db, settings, tmp_path, demo_archive
):
    settings.MEDIA_ROOT = tmp_path / "media"
    name = member_named(demo_archive, "media/", "").removeprefix("media/")
    clash = tmp_path / "media" / name
    clash.parent.mkdir(parents=True)
    clash.write_bytes(b"someone else's file")
    with pytest.raises(CommandError, match=f"already holds a different {name}"):
        call_command("restore", str(demo_archive), stdout=StringIO())
    assert shop_is_empty()
    assert clash.read_bytes() == b"someone else's file"


def test_verify_only_checks_every_member_and_loads_nothing(db, demo_archive):
    out = StringIO()
    call_command("restore", str(demo_archive), verify_only=True, stdout=out)
    members = len(zipfile.ZipFile(demo_archive).namelist()) - 2  # all but the sums and signature
    assert f"Checked the signature and the SHA-256 of all {members} members" in out.getvalue()
    assert "rows as the API would" in out.getvalue()
    assert "is intact" in out.getvalue()
    assert shop_is_empty()


def test_backup_never_overwrites_an_earlier_archive(db, tmp_path):
    earlier = tmp_path / "shop.zip"
    earlier.write_bytes(b"last week's backup")
    with pytest.raises(CommandError, match="already exists"):
        call_command("backup", output=earlier, stdout=StringIO())
    assert earlier.read_bytes() == b"last week's backup"


def test_on_sqlite_a_write_during_a_backup_goes_through(transactional_db, settings, tmp_path):
    if connection.vendor != "sqlite":
        pytest.skip("PostgreSQL dumps from a repeatable-read snapshot; writers never wait")
    settings.MEDIA_ROOT = tmp_path / "media"
    load_demo_shop_with_evidence()
    dana = User.objects.get(username="dana")
    unit = Job.objects.order_by("number").first().unit
    outcomes: list[str] = []

    def write_from_another_connection() -> None:
        try:
            job_create(actor=dana, unit=unit, complaint="Brought in while the backup ran.")
            outcomes.append("written")
        except Exception as exc:  # noqa: BLE001 - the failure itself is the finding
            outcomes.append(f"failed: {exc}")
        finally:
            connections.close_all()

    def progress(message: str) -> None:
        if "intake.job:" in message and not outcomes:
            writer = threading.Thread(target=write_from_another_connection)
            writer.start()
            writer.join()

    jobs_before = Job.objects.count()
    backup_create(path=tmp_path / "shop.zip", progress=progress)
    assert outcomes == ["written"]
    assert Job.objects.count() == jobs_before + 1
    manifest = json.loads(zipfile.ZipFile(tmp_path / "shop.zip").read(MANIFEST))
    dumped = next(entry for entry in manifest["models"] if entry["model"] == "intake.job")
    assert dumped["records"] == jobs_before  # the archive holds the moment the backup began
