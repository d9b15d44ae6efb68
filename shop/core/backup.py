"""Backups: one zip archive of every record and every media file, checked by SHA-256 on restore.

An archive holds:

- ``manifest.json``: the format, when it was written, the migrations the database had, each
  model's member and record count, and each media file's storage name and size;
- ``db/NNN-<app>.<model>.jsonl``: every row of one model in Django's JSON Lines serialization
  (the ``dumpdata --format jsonl`` shape, so ``loaddata`` can read a member too), primary keys
  kept; content types and permissions are named by natural key because every database numbers
  them itself when it is migrated;
- ``media/<storage name>``: every file in the default storage (evidence and anything else);
- ``SHA256SUMS``: the SHA-256 of every other member, in ``sha256sum -c`` format;
- ``SIGNATURE``: the keyed hash of ``SHA256SUMS`` under RECORD_SIGNING_KEY (shop.core.signing),
  which lives outside the database and the archive: an archive edited after it was written
  cannot be given sums that verify.

Sign-in secrets stay out: browser sessions, API tokens (kept only as hashes anyway) and the
sign-in failure records. A restored shop signs in again.

Restoring verifies the signature and every member before touching the database, refuses a
database that already holds records, checks every size while streaming, validates every row
as the API would (field limits, choices, no date later than the archive), and then loads rows
and writes files in one transaction: all or nothing. `--verify-only` runs every one of those
checks but the database's emptiness and the references between rows.
"""

from __future__ import annotations

import hashlib
import io
import json
import posixpath
import sqlite3
import tempfile
import zipfile
import zlib
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from dataclasses import dataclass, field
from datetime import UTC, datetime, time, timedelta
from pathlib import Path

from django.apps import apps
from django.conf import settings
from django.core import serializers
from django.core.exceptions import ValidationError
from django.core.files import File
from django.core.files.storage import Storage, default_storage
from django.core.management.color import no_style
from django.core.serializers.base import DeserializationError
from django.core.serializers.json import DjangoJSONEncoder
from django.core.serializers.jsonl import Serializer as JsonLinesSerializer
from django.db import DEFAULT_DB_ALIAS, DatabaseError, connections, router, transaction
from django.db.migrations.recorder import MigrationRecorder
from django.db.models import Model
from django.db.utils import load_backend

from .errors import ApplicationError
from .signing import record_sign, record_signature_problem

FORMAT = "bench-record-service-backup"
FORMAT_VERSION = 2
MANIFEST = "manifest.json"
SUMS = "SHA256SUMS"
SIGNATURE = "SIGNATURE"
SIGNING_PURPOSE = "backup-sums"
DB_PREFIX = "db/"
MEDIA_PREFIX = "media/"
# Rows fetched per query while dumping: bounded memory for a table of any size.
CHUNK_ROWS = 2000
# Progress line every this many rows of one model, so a large table shows it is moving.
PROGRESS_ROWS = 10_000
# Progress line every this many media files (every file at verbosity 2).
PROGRESS_FILES = 100
COPY_BLOCK = 1 << 20
# Every database numbers these itself when migrated: the archive names them by natural key.
NAMED_BY_NATURAL_KEY = frozenset({"contenttypes.contenttype", "auth.permission"})
# Rows a fresh `migrate` creates (the role groups); the archive's own rows replace them.
SEEDED_BY_MIGRATIONS = ("auth.group",)
# Sign-in secrets and sign-in failure records: never written, and refused in an archive.
NOT_BACKED_UP_APPS = frozenset({"sessions", "axes"})
NOT_BACKED_UP_MODELS = frozenset({"core.apitoken"})
# How far past the archive's own time a record's date may lie (clocks of two servers).
CLOCK_SKEW = timedelta(minutes=5)
MEMBER_NAME_MAX = 255

Progress = Callable[[str], None]


def _quiet(message: str) -> None:
    """Progress sink that drops every message."""


@dataclass
class BackupSummary:
    """What one backup or restore handled: records per model and media files."""

    path: Path
    records: dict[str, int] = field(default_factory=dict)
    files: int = 0
    file_bytes: int = 0
    files_already_present: int = 0

    @property
    def total_records(self) -> int:
        return sum(self.records.values())


