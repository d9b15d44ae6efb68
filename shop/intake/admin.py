"""Admin pages for intake records, usable by a shop lead."""

from django.contrib import admin

from shop.core.admin import AuditedAdmin

from .models import Customer, CustomerDecision, Evidence, Job, JobMove, RepairStep, Unit


@admin.register(Customer)
class CustomerAdmin(AuditedAdmin):
    list_display = ["name", "phone", "email"]
    search_fields = ["name", "phone", "email"]
    readonly_fields = ["version"]


@admin.register(Unit)
class UnitAdmin(AuditedAdmin):
    list_display = ["maker", "model_name", "serial", "owner", "construction", "chassis_may_be_live"]
    list_filter = ["category", "construction", "protection_class"]
    search_fields = ["maker", "model_name", "serial", "owner__name"]
    list_select_related = ["owner"]
    readonly_fields = ["version"]

    @admin.display(boolean=True, description="Chassis may be live")
    def chassis_may_be_live(self, unit: Unit) -> bool:
        return unit.chassis_may_be_live


class JobMoveInline(admin.TabularInline):
    model = JobMove
    extra = 0
    can_delete = False
    readonly_fields = ["from_state", "to_state", "moved_by", "moved_at", "note"]

    def has_add_permission(self, request, obj=None) -> bool:
        return False


@admin.register(Job)
class JobAdmin(AuditedAdmin):
    """Jobs; the state is read-only here because moves go through the API's transition."""

    list_display = ["number", "unit", "state", "received_on", "assigned_technician"]
    list_filter = ["state", "assigned_technician"]
    search_fields = ["number", "unit__serial", "unit__owner__name"]
    list_select_related = ["unit", "assigned_technician"]
    readonly_fields = [
        "number",
        "state",
        "held_from",
        "hold_reason",
        "hold_note",
        "approval",
        "version",
    ]
    inlines = [JobMoveInline]


class AppendOnlyAdmin(AuditedAdmin):
    """Written once: the admin shows these records but never edits or deletes them."""

    def has_change_permission(self, request, obj=None) -> bool:
        return False

    def has_delete_permission(self, request, obj=None) -> bool:
        return False


@admin.register(RepairStep)
class RepairStepAdmin(AppendOnlyAdmin):
    list_display = ["job", "technician", "performed_at", "minutes"]
    list_select_related = ["job", "technician"]
    search_fields = ["job__number", "action"]


@admin.register(Evidence)
class EvidenceAdmin(AppendOnlyAdmin):
    list_display = ["job", "label", "content_type", "size", "uploaded_at"]
    list_select_related = ["job"]
    search_fields = ["job__number", "label", "sha256"]

    def has_add_permission(self, request) -> bool:
        return False


@admin.register(CustomerDecision)
class CustomerDecisionAdmin(AppendOnlyAdmin):
    list_display = ["job", "decision", "method", "estimate", "recorded_by", "decided_at"]
    list_select_related = ["job", "recorded_by"]
    search_fields = ["job__number", "customer_name"]

    def has_add_permission(self, request) -> bool:
        return False
