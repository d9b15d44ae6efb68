"""Report fixtures: a job in testing with one closed, judged power-up test."""

from __future__ import annotations

import os
import shutil

import pytest

from shop.bench import services as bench

READINGS = [
    {"source_voltage": 30.0, "load_voltage": 28.0, "glow_seen": "dark"},
    {"source_voltage": 60.0, "load_voltage": 54.5, "glow_seen": "dark"},
    {"source_voltage": 90.0, "load_voltage": 79.0, "glow_seen": "faint"},
    {"source_voltage": 120.0, "load_voltage": 101.0, "glow_seen": "faint"},
]


@pytest.fixture
def closed_test(open_test, staff):
    bench.readings_add(test=open_test, readings=READINGS, actor=staff["technician"])
    bench.powerup_close(test=open_test, actor=staff["technician"])
    open_test.refresh_from_db()
    return open_test


@pytest.fixture
def pdftoppm():
    """The pdftoppm program; a skip locally without it, a failure when CI is "true"."""
    program = shutil.which("pdftoppm")
    if program is None:
        message = "pdftoppm is missing: apt-get install -y poppler-utils"
        if os.environ.get("CI") == "true":
            pytest.fail(message)
        pytest.skip(message)
    return program


@pytest.fixture
def own_media(settings, tmp_path):
    """A media folder of this test's own, free of the files other tests left behind."""
    settings.MEDIA_ROOT = str(tmp_path / "media")
    return tmp_path / "media"
