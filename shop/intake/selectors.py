"""Reads for intake records, shaped so that list and detail pages cost a fixed number of queries."""

from __future__ import annotations

from django.db.models import QuerySet

from .models import Customer, Evidence, Job, JobMove, RepairStep, Unit


def customer_list() -> QuerySet[Customer]:
    return Customer.objects.all()


def unit_list() -> QuerySet[Unit]:
    return Unit.objects.select_related("owner")


def job_list() -> QuerySet[Job]:
    # The technician's password hash has no business in a job page: never read it.
    return Job.objects.select_related("unit", "unit__owner", "assigned_technician").defer(
        "assigned_technician__password"
    )


def job_moves(*, job: Job) -> QuerySet[JobMove]:
    return JobMove.objects.filter(job=job).select_related("moved_by")


def repair_step_list() -> QuerySet[RepairStep]:
    return RepairStep.objects.select_related("job", "technician")


def evidence_list() -> QuerySet[Evidence]:
    return Evidence.objects.select_related("job", "uploaded_by")
