"""App configuration for certificates and receipts."""

from django.apps import AppConfig


class ReportsConfig(AppConfig):
    """Issued documents rendered from immutable snapshots."""

    name = "reports"
    verbose_name = "Certificates and receipts"
