"""Re-hash every issued certificate (snapshot and stored PDF), report any mismatch, and list
stored files that no record points at."""

from django.core.management.base import BaseCommand, CommandError

from reports.selectors import certificate_intact, certificate_list, orphan_stored_files

PROGRESS_EVERY = 500


class Command(BaseCommand):
    help = (
        "Re-hash every certificate snapshot and stored PDF and list stored files no record "
        "points at; exits non-zero on any mismatch or orphan."
    )

    def handle(self, *args, **options):
        bad, total = [], 0
        for total, certificate in enumerate(certificate_list().iterator(chunk_size=200), 1):
            if not certificate_intact(certificate):
                bad.append(certificate.number)
            if total % PROGRESS_EVERY == 0:
                self.stdout.write(f"  checked {total} certificates")
        for number in bad:
            self.stderr.write(f"MISMATCH {number}: its snapshot or stored PDF changed after issue")
        orphans = orphan_stored_files()
        for name in orphans:
            self.stderr.write(
                f"ORPHAN {name}: no record points at it (a write that did not commit); "
                "check it, then delete it"
            )
        if bad or orphans:
            raise CommandError(
                f"{len(bad)} of {total} certificates no longer match their hash; "
                f"{len(orphans)} stored files belong to no record."
            )
        self.stdout.write(
            self.style.SUCCESS(f"All {total} certificates match their hash; no orphan files.")
        )
