"""App configuration for the bench records."""

from django.apps import AppConfig


class BenchConfig(AppConfig):
    """Rigs, lamps, instruments and power-up tests."""

    name = "shop.bench"
    label = "bench"
    verbose_name = "Bench: rigs, lamps, instruments and power-up tests"
