"""Admin pages for the bench, usable by a shop lead; closed tests and verdicts are read-only."""

from django import forms
from django.contrib import admin

from shop.core.admin import AuditedAdmin
from shop.core.errors import ApplicationError
from shop.intake.admin import AppendOnlyAdmin

from . import services
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
from .serializers import MAX_PAIRS, PairSerializer


@admin.register(Rig)
class RigAdmin(AuditedAdmin):
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
class LampAdmin(AuditedAdmin):
    list_display = ["label", "rig", "technology", "rated_voltage", "rated_power", "fill"]
    list_filter = ["rig", "technology"]
    list_select_related = ["rig"]
    # The fit follows the calibration points only through the API, which refits them.
    readonly_fields = [
        "version",
        "calibration_points",
        "fitted_rated_temperature",
        "fitted_conduction_fraction",
        "fit_rms_residual",
    ]


@admin.register(LampBank)
class LampBankAdmin(AuditedAdmin):
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
class InstrumentAdmin(AuditedAdmin):
    list_display = ["maker", "model_name", "serial", "kind", "response"]
    readonly_fields = ["version"]
    inlines = [CalibrationInline]


class CalibrationRecordForm(forms.ModelForm):
    """A calibration typed in the admin, checked and fitted as the API does."""

    class Meta:
        model = CalibrationRecord
        fields = ["instrument", "calibrated_on", "due_on", "reference", "paired_readings"]

    def clean(self):
        data = super().clean()
        if self.errors:
            return data
        pairs = PairSerializer(
            data=data.get("paired_readings") or [], many=True, max_length=MAX_PAIRS
        )
        if not pairs.is_valid():
            raise forms.ValidationError({"paired_readings": str(pairs.errors)})
        try:
            services.calibration_check(
                calibrated_on=data["calibrated_on"],
                due_on=data["due_on"],
                pairs=[dict(p) for p in pairs.validated_data],
            )
        except ApplicationError as exc:
            raise forms.ValidationError({exc.field: exc.message}) from exc
        data["paired_readings"] = [dict(p) for p in pairs.validated_data]
        return data


@admin.register(CalibrationRecord)
class CalibrationRecordAdmin(AppendOnlyAdmin):
    """Calibrations: a lead records one here as through the API; none is edited afterwards."""

    form = CalibrationRecordForm
    list_display = ["instrument", "calibrated_on", "due_on", "reference", "recorded_by"]
    list_select_related = ["instrument", "recorded_by"]
    readonly_fields = ["correction_gain", "correction_offset", "largest_residual", "recorded_by"]

    def save_model(self, request, obj, form, change):
        # Through the service: it fits the correction and writes the audit event.
        record = services.calibration_record_add(
            recorded_by=request.user,
            **{name: form.cleaned_data[name] for name in CalibrationRecordForm.Meta.fields},
        )
        obj.pk = record.pk
        obj._state.adding = False


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
