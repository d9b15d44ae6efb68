"""Write one backup archive: every record and every media file, with their SHA-256 sums."""

from __future__ import annotations

import hashlib
from datetime import UTC, datetime
from pathlib import Path

from django.conf import settings
from django.core.management.base import BaseCommand, CommandError
from django.db import DEFAULT_DB_ALIAS

from shop.core.backup import COPY_BLOCK, backup_create
from shop.core.errors import ApplicationError

DEFAULT_FOLDER = Path(settings.DATA_DIR) / "backups"


class Command(BaseCommand):
    help = (
        "Write the database (JSON Lines per model) and every media file into one zip archive "
        "with a SHA-256 sum of every member. Restore it with `manage.py restore ARCHIVE`."
    )

    def add_arguments(self, parser):
        parser.add_argument(
            "--output",
            "-o",
            type=Path,
            help=f"archive to write (default: {DEFAULT_FOLDER}/shop-<UTC time>.zip); never "
            "overwritten",
        )
        parser.add_argument("--database", default=DEFAULT_DB_ALIAS, help="database alias")

    def handle(self, *args, **options):
        path = options["output"] or DEFAULT_FOLDER / (
            f"shop-{datetime.now(UTC):%Y%m%dT%H%M%SZ}.zip"
        )
        self.stdout.write(f"Backing up to {path}")
        try:
            summary = backup_create(
                path=path,
                using=options["database"],
                progress=self.stdout.write,
                verbosity=options["verbosity"],
            )
        except ApplicationError as exc:
            raise CommandError(exc.message) from exc
        digest = hashlib.sha256()
        with path.open("rb") as archive:
            while block := archive.read(COPY_BLOCK):
                digest.update(block)
        self.stdout.write(
            self.style.SUCCESS(
                f"Wrote {path}: {summary.total_records} records in {len(summary.records)} "
                f"models, {summary.files} media files, {path.stat().st_size} bytes; "
                f"archive SHA-256 {digest.hexdigest()}"
            )
        )