class _ExactEncoder(DjangoJSONEncoder):
    """Django's JSON encoder without its rounding of times to whole milliseconds."""

    def default(self, o):
        if isinstance(o, (datetime, time)):
            return o.isoformat()
        return super().default(o)


class _PortableSerializer(JsonLinesSerializer):
    """JSON Lines naming content types and permissions by natural key and every other row by pk.

    Natural keys everywhere would turn each reference to a user into a lookup on restore; only
    the rows each database numbers for itself need them.
    """

    def handle_fk_field(self, obj, field):
        self.use_natural_foreign_keys = _named_by_natural_key(field.remote_field.model)
        super().handle_fk_field(obj, field)

    def handle_m2m_field(self, obj, field):
        self.use_natural_foreign_keys = _named_by_natural_key(field.remote_field.model)
        super().handle_m2m_field(obj, field)


class _HashingWriter(io.RawIOBase):
    """Writes bytes through to `target` while keeping their SHA-256."""

    def __init__(self, target):
        self.target = target
        self.sha256 = hashlib.sha256()
        self.size = 0

    def writable(self) -> bool:
        return True

    def write(self, data) -> int:
        self.sha256.update(data)
        self.target.write(data)
        self.size += len(data)
        return len(data)


class _HashingReader(io.RawIOBase):
    """Reads bytes from `source` while keeping their SHA-256."""

    def __init__(self, source):
        self.source = source
        self.sha256 = hashlib.sha256()

    def readable(self) -> bool:
        return True

    def readinto(self, buffer) -> int:
        data = self.source.read(len(buffer))
        buffer[: len(data)] = data
        self.sha256.update(data)
        return len(data)


def _kept_out(label: str) -> bool:
    """Whether rows of the model `label` ("app.model") are sign-in secrets no archive carries."""
    return label.partition(".")[0] in NOT_BACKED_UP_APPS or label in NOT_BACKED_UP_MODELS


def _named_by_natural_key(model: type[Model]) -> bool:
    return model._meta.label_lower in NAMED_BY_NATURAL_KEY


def backed_up_models(using: str = DEFAULT_DB_ALIAS) -> list[type[Model]]:
    """Every model whose rows the archive carries, natural-key dependencies first."""
    ordered = serializers.sort_dependencies(
        [(config, None) for config in apps.get_app_configs()], allow_cycles=True
    )
    return [
        model
        for model in ordered
        if not model._meta.proxy
        and model._meta.managed
        and not _named_by_natural_key(model)
        and not _kept_out(model._meta.label_lower)
        and router.allow_migrate_model(using, model)
    ]


def applied_migrations(using: str = DEFAULT_DB_ALIAS) -> dict[str, list[str]]:
    """The migrations applied to the database, by app."""
    applied: dict[str, list[str]] = {}
    for app_label, name in sorted(MigrationRecorder(connections[using]).applied_migrations()):
        applied.setdefault(app_label, []).append(name)
    return applied


def media_names(storage: Storage, folder: str = "") -> Iterator[str]:
    """Every file name in `storage` under `folder`, sorted, walking sub-folders."""
    try:
        folders, files = storage.listdir(folder)
    except FileNotFoundError:
        return
    for name in sorted(files):
        yield posixpath.join(folder, name) if folder else name
    for sub in sorted(folders):
        yield from media_names(storage, posixpath.join(folder, sub) if folder else sub)


def _rows(model: type[Model], using: str):
    fk_named = [
        f.name
        for f in model._meta.concrete_fields
        if f.is_relation and _named_by_natural_key(f.remote_field.model)
    ]
    many = [f.name for f in model._meta.many_to_many if f.remote_field.through._meta.auto_created]
    queryset = model._base_manager.using(using).order_by(model._meta.pk.name)
    if fk_named:
        queryset = queryset.select_related(*fk_named)
    if many:
        queryset = queryset.prefetch_related(*many)
    return queryset.iterator(chunk_size=CHUNK_ROWS)


