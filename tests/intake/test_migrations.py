"""Data migrations: approvals become records; a unit's condition notes move to its jobs."""

from __future__ import annotations

from decimal import Decimal

import pytest
from django.db import connection
from django.db.migrations.executor import MigrationExecutor
from django.utils import timezone


def migrate_to(targets):
    """Migrate the test database to `targets` (None: the latest); the apps as they were there."""
    executor = MigrationExecutor(connection)
    targets = targets or executor.loader.graph.leaf_nodes()
    executor.migrate(targets)
    return executor.loader.project_state(targets).apps


BEFORE = [("intake", "0001_initial"), ("core", "0002_audit_event"), ("bench", "0001_initial")]
AFTER = [("intake", "0002_customer_decisions_and_hold_reasons")]


@pytest.mark.django_db(transaction=True)
def test_an_approved_job_keeps_its_approval_as_a_record():
    old = migrate_to(BEFORE)
    user = old.get_model("auth", "User").objects.create(username="lead_old")
    owner = old.get_model("intake", "Customer").objects.create(name="Orla")
    unit = old.get_model("intake", "Unit").objects.create(
        owner=owner, category="radio", maker="Brightwave", rated_voltage=120, rated_power=60
    )
    Job = old.get_model("intake", "Job")
    approved_at = timezone.now()
    approved = Job.objects.create(
        number="2026-0001",
        unit=unit,
        complaint="Hum.",
        estimate=Decimal("80.00"),
        approved_by="Orla, by phone",
        approved_at=approved_at,
        state="repairing",
    )
    old.get_model("intake", "JobMove").objects.create(
        job=approved, from_state="awaiting_approval", to_state="repairing", moved_by=user
    )
    unapproved = Job.objects.create(number="2026-0002", unit=unit, complaint="Dead.")

    new = migrate_to(AFTER)
    Job = new.get_model("intake", "Job")
    job = Job.objects.get(pk=approved.pk)
    record = new.get_model("intake", "CustomerDecision").objects.get(pk=job.approval_id)
    assert (record.decision, record.method, record.customer_name) == (
        "approved",
        "not_recorded",
        "Orla, by phone",
    )
    assert (record.estimate, record.recorded_by_id, record.decided_at) == (
        Decimal("80.00"),
        user.pk,
        approved_at,
    )
    assert Job.objects.get(pk=unapproved.pk).approval_id is None

    # And back: the text returns to the job.
    old = migrate_to(BEFORE)
    restored = old.get_model("intake", "Job").objects.get(pk=approved.pk)
    assert (restored.approved_by, restored.approved_at) == ("Orla, by phone", approved_at)
    migrate_to(None)


CONDITION_BEFORE = [("intake", "0003_evidence_step_and_caption")]
CONDITION_AFTER = [("intake", "0004_condition_at_intake_on_the_job")]


@pytest.mark.django_db(transaction=True)
def test_a_units_condition_notes_move_to_its_jobs_and_the_audit_trail():
    old = migrate_to(CONDITION_BEFORE)
    owner = old.get_model("intake", "Customer").objects.create(name="Orla")
    Unit = old.get_model("intake", "Unit")
    fields = {"owner": owner, "category": "radio", "rated_voltage": 120, "rated_power": 60}
    worn = Unit.objects.create(maker="Brightwave", condition_notes="Dial glass cracked.", **fields)
    lonely = Unit.objects.create(maker="Lonely", condition_notes="No job yet.", **fields)
    Job = old.get_model("intake", "Job")
    first = Job.objects.create(number="2026-0001", unit=worn, complaint="Hum.")
    second = Job.objects.create(number="2026-0002", unit=worn, complaint="Hum again.")

    new = migrate_to(CONDITION_AFTER)
    Job = new.get_model("intake", "Job")
    for job in (first, second):
        assert Job.objects.get(pk=job.pk).condition_at_intake == (
            "(moved from the unit record) Dial glass cracked."
        )
    AuditEvent = new.get_model("core", "AuditEvent")
    kept = AuditEvent.objects.get(object_type="intake.unit", object_id=str(lonely.pk))
    assert kept.changes == {"condition_notes": "No job yet.", "to_jobs": []}
    migrate_to(None)
