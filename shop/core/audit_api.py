"""Read-only API over the audit trail, for shop leads."""

from __future__ import annotations

import django_filters
from drf_spectacular.utils import extend_schema, extend_schema_view
from rest_framework import mixins, serializers, viewsets

from .models import AuditEvent
from .roles import LEAD, HasShopRole
from .schema import ERROR_RESPONSES


class AuditEventSerializer(serializers.ModelSerializer):
    """One recorded write: who, when, what, to which record, and the digest of the change."""

    actor = serializers.CharField(source="actor.username", default=None, read_only=True)

    class Meta:
        model = AuditEvent
        fields = [
            "id",
            "at",
            "actor",
            "action",
            "object_type",
            "object_id",
            "object_repr",
            "changes",
            "digest",
        ]
        read_only_fields = fields


class AuditEventFilter(django_filters.FilterSet):
    """Audit events by action, record, actor and time."""

    after = django_filters.IsoDateTimeFilter(field_name="at", lookup_expr="gte")
    before = django_filters.IsoDateTimeFilter(field_name="at", lookup_expr="lte")

    class Meta:
        model = AuditEvent
        fields = ["action", "object_type", "object_id", "actor"]


@extend_schema_view(
    list=extend_schema(responses={200: AuditEventSerializer(many=True), **ERROR_RESPONSES}),
    retrieve=extend_schema(responses={200: AuditEventSerializer, **ERROR_RESPONSES}),
)
class AuditEventViewSet(mixins.ListModelMixin, mixins.RetrieveModelMixin, viewsets.GenericViewSet):
    """The append-only audit trail of every write; leads only."""

    queryset = AuditEvent.objects.select_related("actor")
    serializer_class = AuditEventSerializer
    permission_classes = [HasShopRole]
    filterset_class = AuditEventFilter
    search_fields = ["object_repr", "action"]
    ordering_fields = ["at", "id"]
    role_rules = {"read": frozenset({LEAD})}
