"""Query-string filters for the bench lists."""

import django_filters

from .models import Lamp, PowerUpTest


class LampFilter(django_filters.FilterSet):
    """Lamps by rig and technology."""

    class Meta:
        model = Lamp
        fields = ["rig", "technology", "fill"]


class PowerUpFilter(django_filters.FilterSet):
    """Power-up tests by job, rig, technician, status and start date."""

    started_after = django_filters.IsoDateTimeFilter(field_name="started_at", lookup_expr="gte")
    started_before = django_filters.IsoDateTimeFilter(field_name="started_at", lookup_expr="lte")

    class Meta:
        model = PowerUpTest
        fields = ["job", "rig", "technician", "status"]
