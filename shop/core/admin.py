"""Admin plumbing: the audited base for editable admin pages, staff accounts, the audit trail."""

from django.contrib import admin
from django.contrib.auth.admin import UserAdmin
from django.contrib.auth.models import User
from django.db import models, transaction
from django.http import HttpResponseRedirect

from .audit import audit_record
from .models import AuditEvent
from .roles import ROLES
from .versioning import Versioned

admin.site.unregister(User)

# Never written to the audit trail in clear, whatever form carries them.
SECRET_FIELDS = frozenset({"password", "password1", "password2"})


def _recorded_value(value):
    if isinstance(value, models.QuerySet):
        return list(value)
    return value


def form_changes(form, *, change: bool) -> dict:
    """What an admin form set: changed fields on an edit, every filled field on an add."""
    names = form.changed_data if change else [n for n in form.cleaned_data if n in form.fields]
    return {
        name: "(set)" if name in SECRET_FIELDS else _recorded_value(form.cleaned_data.get(name))
        for name in names
    }


class AuditedAdmin(admin.ModelAdmin):
    """An admin page whose writes leave audit events, as API writes do, in the same transaction.

    The admin runs each add, change and delete in one transaction, so a refused write leaves no
    event. A versioned record's version is bumped, so API clients holding its old ETag get 412.
    """

    def _action(self, obj, verb: str) -> str:
        return f"{obj._meta.model_name}.admin_{verb}"

    def save_model(self, request, obj, form, change):
        super().save_model(request, obj, form, change)
        if change and isinstance(obj, Versioned):
            type(obj).objects.filter(pk=obj.pk).update(version=models.F("version") + 1)
            obj.refresh_from_db(fields=["version"])
        audit_record(
            actor=request.user,
            action=self._action(obj, "change" if change else "add"),
            instance=obj,
            changes=form_changes(form, change=change),
        )

    def save_related(self, request, form, formsets, change):
        super().save_related(request, form, formsets, change)
        for formset in formsets:
            for inline_obj in formset.new_objects:
                audit_record(
                    actor=request.user,
                    action=self._action(inline_obj, "add"),
                    instance=inline_obj,
                    changes={"parent": form.instance},
                )

    def delete_model(self, request, obj):
        audit_record(
            actor=request.user, action=self._action(obj, "delete"), instance=obj, changes={}
        )
        super().delete_model(request, obj)

    def delete_queryset(self, request, queryset):
        for obj in queryset:
            audit_record(
                actor=request.user, action=self._action(obj, "delete"), instance=obj, changes={}
            )
        super().delete_queryset(request, queryset)


@admin.register(User)
class StaffUserAdmin(AuditedAdmin, UserAdmin):
    """Staff accounts. A lead manages them but cannot grant superuser rights or raw permissions,
    assign groups other than the shop's roles, or touch a superuser's account."""

    LOCKED_FOR_LEADS = ("is_superuser", "user_permissions", "last_login", "date_joined")

    def get_readonly_fields(self, request, obj=None):
        fields = super().get_readonly_fields(request, obj)
        if request.user.is_superuser:
            return fields
        return (*fields, *self.LOCKED_FOR_LEADS)

    def _guards_superuser(self, request, obj) -> bool:
        return obj is not None and obj.is_superuser and not request.user.is_superuser

    def has_change_permission(self, request, obj=None) -> bool:
        if self._guards_superuser(request, obj):
            return False
        return super().has_change_permission(request, obj)

    def has_delete_permission(self, request, obj=None) -> bool:
        if self._guards_superuser(request, obj):
            return False
        return super().has_delete_permission(request, obj)

    def formfield_for_manytomany(self, db_field, request, **kwargs):
        if db_field.name == "groups" and not request.user.is_superuser:
            kwargs["queryset"] = db_field.remote_field.model.objects.filter(name__in=ROLES)
        return super().formfield_for_manytomany(db_field, request, **kwargs)

    def user_change_password(self, request, id, form_url=""):
        with transaction.atomic():
            response = super().user_change_password(request, id, form_url)
            if request.method == "POST" and isinstance(response, HttpResponseRedirect):
                user = User.objects.get(pk=id)
                audit_record(
                    actor=request.user,
                    action="user.admin_password_change",
                    instance=user,
                    changes={"password": "(set)"},
                )
        return response


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