def _counted(rows, label: str, progress: Progress, tally: dict[str, int]):
    for row in rows:
        tally[label] += 1
        if tally[label] % PROGRESS_ROWS == 0:
            progress(f"  {label}: {tally[label]} records so far")
        yield row


@contextmanager
def _one_snapshot(using: str):
    """Yield the alias of a database that holds every model as of one moment, for the dump.

    On PostgreSQL, one repeatable-read transaction: writers carry on. On SQLite a transaction
    here would be an immediate one (the project's setting) and hold the write lock for the
    whole dump, so the database is first copied with SQLite's online backup API (one short
    read) to a temporary file, and the dump reads the copy while writers carry on.
    """
    connection = connections[using]
    if connection.vendor == "sqlite" and not connection.in_atomic_block:
        with _sqlite_copy(using) as alias:
            yield alias
        return
    outermost = not connection.in_atomic_block
    with transaction.atomic(using=using):
        if outermost and connection.vendor == "postgresql":
            with connection.cursor() as cursor:
                cursor.execute("SET TRANSACTION ISOLATION LEVEL REPEATABLE READ, READ ONLY")
        yield using


@contextmanager
def _sqlite_copy(using: str):
    """A consistent copy of the SQLite database `using`, opened under a temporary alias."""
    connection = connections[using]
    connection.ensure_connection()
    alias = f"{using}-backup-copy"
    with tempfile.TemporaryDirectory(prefix="shop-backup-") as folder:
        copy = Path(folder) / "copy.sqlite3"
        target = sqlite3.connect(copy)
        try:
            # pages=-1: the whole database in one step, so within one read transaction.
            connection.connection.backup(target, pages=-1)
        finally:
            target.close()
        # Opened beside the configured databases, not added to them: it lives for this dump.
        settings_dict = {**connections.settings[using], "NAME": str(copy)}
        wrapper = load_backend(settings_dict["ENGINE"]).DatabaseWrapper(settings_dict, alias)
        connections[alias] = wrapper
        try:
            yield alias
        finally:
            wrapper.close()
            del connections[alias]


def backup_create(
    *,
    path: Path,
    using: str = DEFAULT_DB_ALIAS,
    storage: Storage | None = None,
    progress: Progress = _quiet,
    verbosity: int = 1,
) -> BackupSummary:
    """Write every record and media file to a new zip archive at `path`.

    The archive is written beside `path` under a temporary name and renamed when complete, so
    an interrupted backup never leaves a file that looks finished.
    """
    path = Path(path)
    if path.exists():
        raise ApplicationError(
            f"{path} already exists; name a new file so that no earlier backup is overwritten.",
            field="output",
            code="archive_exists",
        )
    path.parent.mkdir(parents=True, exist_ok=True)
    storage = storage or default_storage
    summary = BackupSummary(path=path)
    manifest = {
        "format": FORMAT,
        "version": FORMAT_VERSION,
        "created_at": datetime.now(UTC).isoformat(),
        "database_vendor": connections[using].vendor,
        "models": [],
        "media": [],
    }
    sums: dict[str, str] = {}
    partial = path.with_name(path.name + ".partial")
    try:
        with zipfile.ZipFile(partial, "w", compression=zipfile.ZIP_DEFLATED) as archive:
            with _one_snapshot(using) as source:
                manifest["migrations"] = applied_migrations(source)
                for index, model in enumerate(backed_up_models(using), start=1):
                    entry = _write_records(archive, model, index, source, progress, summary)
                    sums[entry["member"]] = entry.pop("sha256")
                    manifest["models"].append(entry)
            progress(
                f"Database: {_records_text(summary.total_records)} in {len(summary.records)} models"
            )
            # Media after the records: every file a dumped row names was stored before its row.
            for name in media_names(storage):
                try:
                    entry = _write_media(archive, storage, name)
                except FileNotFoundError:
                    # Gone since listed: only a failed upload's file is ever removed.
                    progress(f"  {name}: removed while the backup ran; left out")
                    continue
                sums[entry["member"]] = entry.pop("sha256")
                manifest["media"].append(entry)
                summary.files += 1
                summary.file_bytes += entry["bytes"]
                _file_progress(progress, verbosity, summary.files, name, entry["bytes"])
            progress(f"Media: {summary.files} files, {summary.file_bytes} bytes")
            manifest_bytes = json.dumps(manifest, indent=1, sort_keys=True).encode()
            archive.writestr(MANIFEST, manifest_bytes)
            sums[MANIFEST] = hashlib.sha256(manifest_bytes).hexdigest()
            sums_bytes = "".join(f"{sums[m]}  {m}\n" for m in sorted(sums)).encode()
            archive.writestr(SUMS, sums_bytes)
            archive.writestr(
                SIGNATURE, record_sign(purpose=SIGNING_PURPOSE, message=sums_bytes) + "\n"
            )
        partial.replace(path)
    finally:
        partial.unlink(missing_ok=True)
    return summary


