"""App configuration for the shared plumbing."""

from django.apps import AppConfig


class CoreConfig(AppConfig):
    """Shared helpers: errors, pagination, concurrency control, roles."""

    name = "shop.core"
    label = "core"
