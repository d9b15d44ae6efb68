"""Re-hash every issued certificate (snapshot and stored PDF) and report any mismatch."""

from django.core.management.base import BaseCommand, CommandError

from reports.selectors import certificate_intact, certificate_list

PROGRESS_EVERY = 500


class Command(BaseCommand):
    help = "Re-hash every certificate snapshot and stored PDF; exits non-zero on any mismatch."

    def handle(self, *args, **options):
        bad, total = [], 0
        for total, certificate in enumerate(certificate_list().iterator(chunk_size=200), 1):
            if not certificate_intact(certificate):
                bad.append(certificate.number)
            if total % PROGRESS_EVERY == 0:
                self.stdout.write(f"  checked {total} certificates")
        if bad:
            for number in bad:
                self.stderr.write(
                    f"MISMATCH {number}: its snapshot or stored PDF changed after issue"
                )
            raise CommandError(f"{len(bad)} of {total} certificates no longer match their hash.")
        self.stdout.write(self.style.SUCCESS(f"All {total} certificates match their hash."))
