"""The condition a unit came in with belongs to the job it came in for, not to the unit.

Each unit's former condition notes go to every job of that unit (the record cannot tell which
intake wrote them), and an audit event per unit keeps the text with the move, so nothing is
lost even for a unit without a job.
"""

import hashlib
import json

from django.db import migrations, models

MOVED_NOTE = "(moved from the unit record) "


def notes_to_jobs(apps, schema_editor):
    Unit = apps.get_model("intake", "Unit")
    Job = apps.get_model("intake", "Job")
    AuditEvent = apps.get_model("core", "AuditEvent")
    for unit in Unit.objects.exclude(condition_notes="").order_by("pk").iterator():
        jobs = list(Job.objects.filter(unit=unit).order_by("pk").values_list("pk", flat=True))
        Job.objects.filter(pk__in=jobs).update(
            condition_at_intake=(MOVED_NOTE + unit.condition_notes)[:4000]
        )
        changes = {"condition_notes": unit.condition_notes, "to_jobs": jobs}
        canonical = json.dumps(changes, sort_keys=True, separators=(",", ":"))
        AuditEvent.objects.create(
            actor=None,
            action="unit.condition_moved_to_jobs",
            object_type="intake.unit",
            object_id=str(unit.pk),
            object_repr=" ".join(p for p in (unit.maker, unit.model_name, unit.serial) if p)[:200],
            changes=changes,
            digest=hashlib.sha256(canonical.encode()).hexdigest(),
        )


def notes_to_units(apps, schema_editor):
    Unit = apps.get_model("intake", "Unit")
    Job = apps.get_model("intake", "Job")
    for job in Job.objects.exclude(condition_at_intake="").order_by("unit_id", "-pk").iterator():
        text = job.condition_at_intake.removeprefix(MOVED_NOTE)
        Unit.objects.filter(pk=job.unit_id).update(condition_notes=text)


class Migration(migrations.Migration):
    dependencies = [
        ("intake", "0003_evidence_step_and_caption"),
        ("core", "0002_audit_event"),
    ]

    operations = [
        migrations.AddField(
            model_name="job",
            name="condition_at_intake",
            field=models.TextField(
                blank=True,
                help_text="The unit's condition as it came in for this job.",
                max_length=4000,
            ),
        ),
        migrations.RunPython(notes_to_jobs, notes_to_units),
        migrations.RemoveField(model_name="unit", name="condition_notes"),
    ]