def _write_records(archive, model, index: int, using: str, progress, summary) -> dict:
    """Dump one model's rows into its own member; return its manifest entry and SHA-256."""
    label = model._meta.label_lower
    member = f"{DB_PREFIX}{index:03d}-{label}.jsonl"
    summary.records[label] = 0
    with archive.open(member, "w", force_zip64=True) as raw:
        sink = _HashingWriter(raw)
        with io.TextIOWrapper(
            io.BufferedWriter(sink, COPY_BLOCK), encoding="utf-8", newline=""
        ) as text:
            _PortableSerializer().serialize(
                _counted(_rows(model, using), label, progress, summary.records),
                stream=text,
                cls=_ExactEncoder,
            )
    progress(f"  {label}: {_records_text(summary.records[label])}")
    return {
        "model": label,
        "member": member,
        "records": summary.records[label],
        "bytes": sink.size,
        "sha256": sink.sha256.hexdigest(),
    }


def _write_media(archive, storage: Storage, name: str) -> dict:
    """Copy one stored file into the archive; return its manifest entry and SHA-256."""
    member = MEDIA_PREFIX + name
    with storage.open(name, "rb") as source, archive.open(member, "w", force_zip64=True) as raw:
        sink = _HashingWriter(raw)
        size = _copy(source, sink)
    return {"name": name, "member": member, "bytes": size, "sha256": sink.sha256.hexdigest()}


def _copy(source, target) -> int:
    size = 0
    while block := source.read(COPY_BLOCK):
        target.write(block)
        size += len(block)
    return size


def _records_text(count: int) -> str:
    return f"{count} record" if count == 1 else f"{count} records"


def _file_progress(progress: Progress, verbosity: int, done: int, name: str, size: int) -> None:
    if verbosity >= 2:
        progress(f"  {name}: {size} bytes")
    elif done % PROGRESS_FILES == 0:
        progress(f"  {done} files so far")


def _damaged(member: str, exc: Exception) -> ApplicationError:
    return ApplicationError(
        f"The archive member {member} is damaged ({exc}); nothing was restored. "
        "Use another copy of the backup.",
        code="archive_damaged",
        extra={"member": member},
    )


def _refused(member: str, reason: str, code: str = "archive_invalid") -> ApplicationError:
    return ApplicationError(
        f"The archive member {member} is refused: {reason}. Nothing was restored.",
        code=code,
        extra={"member": member},
    )


def _open_archive(path: Path) -> zipfile.ZipFile:
    try:
        return zipfile.ZipFile(path)
    except FileNotFoundError:
        raise ApplicationError(f"There is no file at {path}.", code="archive_missing") from None
    except (zipfile.BadZipFile, OSError) as exc:
        raise ApplicationError(
            f"{path} is not a readable backup archive ({exc}); nothing was restored.",
            code="archive_damaged",
        ) from exc


def _member_cap() -> int:
    return settings.BACKUP_MAX_MEMBER_BYTES


def _size_problem(archive: zipfile.ZipFile, member: str, expected: int | None = None) -> None:
    """Refuse a member larger than the cap, or whose size differs from the manifest's."""
    size = archive.getinfo(member).file_size
    if size > _member_cap():
        raise _refused(
            member,
            f"it unpacks to {size} bytes, over BACKUP_MAX_MEMBER_BYTES ({_member_cap()})",
            code="archive_too_large",
        )
    if expected is not None and size != expected:
        raise _refused(member, f"it unpacks to {size} bytes; the manifest says {expected}")


