"""Re-hash and check the signature of every issued certificate, report any mismatch, and list
stored files that no record points at."""

from django.core.management.base import BaseCommand, CommandError

from reports.selectors import certificate_list, certificate_problem, orphan_stored_files

PROGRESS_EVERY = 500


class Command(BaseCommand):
    help = (
        "Re-hash every certificate snapshot and stored PDF, check its signature "
        "(RECORD_SIGNING_KEY) and list stored files no record points at; exits non-zero on "
        "any mismatch or orphan."
    )

    def handle(self, *args, **options):
        bad, total = [], 0
        for total, certificate in enumerate(certificate_list().iterator(chunk_size=200), 1):
            problem = certificate_problem(certificate)
            if problem:
                bad.append((certificate.number, problem))
            if total % PROGRESS_EVERY == 0:
                self.stdout.write(f"  checked {total} certificates")
        for number, problem in bad:
            self.stderr.write(f"MISMATCH {number}: {problem}")
        orphans = orphan_stored_files()
        for name in orphans:
            self.stderr.write(
                f"ORPHAN {name}: no record points at it (a write that did not commit); "
                "check it, then delete it"
            )
        if bad or orphans:
            raise CommandError(
                f"{len(bad)} of {total} certificates no longer match their hash and signature; "
                f"{len(orphans)} stored files belong to no record."
            )
        self.stdout.write(
            self.style.SUCCESS(
                f"All {total} certificates match their hash and signature; no orphan files."
            )
        )
