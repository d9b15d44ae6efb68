"""A closed test and its readings refuse save(), delete() and queryset updates, not only the API."""

from __future__ import annotations

import pytest
from django.core.exceptions import ValidationError

from shop.bench import services
from shop.bench.models import PowerUpTest, Reading, Verdict

READING = {"source_voltage": 60, "load_voltage": 50, "glow_seen": "dark"}


@pytest.fixture
def closed(open_test, staff):
    services.readings_add(test=open_test, readings=[READING], actor=staff["technician"])
    services.powerup_close(test=open_test, actor=staff["technician"])
    return PowerUpTest.objects.get(pk=open_test.pk)


def test_a_closed_test_refuses_save_delete_and_bulk_update(closed):
    closed.notes = "edited later"
    with pytest.raises(ValidationError):
        closed.save()
    with pytest.raises(ValidationError):
        closed.delete()
    with pytest.raises(ValidationError):
        PowerUpTest.objects.filter(pk=closed.pk).update(notes="edited")
    assert PowerUpTest.objects.get(pk=closed.pk).notes == ""


def test_readings_of_a_closed_test_refuse_every_write(closed):
    reading = closed.readings.get()
    reading.load_voltage = 1.0
    with pytest.raises(ValidationError):
        reading.save()
    with pytest.raises(ValidationError):
        reading.delete()
    with pytest.raises(ValidationError):
        Reading.objects.filter(test=closed).update(load_voltage=1.0)
    with pytest.raises(ValidationError):
        Reading.objects.filter(test=closed).delete()
    with pytest.raises(ValidationError):
        Reading.objects.bulk_create(
            [Reading(test=closed, sequence=9, source_voltage=1, load_voltage=1, glow_seen="dark")]
        )
    assert closed.readings.get().load_voltage == 50


def test_a_verdict_refuses_every_write(closed):
    verdict = Verdict.objects.get(test=closed)
    with pytest.raises(ValidationError):
        verdict.save()
    with pytest.raises(ValidationError):
        Verdict.objects.update(outcome="pass")


def test_an_open_test_still_takes_updates(open_test, staff):
    updated = services.powerup_update(
        test=open_test, expected_version=None, actor=staff["technician"], notes="fan noisy"
    )
    assert updated.notes == "fan noisy"
