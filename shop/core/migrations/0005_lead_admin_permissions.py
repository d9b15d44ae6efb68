"""Give the lead group the admin permissions the README promises.

Leads read the audit trail, manage staff accounts, rigs, lamps, lamp banks, instruments and
their calibrations, and view every other record. Append-only records get no change or delete
permission (their admin pages refuse them anyway).
"""

from django.contrib.auth.management import create_permissions
from django.db import migrations

MANAGE = ("add", "change", "delete", "view")
LEAD_PERMISSIONS = {
    "core": {"auditevent": ("view",)},
    "auth": {"user": ("add", "change", "view"), "group": ("view",)},
    "bench": {
        "rig": MANAGE,
        "lamp": MANAGE,
        "lampbank": MANAGE,
        "instrument": MANAGE,
        "calibrationrecord": ("add", "view"),
        "poweruptest": ("view",),
        "reading": ("view",),
        "verdict": ("view",),
    },
    "intake": {
        "customer": ("view",),
        "unit": ("view",),
        "job": ("view",),
        "jobmove": ("view",),
        "customerdecision": ("view",),
        "repairstep": ("view",),
        "evidence": ("view",),
    },
    "reports": {"certificate": ("view",), "certificateevent": ("view",)},
}


def _codenames():
    for app_label, models in LEAD_PERMISSIONS.items():
        for model, actions in models.items():
            for action in actions:
                yield app_label, f"{action}_{model}"


def grant(apps, schema_editor):
    # Permissions are normally made after all migrations (post_migrate); make them now.
    for app_config in apps.get_app_configs():
        app_config.models_module = True
        create_permissions(app_config, apps=apps, verbosity=0)
        app_config.models_module = None
    Group = apps.get_model("auth", "Group")
    Permission = apps.get_model("auth", "Permission")
    lead, _ = Group.objects.get_or_create(name="lead")
    for app_label, codename in _codenames():
        lead.permissions.add(
            Permission.objects.get(content_type__app_label=app_label, codename=codename)
        )


def revoke(apps, schema_editor):
    Group = apps.get_model("auth", "Group")
    Permission = apps.get_model("auth", "Permission")
    lead = Group.objects.filter(name="lead").first()
    if lead is None:
        return
    for app_label, codename in _codenames():
        lead.permissions.remove(
            *Permission.objects.filter(content_type__app_label=app_label, codename=codename)
        )


class Migration(migrations.Migration):
    dependencies = [
        ("core", "0004_shared_cache_table"),
        ("auth", "0012_alter_user_first_name_max_length"),
        ("contenttypes", "0002_remove_content_type_name"),
        ("intake", "0002_customer_decisions_and_hold_reasons"),
        ("bench", "0001_initial"),
        ("reports", "0001_initial"),
    ]
    operations = [migrations.RunPython(grant, revoke)]