class _CappedReader(io.RawIOBase):
    """Reads a member, refusing it the moment it yields more bytes than `limit`."""

    def __init__(self, source, member: str, limit: int):
        self.source, self.member, self.limit, self.size = source, member, limit, 0

    def readable(self) -> bool:
        return True

    def readinto(self, buffer) -> int:
        data = self.source.read(len(buffer))
        self.size += len(data)
        if self.size > self.limit:
            raise _refused(self.member, f"it unpacks to more than its {self.limit} bytes")
        buffer[: len(data)] = data
        return len(data)


@contextmanager
def _open_member(archive: zipfile.ZipFile, member: str):
    """A member's stream, held to the size its header declares (itself within the cap)."""
    _size_problem(archive, member)
    with archive.open(member) as raw:
        yield _CappedReader(raw, member, archive.getinfo(member).file_size)


def _member_sha256(archive: zipfile.ZipFile, member: str) -> str:
    digest = hashlib.sha256()
    try:
        with _open_member(archive, member) as stream:
            while block := stream.read(COPY_BLOCK):
                digest.update(block)
    except (zipfile.BadZipFile, zlib.error, EOFError, OSError) as exc:
        raise _damaged(member, exc) from exc
    return digest.hexdigest()


def _read_small(archive: zipfile.ZipFile, member: str) -> bytes:
    try:
        with _open_member(archive, member) as stream:
            return stream.read()
    except KeyError:
        raise ApplicationError(
            f"The archive has no {member}: it is not a backup written by `manage.py backup` "
            f"of this release (format version {FORMAT_VERSION}).",
            code="archive_damaged",
        ) from None
    except (zipfile.BadZipFile, zlib.error, EOFError, OSError) as exc:
        raise _damaged(member, exc) from exc


def _read_sums(archive: zipfile.ZipFile) -> tuple[dict[str, str], bytes]:
    """The sums by member, and the bytes of SHA256SUMS as stored (what the signature covers)."""
    raw = _read_small(archive, SUMS)
    try:
        text = raw.decode()
    except UnicodeDecodeError as exc:
        raise _damaged(SUMS, exc) from exc
    sums = {}
    for line in text.splitlines():
        digest, _, member = line.partition("  ")
        if len(digest) != 64 or not member:
            raise _damaged(SUMS, ValueError(f"unreadable line {line!r}"))
        sums[member] = digest
    return sums, raw


def _check_signature(archive: zipfile.ZipFile, sums_bytes: bytes) -> None:
    """Refuse an archive whose sums were not signed by this shop's RECORD_SIGNING_KEY."""
    signature = _read_small(archive, SIGNATURE).decode(errors="replace").strip()
    problem = record_signature_problem(
        purpose=SIGNING_PURPOSE, message=sums_bytes, signature=signature
    )
    if problem:
        raise ApplicationError(
            f"The archive's {SUMS} is not vouched for: {problem}. It was edited after it was "
            "written, or written by another shop; nothing was restored.",
            code="archive_signature",
            extra={"member": SIGNATURE},
        )


def _name_problem(name: str) -> str | None:
    """Why `name` is not a plain relative path of printable segments, or None."""
    segments = name.split("/")
    if not name or len(name) > MEMBER_NAME_MAX:
        return f"its name is empty or longer than {MEMBER_NAME_MAX} characters"
    if "\\" in name or ":" in name:
        return "its name holds a backslash or a colon"
    if any(not character.isprintable() for character in name):
        return "its name holds a control character"
    if name.startswith("/") or any(part in {"", ".", ".."} for part in segments):
        return "its name is not a plain relative path"
    return None


