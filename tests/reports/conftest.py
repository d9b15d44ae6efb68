"""Report fixtures: a job in testing with one closed, judged power-up test."""

from __future__ import annotations

import os
import shutil

import pytest

from shop.bench import services as bench
from tests.fixtures_bench import HEALTHY_60W_READINGS

READINGS = HEALTHY_60W_READINGS


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
