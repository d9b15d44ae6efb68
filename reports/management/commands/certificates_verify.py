"""Re-hash and check the signature of every issued certificate; report any mismatch."""

from django.core.management.base import BaseCommand, CommandError

from reports.selectors import certificate_list, certificate_problem

PROGRESS_EVERY = 500


class Command(BaseCommand):
    help = (
        "Re-hash every certificate snapshot and stored PDF and check its signature "
        "(RECORD_SIGNING_KEY); exits non-zero on any mismatch."
    )

    def handle(self, *args, **options):
        bad, total = [], 0
        for total, certificate in enumerate(certificate_list().iterator(chunk_size=200), 1):
            problem = certificate_problem(certificate)
            if problem:
                bad.append((certificate.number, problem))
            if total % PROGRESS_EVERY == 0:
                self.stdout.write(f"  checked {total} certificates")
        if bad:
            for number, problem in bad:
                self.stderr.write(f"MISMATCH {number}: {problem}")
            raise CommandError(
                f"{len(bad)} of {total} certificates no longer match their hash and signature."
            )
        self.stdout.write(
            self.style.SUCCESS(f"All {total} certificates match their hash and signature.")
        )
