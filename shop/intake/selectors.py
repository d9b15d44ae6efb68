"""Reads for intake records, shaped so that list and detail pages cost a fixed number of queries."""

from __future__ import annotations

from django.db.models import OuterRef, QuerySet, Subquery

from shop.bench.models import PowerUpTest, TestStatus

from .models import Customer, Evidence, Job, JobMove, RepairStep, Unit


def customer_list() -> QuerySet[Customer]:
    return Customer.objects.all()


def unit_list() -> QuerySet[Unit]:
    return Unit.objects.select_related("owner")


def _digits(phone: str) -> str:
    return "".join(ch for ch in phone if ch.isdigit())


def customer_duplicates(*, name: str, phone: str, exclude: int | None = None) -> list[Customer]:
    """Customers of the same name (any case) and phone number (digits alone compared)."""
    digits = _digits(phone or "")
    if not digits or not name.strip():
        return []
    same_name = Customer.objects.filter(name__iexact=name.strip()).exclude(pk=exclude)
    return [c for c in same_name.order_by("pk") if _digits(c.phone) == digits]


def unit_duplicates(*, maker: str, serial: str, exclude: int | None = None) -> list[Unit]:
    """Units of the same maker and serial number (any case)."""
    if not serial.strip():
        return []
    return list(
        unit_list()
        .filter(maker__iexact=maker.strip(), serial__iexact=serial.strip())
        .exclude(pk=exclude)
        .order_by("pk")
    )


def job_list() -> QuerySet[Job]:
    """Jobs with their unit, the customer's approval, and the latest closed test and its
    outcome as two annotations."""
    latest = PowerUpTest.objects.filter(job=OuterRef("pk"), status=TestStatus.CLOSED).order_by(
        "-closed_at", "-id"
    )
    # Staff password hashes have no business in a job page: never read them.
    return (
        Job.objects.select_related(
            "unit",
            "unit__owner",
            "assigned_technician",
            "ready_override_by",
            "approval",
            "approval__recorded_by",
        )
        .defer(
            "assigned_technician__password",
            "ready_override_by__password",
            "approval__recorded_by__password",
        )
        .annotate(
            latest_test_id=Subquery(latest.values("pk")[:1]),
            latest_outcome=Subquery(latest.values("verdict__outcome")[:1]),
        )
    )


def job_moves(*, job: Job) -> QuerySet[JobMove]:
    return JobMove.objects.filter(job=job).select_related("moved_by")


def repair_step_list() -> QuerySet[RepairStep]:
    return RepairStep.objects.select_related("job", "technician")


def evidence_list() -> QuerySet[Evidence]:
    return Evidence.objects.select_related("job", "uploaded_by")
