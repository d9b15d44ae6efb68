"""A rig outside the unit's rated voltage is refused; frequency and output load are warned."""

from __future__ import annotations

from decimal import Decimal

import pytest

from reports import services as reports
from reports.selectors import snapshot_of
from shop.bench import services as bench
from shop.intake import services as intake
from tests.fixtures_bench import HEALTHY_60W_READINGS, make_lamp
from tests.jobs import walk

OVERRIDE = "Unit strapped for 230 V on the bench, confirmed at the transformer primary."
NO_OUTPUT_LOAD = "no output load is declared"


@pytest.fixture
def rig_230(staff):
    return bench.rig_create(
        actor=staff["lead"],
        name="Bench C 230 V",
        mains_voltage=Decimal("230"),
        mains_frequency=50,
        source_kind="variable_autotransformer",
        source_current_rating=Decimal("2"),
        isolation_transformer=True,
        isolation_rating=Decimal("500"),
    )


@pytest.fixture
def lamp_230(rig_230, staff):
    return bench.lamp_create(
        actor=staff["lead"],
        rig=rig_230,
        label="60 W 230 V",
        technology="tungsten",
        rated_voltage=Decimal("230"),
        rated_power=Decimal("60"),
    )


@pytest.fixture
def rig_120_50(staff):
    return bench.rig_create(
        actor=staff["lead"],
        name="Bench D 120 V 50 Hz",
        mains_voltage=Decimal("120"),
        mains_frequency=50,
        source_kind="fixed_mains",
        source_current_rating=Decimal("5"),
        isolation_transformer=True,
    )


def american_unit(customer, staff, **extra):
    fields = {
        "category": "radio",
        "maker": "Brightwave",
        "model_name": "Export",
        "rated_voltage": Decimal("120"),
        "rated_power": Decimal("60"),
        "rated_frequency": "60",
        "construction": "isolating_transformer",
        **extra,
    }
    unit = intake.unit_create(actor=staff["front_desk"], owner=customer, **fields)
    return intake.job_create(actor=staff["front_desk"], unit=unit, complaint="Hums")


def open_on(client, job, rig, lamp, **extra):
    return client.post(
        "/api/powerups/", {"job": job.pk, "rig": rig.pk, "lamp": lamp.pk, **extra}, format="json"
    )


def test_a_120_volt_unit_on_a_230_volt_rig_is_refused(
    customer, staff, rig_230, lamp_230, client_for
):
    job = american_unit(customer, staff)
    response = open_on(client_for("technician"), job, rig_230, lamp_230)
    assert response.status_code == 409
    error = response.json()["error"]
    assert (error["code"], error["field"]) == ("voltage_mismatch", "rig")
    # IEC 60038 gives +/-10 % on a supply voltage: 120 V covers 108-132 V.
    assert error["rated_range"] == [108.0, 132.0]
    assert job.powerups.count() == 0


def test_only_a_lead_overrides_the_mismatch_and_the_reason_is_printed(
    customer, staff, rig_230, lamp_230, client_for
):
    job = american_unit(customer, staff)
    denied = open_on(client_for("technician"), job, rig_230, lamp_230, voltage_override=OVERRIDE)
    assert denied.status_code == 403
    assert denied.json()["error"]["field"] == "voltage_override"
    response = open_on(
        client_for("lead"),
        job,
        rig_230,
        lamp_230,
        voltage_override=OVERRIDE,
        technician=staff["technician"].username,
    )
    assert response.status_code == 201, response.content
    body = response.json()
    assert body["voltage_override"] == OVERRIDE
    assert body["override_by"] == staff["lead"].pk
    assert body["technician"] == staff["technician"].username
    assert any("60 Hz" in warning for warning in body["warnings"])


def test_the_voltage_selector_setting_counts(customer, staff, rig, lamps, client_for):
    job = american_unit(customer, staff, rated_voltage=Decimal("230"), rated_frequency="50_60")
    refused = open_on(client_for("technician"), job, rig, lamps[60])
    assert refused.status_code == 409
    intake.unit_update(
        unit=job.unit,
        expected_version=None,
        actor=staff["front_desk"],
        voltage_selector_setting=Decimal("117"),
    )
    opened = open_on(client_for("technician"), job, rig, lamps[60])
    assert opened.status_code == 201, opened.content
    assert opened.json()["unit_facts"]["voltage_selector_setting"] == "117"


