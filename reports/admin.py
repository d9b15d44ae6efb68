"""Admin pages for certificates: read-only, since an issued certificate never changes."""

from django.contrib import admin

from shop.intake.admin import AppendOnlyAdmin

from .models import Certificate, CertificateEvent, certificate_status


class CertificateEventInline(admin.TabularInline):
    model = CertificateEvent
    fk_name = "certificate"
    extra = 0
    can_delete = False
    readonly_fields = ["kind", "by", "at", "reason", "replacement"]
    fields = readonly_fields

    def has_add_permission(self, request, obj=None) -> bool:
        return False


@admin.register(Certificate)
class CertificateAdmin(AppendOnlyAdmin):
    list_display = ["number", "job", "issued_by", "issued_at", "status"]
    search_fields = ["number", "job__number"]
    list_select_related = ["job", "issued_by"]
    inlines = [CertificateEventInline]

    def has_add_permission(self, request) -> bool:
        return False

    @admin.display(description="Status")
    def status(self, certificate: Certificate) -> str:
        return certificate_status(certificate)
