"""Bench fixtures: an isolated 120 V rig and a bare one, lamps, meters, an open test."""

from __future__ import annotations

from datetime import timedelta
from decimal import Decimal

import pytest
from django.contrib.auth.models import User
from django.utils import timezone

from shop.bench import services
from shop.intake.models import JobState
from tests.jobs import walk

# A healthy 60 W, 120 V unit through the 60 W lamp on the 120 V rig: a pass when no meter is
# named (with the `meter` fixture's spread, marginal).
HEALTHY_60W_READINGS = [
    {"source_voltage": 30.0, "load_voltage": 28.0, "glow_seen": "dark"},
    {"source_voltage": 60.0, "load_voltage": 54.5, "glow_seen": "dark"},
    {"source_voltage": 90.0, "load_voltage": 79.0, "glow_seen": "faint"},
    {"source_voltage": 120.0, "load_voltage": 101.0, "glow_seen": "faint"},
]


@pytest.fixture
def meter(staff):
    instrument = services.instrument_create(
        actor=staff["lead"],
        kind="multimeter",
        response="true_rms",
        maker="Corvid",
        model_name="TM-9",
        serial="C9-001",
        accuracy_percent=Decimal("0.8"),
        accuracy_counts=3,
        resolution=Decimal("0.1"),
    )
    today = timezone.localdate()
    services.calibration_record_add(
        instrument=instrument,
        calibrated_on=today - timedelta(30),
        due_on=today + timedelta(300),
        reference="Shop standard",
        recorded_by=staff["lead"],
    )
    return instrument


@pytest.fixture
def overdue_meter(staff):
    instrument = services.instrument_create(
        actor=staff["lead"],
        kind="voltmeter",
        response="average_responding",
        maker="Pellow",
        model_name="AV-2",
        accuracy_percent=Decimal("2"),
        accuracy_counts=2,
        resolution=Decimal("1"),
    )
    today = timezone.localdate()
    services.calibration_record_add(
        instrument=instrument,
        calibrated_on=today - timedelta(500),
        due_on=today - timedelta(135),
        reference="Shop standard",
        recorded_by=staff["lead"],
    )
    return instrument


@pytest.fixture
def rig(staff):
    return services.rig_create(
        actor=staff["lead"],
        name="Bench A 120 V",
        mains_voltage=Decimal("120"),
        mains_frequency=60,
        source_kind="variable_autotransformer",
        output_at_full_dial=Decimal("130"),
        source_current_rating=Decimal("3"),
        isolation_transformer=True,
        isolation_rating=Decimal("300"),
        internal_resistance=Decimal("2.0"),
    )


@pytest.fixture
def bare_rig(staff):
    return services.rig_create(
        actor=staff["lead"],
        name="Bench B no isolation",
        mains_voltage=Decimal("120"),
        mains_frequency=60,
        source_kind="fixed_mains",
        source_current_rating=Decimal("10"),
        isolation_transformer=False,
        internal_resistance=Decimal("0.5"),
    )


def make_lamp(rig, watts: int, **extra):
    """A clear 120 V lamp on `rig`, added by the rig's first lead."""
    lead = User.objects.filter(groups__name="lead").first()
    return services.lamp_create(
        actor=lead,
        rig=rig,
        label=f"{watts} W clear",
        technology="tungsten",
        rated_voltage=Decimal("120"),
        rated_power=Decimal(watts),
        **extra,
    )


@pytest.fixture
def lamps(rig):
    return {w: make_lamp(rig, w) for w in (25, 40, 60, 100, 150)}


@pytest.fixture
def testing_job(job, staff):
    job = walk(
        job,
        (JobState.DIAGNOSING, JobState.AWAITING_APPROVAL, JobState.REPAIRING, JobState.TESTING),
        staff["lead"],
    )
    return job


@pytest.fixture
def open_test(testing_job, rig, lamps, staff, meter):
    return services.powerup_open(
        job=testing_job,
        rig=rig,
        lamp=lamps[60],
        technician=staff["technician"],
        declared_load={
            "kind": "resistive",
            "parameters": {"power": 60, "voltage": 120},
            "basis": "nameplate",
        },
        load_meter=meter,
    )