def test_once_tested_the_selector_is_a_leads_to_change(customer, staff, rig, lamps, client_for):
    job = american_unit(customer, staff)
    assert open_on(client_for("technician"), job, rig, lamps[60]).status_code == 201
    response = client_for("technician").patch(
        f"/api/units/{job.unit.pk}/", {"voltage_selector_setting": "230"}, format="json"
    )
    assert response.status_code == 403
    assert response.json()["error"]["field"] == "voltage_selector_setting"


def test_a_60_hz_unit_on_a_50_hz_rig_is_warned(customer, staff, rig_120_50, client_for):
    job = american_unit(customer, staff)
    response = open_on(client_for("technician"), job, rig_120_50, make_lamp(rig_120_50, 60))
    assert response.status_code == 201, response.content
    assert any("rated for 60 Hz" in warning for warning in response.json()["warnings"])


def test_a_rig_edit_after_open_does_not_change_what_the_test_was_judged_on(
    customer, staff, rig, lamps
):
    job = american_unit(customer, staff)
    test = bench.powerup_open(job=job, rig=rig, lamp=lamps[60], technician=staff["technician"])
    bench.rig_update(rig=rig, expected_version=None, actor=staff["lead"], mains_frequency=50)
    bench.readings_add(test=test, readings=HEALTHY_60W_READINGS, actor=staff["technician"])
    verdict = bench.powerup_close(test=test, actor=staff["technician"])
    assert verdict.inputs["frequency"] == 60.0
    test.refresh_from_db()
    assert test.rig_facts["mains_frequency"] == 60


def valve_amplifier(customer, staff):
    unit = intake.unit_create(
        actor=staff["front_desk"],
        owner=customer,
        category="amplifier",
        maker="Tolland",
        model_name="Twin 12",
        year=1958,
        rated_voltage=Decimal("120"),
        rated_power=Decimal("60"),
        rated_frequency="60",
        construction="isolating_transformer",
    )
    return intake.job_create(actor=staff["front_desk"], unit=unit, complaint="No sound")


def resistive(**configuration):
    return {
        "kind": "resistive",
        "parameters": {"power": 60, "voltage": 120},
        "basis": "estimate",
        "configuration": configuration,
    }


def test_a_valve_amplifier_without_a_declared_output_load_is_warned(
    customer, staff, rig, lamps, client_for
):
    job = valve_amplifier(customer, staff)
    client = client_for("technician")
    bare = open_on(client, job, rig, lamps[60], declared_load=resistive())
    assert bare.status_code == 201, bare.content
    assert any(NO_OUTPUT_LOAD in warning for warning in bare.json()["warnings"])
    loaded = open_on(
        client, job, rig, lamps[60], declared_load=resistive(output_load_connected=True)
    )
    assert not any(NO_OUTPUT_LOAD in warning for warning in loaded.json()["warnings"])
    # Editing the declared load on the open test brings the warning back.
    edited = client.patch(
        f"/api/powerups/{loaded.json()['id']}/",
        {"declared_load": resistive(output_load_connected=False)},
        format="json",
    )
    assert edited.status_code == 200, edited.content
    assert any(NO_OUTPUT_LOAD in warning for warning in edited.json()["warnings"])


def test_the_output_load_warning_reaches_the_verdict_and_the_certificate(
    customer, staff, rig, lamps
):
    job = valve_amplifier(customer, staff)
    job = walk(job, ("diagnosing", "awaiting_approval", "repairing", "testing"), staff["lead"])
    test = bench.powerup_open(
        job=job,
        rig=rig,
        lamp=lamps[60],
        technician=staff["technician"],
        declared_load=resistive(),
    )
    bench.readings_add(test=test, readings=HEALTHY_60W_READINGS, actor=staff["technician"])
    verdict = bench.powerup_close(test=test, actor=staff["technician"])
    assert any(NO_OUTPUT_LOAD in warning for warning in verdict.inputs["warnings"])
    certificate = reports.certificate_issue(job=job, issued_by=staff["lead"])
    printed = snapshot_of(certificate)["tests"][0]["warnings"]
    assert any(NO_OUTPUT_LOAD in warning for warning in printed)
