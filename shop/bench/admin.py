"""Admin pages for the bench, usable by a shop lead; closed tests and verdicts are read-only."""

from django.contrib import admin

from shop.intake.admin import AppendOnlyAdmin

from .models import (
    CalibrationRecord,
    Instrument,
    Lamp,
    LampBank,
    PowerUpTest,
    Reading,
    Rig,
    Verdict,
)


@admin.register(Rig)
class RigAdmin(admin.ModelAdmin):
    list_display = [
        "name",
        "mains_voltage",
        "mains_frequency",
        "source_kind",
        "isolation_transformer",
        "internal_resistance",
    ]
    readonly_fields = ["version"]


@admin.register(Lamp)
class LampAdmin(admin.ModelAdmin):
    list_display = ["label", "rig", "technology", "rated_voltage", "rated_power", "fill"]
    list_filter = ["rig", "technology"]
    list_select_related = ["rig"]
    readonly_fields = [
        "version",
        "fitted_rated_temperature",
        "fitted_conduction_fraction",
        "fit_rms_residual",
    ]


@admin.register(LampBank)
class LampBankAdmin(admin.ModelAdmin):
    list_display = ["label", "rig"]
    readonly_fields = ["version"]


class CalibrationInline(admin.TabularInline):
    model = CalibrationRecord
    extra = 0
    can_delete = False
    readonly_fields = [
        "calibrated_on",
        "due_on",
        "reference",
        "correction_gain",
        "correction_offset",
        "largest_residual",
        "recorded_by",
    ]
    fields = readonly_fields

    def has_add_permission(self, request, obj=None) -> bool:
        return False


@admin.register(Instrument)
class InstrumentAdmin(admin.ModelAdmin):
    list_display = ["maker", "model_name", "serial", "kind", "response"]
    readonly_fields = ["version"]
    inlines = [CalibrationInline]


class ReadingInline(admin.TabularInline):
    model = Reading
    extra = 0
    can_delete = False
    readonly_fields = [
        "sequence",
        "source_voltage",
        "load_voltage",
        "current",
        "glow_seen",
        "behaviour_seen",
        "lamp_bypassed",
        "taken_at",
    ]
    fields = readonly_fields

    def has_add_permission(self, request, obj=None) -> bool:
        return False


@admin.register(PowerUpTest)
class PowerUpTestAdmin(admin.ModelAdmin):
    """Tests are written through the API; the admin shows them."""

    list_display = ["id", "job", "rig", "technician", "status", "started_at"]
    list_filter = ["status", "rig"]
    list_select_related = ["job", "rig", "technician"]
    readonly_fields = [f.name for f in PowerUpTest._meta.fields]
    inlines = [ReadingInline]

    def has_add_permission(self, request) -> bool:
        return False

    def has_delete_permission(self, request, obj=None) -> bool:
        return False


@admin.register(Verdict)
class VerdictAdmin(AppendOnlyAdmin):
    list_display = ["test", "outcome", "physics_version", "created_at"]

    def has_add_permission(self, request) -> bool:
        return False
