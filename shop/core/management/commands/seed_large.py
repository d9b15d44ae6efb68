"""Seed a large invented shop (bulk, every record valid) for the load and backup benchmarks."""

from __future__ import annotations

import time

from django.core.management.base import BaseCommand, CommandError

from shop.core.seeding import seed_large_shop

DEFAULT_JOBS = 10_000
DEFAULT_READINGS = 200_000
DEFAULT_CERTIFICATES = 2_000


class Command(BaseCommand):
    help = (
        "Seed a large invented shop into a database not seeded before: jobs with customers, "
        "units, moves and repair steps; closed power-up tests with readings and verdicts; "
        "certificates. "
        "Bulk inserts, one transaction; the bulk records carry one summary audit event."
    )

    def add_arguments(self, parser):
        parser.add_argument("--jobs", type=int, default=DEFAULT_JOBS)
        parser.add_argument(
            "--readings", type=int, default=DEFAULT_READINGS, help="a multiple of 10"
        )
        parser.add_argument("--certificates", type=int, default=DEFAULT_CERTIFICATES)
        parser.add_argument(
            "--seed", type=int, default=7, help="random seed (same seed, same shop)"
        )

    def handle(self, *args, **options):
        started = time.perf_counter()
        quiet = options["verbosity"] < 1
        try:
            counts = seed_large_shop(
                jobs=options["jobs"],
                readings=options["readings"],
                certificates=options["certificates"],
                seed=options["seed"],
                progress=(lambda message: None) if quiet else self.stdout.write,
            )
        except ValueError as exc:
            raise CommandError(str(exc)) from exc
        seconds = time.perf_counter() - started
        self.stdout.write(
            "Seeded "
            + ", ".join(f"{count} {label}" for label, count in sorted(counts.items()))
            + f" in {seconds:.1f} s."
        )
