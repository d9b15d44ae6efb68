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
from shop.intake.models import Customer, Job, JobState

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
                self.finish_moves(
                    after_bench,
                    desk=self.staff_in("front_desk", data, staff),
                    lead=self.staff_in("lead", data, staff),
                )
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

    def move(self, job: Job, target: str, entry: dict, *, desk, lead) -> Job:
        """One move of the demo route; the desk records the customer's answer to the estimate."""
        answered = entry.get("answered", "phone")
        if job.state == JobState.AWAITING_APPROVAL and target == JobState.REPAIRING:
            return services.job_approve(job=job, actor=desk, method=answered)
        if job.state == JobState.AWAITING_APPROVAL and target == JobState.DECLINED:
            return services.job_decline(job=job, actor=desk, method=answered)
        if target == JobState.ON_HOLD:
            hold = entry["hold"]
            return services.job_transition(
                job=job, to_state=target, actor=desk, hold_reason=hold["reason"], note=hold["note"]
            )
        ready_override = entry.get("ready_override", "") if target == JobState.READY else ""
        return services.job_transition(
            job=job, to_state=target, actor=lead, ready_override=ready_override
        )

    def load_records(self, data: dict, staff: dict[str, User]) -> dict:
        lead = self.staff_in("lead", data, staff)
        desk = self.staff_in("front_desk", data, staff)
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
                condition_at_intake=entry.get("condition_at_intake", ""),
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
                job = self.move(job, target, entry, desk=desk, lead=lead)
            if route[cut:]:
                after_bench.append((job, route[cut:], entry))
        return units, after_bench

    @staticmethod
    def staff_in(role: str, data: dict, staff: dict[str, User]) -> User:
        return next(staff[p["username"]] for p in data["staff"] if p["role"] == role)

    def finish_moves(self, after_bench: list, *, desk: User, lead: User) -> None:
        """The moves from testing on, once the jobs' power-up tests are closed."""
        for job, route, entry in after_bench:
            job.refresh_from_db()
            for target in route:
                job = self.move(job, target, entry, desk=desk, lead=lead)
