"""Load the invented demo shop: staff in every role, customers, units and jobs in every state."""

from __future__ import annotations

import json
from datetime import timedelta
from pathlib import Path

from django.conf import settings
from django.contrib.auth.models import Group, User
from django.core.management.base import BaseCommand
from django.db import transaction
from django.utils import timezone

from reports.selectors import stored_pdf
from reports.services import CERTIFIABLE_STATES, certificate_issue
from reports.snapshot import verification_url
from shop.bench.demo import load_demo_bench
from shop.intake import services
from shop.intake.models import Customer, Job

DEMO_DIR = Path(settings.BASE_DIR) / "fixtures" / "demo"
# Local demo only: every demo account shares this password, printed at load time.
DEMO_PASSWORD = "bench-demo-2026"
SAMPLE_DIR = Path(settings.DATA_DIR) / "samples"


class Command(BaseCommand):
    help = "Load the invented demo shop from fixtures/demo/ (skipped when records already exist)."

    def handle(self, *args, **options):
        data = json.loads((DEMO_DIR / "intake.json").read_text())
        staff = self.load_staff(data["staff"])
        if Customer.objects.exists():
            self.stdout.write("Demo records already present; staff accounts refreshed only.")
        else:
            bench = json.loads((DEMO_DIR / "bench.json").read_text())
            with transaction.atomic():
                units, after_bench = self.load_records(data, staff)
                tests = load_demo_bench(bench, staff, units)
                self.finish_moves(after_bench, lead=self.lead_of(data, staff))
            self.stdout.write(
                f"Loaded {len(data['customers'])} customers, {len(data['units'])} units, "
                f"{len(data['jobs'])} jobs, {len(bench['rigs'])} rigs and "
                f"{len(tests)} closed power-up tests:"
            )
            self.stdout.write("\n".join(tests))
            self.write_sample_certificate(staff)
        self.stdout.write("Demo staff (local use only):")
        for person in data["staff"]:
            self.stdout.write(
                f"  {person['username']:<6} {person['role']:<11} password: {DEMO_PASSWORD}"
            )

    def write_sample_certificate(self, staff: dict[str, User]) -> None:
        """Issue a certificate for the first certifiable demo job and write its PDF."""
        lead = next(user for user in staff.values() if user.groups.filter(name="lead").exists())
        job = (
            Job.objects.filter(state__in=CERTIFIABLE_STATES, powerups__status="closed")
            .order_by("number")
            .first()
        )
        certificate = certificate_issue(job=job, issued_by=lead)
        SAMPLE_DIR.mkdir(parents=True, exist_ok=True)
        path = SAMPLE_DIR / f"certificate-{certificate.number}.pdf"
        path.write_bytes(stored_pdf(certificate))
        self.stdout.write(f"Sample certificate {certificate.number} for job {job.number}: {path}")
        self.stdout.write(
            f"  verify at {verification_url(certificate.number, certificate.verification_code)}"
        )

    def load_staff(self, people: list[dict]) -> dict[str, User]:
        staff = {}
        for person in people:
            user, _ = User.objects.get_or_create(username=person["username"])
            user.first_name, user.last_name = person["first_name"], person["last_name"]
            user.is_staff = person["role"] == "lead"
            user.set_password(DEMO_PASSWORD)
            user.save()
            user.groups.set([Group.objects.get_or_create(name=person["role"])[0]])
            staff[person["username"]] = user
        return staff

    def load_records(self, data: dict, staff: dict[str, User]) -> dict:
        lead = self.lead_of(data, staff)
        desk = next(staff[p["username"]] for p in data["staff"] if p["role"] == "front_desk")
        customers = {}
        for entry in data["customers"]:
            fields = {k: v for k, v in entry.items() if k != "key"}
            customers[entry["key"]] = services.customer_create(actor=desk, **fields)
        units = {}
        for entry in data["units"]:
            fields = {k: v for k, v in entry.items() if k not in {"key", "owner"}}
            units[entry["key"]] = services.unit_create(
                actor=desk, owner=customers[entry["owner"]], **fields
            )
        today = timezone.localdate()
        after_bench = []
        for entry in data["jobs"]:
            job = services.job_create(
                actor=desk,
                unit=units[entry["unit"]],
                complaint=entry["complaint"],
                received_on=today - timedelta(days=entry["days_ago"]),
                assigned_technician=staff.get(entry.get("technician")),
                estimate=entry.get("estimate"),
            )
            for step in entry["steps"]:
                services.repair_step_add(
                    job=job,
                    technician=staff[step["by"]],
                    action=step["action"],
                    minutes=step["minutes"],
                    parts=step.get("parts", []),
                )
            route = entry["route"]
            # Ready comes after the bench: the readiness gate reads the job's tests.
            cut = route.index("ready") if "ready" in route else len(route)
            for target in route[:cut]:
                job = services.job_transition(
                    job=job, to_state=target, actor=lead, approved_by="Customer, by phone"
                )
            if route[cut:]:
                after_bench.append((job, route[cut:], entry.get("ready_override", "")))
        return units, after_bench

    @staticmethod
    def lead_of(data: dict, staff: dict[str, User]) -> User:
        return next(staff[p["username"]] for p in data["staff"] if p["role"] == "lead")

    @staticmethod
    def finish_moves(after_bench: list, *, lead: User) -> None:
        """The moves from testing on, once the jobs' power-up tests are closed."""
        for job, route, ready_override in after_bench:
            job.refresh_from_db()
            for target in route:
                job = services.job_transition(
                    job=job, to_state=target, actor=lead, ready_override=ready_override
                )
