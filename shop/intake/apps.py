"""App configuration for intake records."""

from django.apps import AppConfig


class IntakeConfig(AppConfig):
    """Customers, units, jobs and their repair history."""

    name = "shop.intake"
    label = "intake"
    verbose_name = "Intake and repair records"
