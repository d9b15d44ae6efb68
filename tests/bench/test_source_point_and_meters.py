"""Where the source volts were read, and which meter judges each reading."""

from __future__ import annotations

from decimal import Decimal

import pytest
from django.core.files.uploadedfile import SimpleUploadedFile

from shop.bench import judging, services
from shop.bench.models import Reading

GOOD = {"source_voltage": 120, "load_voltage": 90, "glow_seen": "dark"}


def post(client, test, body):
    return client.post(f"/api/powerups/{test.pk}/readings/", body, format="json")


def csv_upload(client, test, text: str):
    return client.post(
        f"/api/powerups/{test.pk}/readings/import/",
        {"file": SimpleUploadedFile("ramp.csv", text.encode())},
        format="multipart",
    )


def test_a_reading_that_does_not_say_is_taken_where_the_rigs_meter_reads(open_test, client_for):
    response = post(client_for("technician"), open_test, GOOD)
    assert response.status_code == 201
    assert response.json()[0]["source_point"] == "rig_output"


def test_a_rig_whose_meter_reads_before_its_windings_sets_the_default(open_test, client_for):
    earlier = post(client_for("technician"), open_test, GOOD).json()[0]
    changed = client_for("lead").patch(
        f"/api/rigs/{open_test.rig.pk}/", {"builtin_meter_point": "before_rig"}, format="json"
    )
    assert changed.status_code == 200, changed.json()
    response = post(client_for("technician"), open_test, GOOD)
    assert response.json()[0]["source_point"] == "before_rig"
    # A reading keeps the point it was taken at when the rig's record changes later.
    assert Reading.objects.get(pk=earlier["id"]).source_point == "rig_output"


def test_a_source_given_by_the_dial_is_before_the_windings(open_test, client_for):
    body = {"dial_percent": 90, "load_voltage": 90, "glow_seen": "dark"}
    response = post(client_for("technician"), open_test, body)
    assert response.json()[0]["source_point"] == "before_rig"


def test_a_reading_says_where_its_source_was_read(open_test, client_for):
    response = post(client_for("technician"), open_test, {**GOOD, "source_point": "before_rig"})
    assert response.status_code == 201
    assert Reading.objects.get().source_point == "before_rig"


@pytest.mark.parametrize("value", ["wall", "", "RIG_OUTPUT", 3])
def test_an_unknown_source_point_is_refused_by_name(open_test, client_for, value):
    response = post(client_for("technician"), open_test, {**GOOD, "source_point": value})
    assert response.status_code == 400
    assert response.json()["error"]["field"] == "source_point"
    assert Reading.objects.count() == 0


def test_the_csv_import_takes_the_source_point_column(open_test, client_for):
    text = "source_v,source_point,load_v,glow\n120,before_rig,90,dark\n120,,90,dark\n"
    response = csv_upload(client_for("technician"), open_test, text)
    assert response.status_code == 201, response.json()
    points = list(Reading.objects.order_by("sequence").values_list("source_point", flat=True))
    assert points == ["before_rig", "rig_output"]


def test_the_csv_import_names_a_bad_source_point_by_row(open_test, client_for):
    text = "source_v,source_point,load_v,glow\n120,rig_output,90,dark\n120,mains,90,dark\n"
    response = csv_upload(client_for("technician"), open_test, text)
    assert response.status_code == 400
    assert response.json()["error"]["field"] == "row 3.source_point"
    assert Reading.objects.count() == 0


@pytest.fixture
def panel_meter(staff):
    return services.instrument_create(
        actor=staff["lead"],
        kind="voltmeter",
        response="average_responding",
        maker="Corvid",
        model_name="Panel",
        accuracy_percent=Decimal("2.5"),
        accuracy_counts=1,
        resolution=Decimal("1"),
    )


def test_each_reading_is_judged_with_the_meter_that_took_it(open_test, panel_meter, meter):
    open_test = services.powerup_update(
        test=open_test, expected_version=None, actor=open_test.technician, source_meter=panel_meter
    )
    post_reading = services.readings_add(
        test=open_test, readings=[{**GOOD, "glow_seen": "dark"}], actor=open_test.technician
    )
    inputs = judging.verdict_inputs(open_test, post_reading)
    # The source on the 2.5 % panel meter, the unit on the 0.8 % bench meter.
    assert inputs["source_meter"]["relative"] == pytest.approx(0.025)
    assert inputs["source_meter"]["response"] == "average_responding"
    assert inputs["voltmeter"]["relative"] == pytest.approx(0.008)
    verdict = judging.judge_inputs(inputs)
    assert verdict.settings["source_meter_relative_accuracy"] == pytest.approx(0.025)
    assert verdict.settings["meter_relative_accuracy"] == pytest.approx(0.008)
    assert verdict.settings["source_meter_response"] == "average_responding"


def test_current_read_with_no_current_meter_recorded_has_an_unknown_response(open_test):
    readings = services.readings_add(
        test=open_test, readings=[{**GOOD, "current": 0.4}], actor=open_test.technician
    )
    verdict = judging.judge_inputs(judging.verdict_inputs(open_test, readings))
    assert verdict.settings["ammeter_response"] == "unknown"
    # A resistive unit's current is a sine: both responses read it alike, so it is judged.
    assert verdict.settings["current_judged"] is True
