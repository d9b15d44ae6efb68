"""Admin page for the audit trail: read-only, never edited."""

from django.contrib import admin

from .models import AuditEvent


@admin.register(AuditEvent)
class AuditEventAdmin(admin.ModelAdmin):
    list_display = ["at", "actor", "action", "object_type", "object_id", "object_repr"]
    list_filter = ["action", "object_type"]
    search_fields = ["object_repr", "object_id", "digest"]
    list_select_related = ["actor"]

    def has_add_permission(self, request) -> bool:
        return False

    def has_change_permission(self, request, obj=None) -> bool:
        return False

    def has_delete_permission(self, request, obj=None) -> bool:
        return False