def backup_verify(
    *, path: Path, using: str = DEFAULT_DB_ALIAS, progress: Progress = _quiet
) -> dict:
    """Run every check a restore runs, without writing anything; return the manifest.

    Refuses, naming the member, what a restore would refuse: a missing or wrong signature, a
    member damaged, altered, missing, unlisted, oversized or oddly named, another schema, and
    any row the API would refuse. Only the references between rows and the emptiness of the
    database wait for the restore itself.
    """
    with _open_archive(Path(path)) as archive:
        manifest, sums = _verified(archive, progress)
        _check_schema(manifest, using)
        rows = 0
        for entry in manifest["models"]:
            model = _model_of(entry)
            rows += sum(1 for _ in _records(archive, entry, sums, model, manifest, using))
        progress(f"Checked all {rows} rows as the API would")
    return manifest


def _verified(archive: zipfile.ZipFile, progress: Progress) -> tuple[dict, dict[str, str]]:
    """The manifest and the sums of a signed archive whose every member matches its sum."""
    names = archive.namelist()
    for name in names:
        problem = _name_problem(name)
        if problem:
            raise _refused(name, problem)
    sums, sums_bytes = _read_sums(archive)
    _check_signature(archive, sums_bytes)
    unlisted = sorted(set(names) - set(sums) - {SUMS, SIGNATURE})
    if unlisted or len(names) != len(set(names)):
        member = unlisted[0] if unlisted else next(n for n in names if names.count(n) > 1)
        raise _damaged(member, ValueError(f"the member is not listed once in {SUMS}"))
    missing = sorted(set(sums) - set(names))
    if missing:
        raise _damaged(missing[0], ValueError(f"{SUMS} lists it but the archive lacks it"))
    for member in sums:
        _size_problem(archive, member)
    for count, member in enumerate(sorted(sums), start=1):
        if _member_sha256(archive, member) != sums[member]:
            raise _damaged(member, ValueError(f"its SHA-256 differs from {SUMS}"))
        if count % PROGRESS_FILES == 0:
            progress(f"  checked {count} of {len(sums)} members")
    progress(f"Checked the signature and the SHA-256 of all {len(sums)} members")
    try:
        manifest = json.loads(_read_small(archive, MANIFEST))
        _check_manifest(manifest, sums)
    except (KeyError, TypeError, AttributeError, ValueError) as exc:
        raise _damaged(MANIFEST, exc) from exc
    for entry in manifest["models"] + manifest["media"]:
        _size_problem(archive, entry["member"], entry["bytes"])
    return manifest, sums


def _check_manifest(manifest: dict, sums: dict[str, str]) -> None:
    """Refuse another format, a manifest that does not account for exactly the members, models
    that no archive carries, and an archive dated in the future."""
    if manifest.get("format") != FORMAT or manifest.get("version") != FORMAT_VERSION:
        raise ApplicationError(
            f"The archive is format {manifest.get('format')!r} version "
            f"{manifest.get('version')!r}; this service reads {FORMAT!r} version "
            f"{FORMAT_VERSION}.",
            code="archive_format",
        )
    listed = [entry["member"] for entry in manifest["models"] + manifest["media"]]
    if sorted([*listed, MANIFEST]) != sorted(sums):
        raise ValueError(f"it does not list exactly the members in {SUMS}")
    for entry in manifest["media"]:
        if entry["member"] != MEDIA_PREFIX + entry["name"]:
            raise ValueError(f"{entry['member']} does not name a plain relative path")
        int(entry["bytes"])
    for entry in manifest["models"]:
        int(entry["records"])
        int(entry["bytes"])
        if _kept_out(entry["model"]):
            raise _refused(
                entry["member"],
                f"it holds {entry['model']} rows: sign-in secrets and records no backup carries",
            )
    dict(manifest["migrations"])
    if _written_at(manifest) > datetime.now(UTC) + CLOCK_SKEW:
        raise ValueError(f"it says it was written at {manifest['created_at']}, in the future")


def _written_at(manifest: dict) -> datetime:
    written = datetime.fromisoformat(manifest["created_at"])
    if written.tzinfo is None:
        raise ValueError("its created_at carries no time zone")
    return written


def _check_schema(manifest: dict, using: str) -> None:
    ours = {(app, name) for app, names in applied_migrations(using).items() for name in names}
    theirs = {(app, name) for app, names in manifest["migrations"].items() for name in names}
    if ours != theirs:
        lacking = sorted(f"{a}.{n}" for a, n in theirs - ours)
        extra = sorted(f"{a}.{n}" for a, n in ours - theirs)
        raise ApplicationError(
            "The database's migrations differ from the archive's "
            f"(the database lacks {lacking or 'none'}; it has besides {extra or 'none'}). "
            "Restore with the release that wrote the archive, then migrate.",
            code="schema_mismatch",
        )


