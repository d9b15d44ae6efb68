"""Report fixtures: a job in testing with one closed, judged power-up test."""

from __future__ import annotations

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
