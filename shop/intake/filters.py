"""Query-string filters for the intake lists."""

import django_filters

from .models import Evidence, Job, RepairStep, Unit


class UnitFilter(django_filters.FilterSet):
    """Units by owner, category and construction."""

    class Meta:
        model = Unit
        fields = ["owner", "category", "construction", "protection_class"]


class JobFilter(django_filters.FilterSet):
    """Jobs by state, technician, customer and intake date range."""

    customer = django_filters.NumberFilter(field_name="unit__owner")
    received_after = django_filters.DateFilter(field_name="received_on", lookup_expr="gte")
    received_before = django_filters.DateFilter(field_name="received_on", lookup_expr="lte")
    # A job's own column: no to-many join, so no SELECT DISTINCT (django-filter's default),
    # which would compare every selected column of every joined row.
    state = django_filters.MultipleChoiceFilter(
        choices=Job._meta.get_field("state").choices, distinct=False
    )

    class Meta:
        model = Job
        fields = ["state", "assigned_technician", "unit", "customer"]


class RepairStepFilter(django_filters.FilterSet):
    """Repair steps by job, technician and date range."""

    performed_after = django_filters.IsoDateTimeFilter(field_name="performed_at", lookup_expr="gte")
    performed_before = django_filters.IsoDateTimeFilter(
        field_name="performed_at", lookup_expr="lte"
    )

    class Meta:
        model = RepairStep
        fields = ["job", "technician"]


class EvidenceFilter(django_filters.FilterSet):
    """Evidence by job, repair step and content type."""

    class Meta:
        model = Evidence
        fields = ["job", "step", "content_type"]