def _check_empty(models: list[type[Model]], using: str) -> None:
    occupied = [
        f"{model._meta.label_lower} ({_records_text(model._base_manager.using(using).count())})"
        for model in models
        if model._meta.label_lower not in SEEDED_BY_MIGRATIONS
        and model._base_manager.using(using).exists()
    ]
    if occupied:
        raise ApplicationError(
            "The database already holds records: "
            + ", ".join(occupied)
            + ". Restore only into an empty database (a new one, migrated and nothing else).",
            code="database_not_empty",
        )


def _files_to_write(manifest: dict, archive: zipfile.ZipFile, storage: Storage) -> list[dict]:
    """The media entries to write; a file already stored with the same content is skipped."""
    wanted = []
    for entry in manifest["media"]:
        if not storage.exists(entry["name"]):
            wanted.append(entry)
            continue
        with storage.open(entry["name"], "rb") as present:
            digest = hashlib.sha256()
            while block := present.read(COPY_BLOCK):
                digest.update(block)
        if digest.hexdigest() != _member_sha256(archive, entry["member"]):
            raise ApplicationError(
                f"The media storage already holds a different {entry['name']}; restore into "
                "empty media storage (nothing was restored).",
                code="media_not_empty",
            )
    return wanted


def _model_of(entry: dict) -> type[Model]:
    try:
        return apps.get_model(entry["model"])
    except (LookupError, ValueError):
        raise ApplicationError(
            f"The archive holds records of {entry['model']}, which this release does not have.",
            code="schema_mismatch",
        ) from None


def _lines(stream, member: str):
    """The member's lines, refusing one longer than BACKUP_MAX_ROW_BYTES before it is read."""
    limit = settings.BACKUP_MAX_ROW_BYTES
    while line := stream.readline(limit + 1):
        if len(line) > limit:
            raise _refused(member, f"one of its rows is longer than BACKUP_MAX_ROW_BYTES ({limit})")
        yield line


def _row_problem(obj: Model, not_after: datetime) -> str | None:
    """Why the API would refuse this row (field limits, choices, validators, dates), or None.

    References are left to the database's own checks at restore, which see every row.
    """
    fields = obj._meta.concrete_fields
    try:
        obj.clean_fields(exclude=[f.name for f in fields if f.is_relation])
    except ValidationError as exc:
        return "; ".join(
            f"{name}: {' '.join(messages)}" for name, messages in exc.message_dict.items()
        )
    for f in fields:
        value = getattr(obj, f.attname)
        # Model validation leaves a TextField's max_length to forms; the API holds to it.
        if isinstance(value, str) and f.max_length and len(value) > f.max_length:
            return f"{f.name}: Ensure this value has at most {f.max_length} characters"
        if isinstance(value, datetime) and value > not_after:
            return f"{f.name}: {value.isoformat()} is after the archive was written"
    return None


def _records(archive, entry: dict, sums: dict, model: type[Model], manifest: dict, using: str):
    """Every row of one member, deserialized and checked as the API would check it."""
    member, label = entry["member"], entry["model"]
    not_after = _written_at(manifest) + CLOCK_SKEW
    seen: set = set()
    with _open_member(archive, member) as capped:
        reader = _HashingReader(capped)
        stream = io.TextIOWrapper(io.BufferedReader(reader, COPY_BLOCK), encoding="utf-8")
        count = 0
        try:
            for item in serializers.deserialize("jsonl", _lines(stream, member), using=using):
                obj = item.object
                if type(obj) is not model:
                    raise DeserializationError(
                        f"it holds a {obj._meta.label_lower} row among {label} rows"
                    )
                if obj.pk in seen:
                    raise _refused(member, f"it holds the {label} id {obj.pk} twice")
                seen.add(obj.pk)
                problem = _row_problem(obj, not_after)
                if problem:
                    raise _refused(member, f"{label} row {obj.pk}: {problem}")
                count += 1
                yield item
        except (DeserializationError, UnicodeDecodeError) as exc:
            raise _refused(member, f"could not read it ({exc})") from exc
    if reader.sha256.hexdigest() != sums[member] or count != entry["records"]:
        raise _damaged(member, ValueError("it changed while being read"))


