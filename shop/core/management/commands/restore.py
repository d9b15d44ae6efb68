"""Bring a backup archive back into an empty database and media storage, all or nothing."""

from __future__ import annotations

from pathlib import Path

from django.core.management.base import BaseCommand, CommandError
from django.db import DEFAULT_DB_ALIAS

from shop.core.backup import backup_restore, backup_verify
from shop.core.errors import ApplicationError


class Command(BaseCommand):
    help = (
        "Restore an archive written by `manage.py backup` into an empty, migrated database. "
        "Its signature and every member's SHA-256 are checked before anything is loaded."
    )

    def add_arguments(self, parser):
        parser.add_argument("archive", type=Path, help="the .zip written by `manage.py backup`")
        parser.add_argument(
            "--verify-only",
            action="store_true",
            help="run every check a restore runs (signature, SHA-256, sizes, names, schema, "
            "each row) and stop without writing anything",
        )
        parser.add_argument("--database", default=DEFAULT_DB_ALIAS, help="database alias")

    def handle(self, *args, **options):
        path = options["archive"]
        try:
            if options["verify_only"]:
                manifest = backup_verify(
                    path=path, using=options["database"], progress=self.stdout.write
                )
                self.stdout.write(
                    self.style.SUCCESS(
                        f"{path} is intact: {len(manifest['models'])} models, "
                        f"{len(manifest['media'])} media files, written {manifest['created_at']}"
                    )
                )
                return
            summary = backup_restore(
                path=path,
                using=options["database"],
                progress=self.stdout.write,
                verbosity=options["verbosity"],
            )
        except ApplicationError as exc:
            raise CommandError(exc.message) from exc
        self.stdout.write(
            self.style.SUCCESS(
                f"Restored {path}: {summary.total_records} records in {len(summary.records)} "
                f"models, {summary.files} media files written "
                f"({summary.files_already_present} already present)"
            )
        )