def _load_model(archive, entry: dict, sums: dict, manifest: dict, using: str, progress):
    label = entry["model"]
    model = _model_of(entry)
    count = 0
    try:
        for item in _records(archive, entry, sums, model, manifest, using):
            # Raw insert through Model.save_base: append-only models refuse save() on
            # existing rows, but a restore only ever adds new ones.
            item.save(using=using, force_insert=True)
            count += 1
            if count % PROGRESS_ROWS == 0:
                progress(f"  {label}: {count} of {entry['records']} records")
    except DatabaseError as exc:
        raise ApplicationError(
            f"Could not load {entry['member']}: {exc}. Nothing was restored.",
            code="archive_invalid",
        ) from exc
    progress(f"  {label}: {_records_text(count)}")
    return model


def _write_file(archive, entry: dict, sums: dict, storage: Storage) -> None:
    with tempfile.TemporaryFile() as spool:
        with _open_member(archive, entry["member"]) as raw:
            sink = _HashingWriter(spool)
            _copy(raw, sink)
        if sink.sha256.hexdigest() != sums[entry["member"]] or sink.size != entry["bytes"]:
            raise _damaged(entry["member"], ValueError("it changed while being restored"))
        spool.seek(0)
        stored = storage.save(entry["name"], File(spool))
    if stored != entry["name"]:
        storage.delete(stored)
        raise ApplicationError(
            f"The media storage saved {entry['name']} as {stored}; nothing was restored.",
            code="media_not_empty",
        )


def backup_restore(
    *,
    path: Path,
    using: str = DEFAULT_DB_ALIAS,
    storage: Storage | None = None,
    progress: Progress = _quiet,
    verbosity: int = 1,
) -> BackupSummary:
    """Bring an archive back into an empty database and media storage, all or nothing.

    Every member's SHA-256 is checked before anything is written; the database must hold no
    records except the role groups a fresh `migrate` creates, which the archive's replace.
    """
    storage = storage or default_storage
    summary = BackupSummary(path=Path(path))
    connection = connections[using]
    with _open_archive(Path(path)) as archive:
        _check_empty(backed_up_models(using), using)
        manifest, sums = _verified(archive, progress)
        _check_schema(manifest, using)
        files = _files_to_write(manifest, archive, storage)
        summary.files_already_present = len(manifest["media"]) - len(files)
        written: list[str] = []
        try:
            with transaction.atomic(using=using):
                for label in SEEDED_BY_MIGRATIONS:
                    apps.get_model(label)._base_manager.using(using).all().delete()
                loaded = []
                for entry in manifest["models"]:
                    loaded.append(_load_model(archive, entry, sums, manifest, using, progress))
                    summary.records[entry["model"]] = entry["records"]
                with connection.cursor() as cursor:
                    for sql in connection.ops.sequence_reset_sql(no_style(), loaded):
                        cursor.execute(sql)
                try:
                    connection.check_constraints(table_names=[m._meta.db_table for m in loaded])
                except DatabaseError as exc:
                    raise ApplicationError(
                        f"The archive's records refer to records it lacks ({exc}); "
                        "nothing was restored.",
                        code="archive_invalid",
                    ) from exc
                progress(
                    f"Database: {_records_text(summary.total_records)} in {len(loaded)} models"
                )
                for entry in files:
                    _write_file(archive, entry, sums, storage)
                    written.append(entry["name"])
                    summary.files += 1
                    summary.file_bytes += entry["bytes"]
                    _file_progress(
                        progress, verbosity, summary.files, entry["name"], entry["bytes"]
                    )
                progress(
                    f"Media: {summary.files} files written, "
                    f"{summary.files_already_present} already present"
                )
        except BaseException:
            for name in written:
                storage.delete(name)
            raise
    return summary
