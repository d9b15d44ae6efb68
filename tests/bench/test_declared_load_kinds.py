"""Declared-load kinds beyond a resistance: validation by field, and the physics they build."""

from __future__ import annotations

import pytest
from rest_framework import serializers

from shop.bench.declared_load import (
    LOAD_KINDS,
    physics_load,
    unit_model_document,
    validated_document,
)
from shop.physics.composite import CompositeLoad
from shop.physics.switch_mode import ConstantPowerLoad

LAMP_120 = {"technology": "tungsten", "rated_voltage": 120, "rated_power": 100}
RIG_120 = {"mains_voltage": 120, "mains_frequency": 60, "internal_resistance": 2.0}
LAMP_230 = {"technology": "tungsten", "rated_voltage": 230, "rated_power": 150}
RIG_230 = {"mains_voltage": 230, "mains_frequency": 50, "internal_resistance": 4.0}

DOCUMENTS = {
    "heater": {"parameters": {"voltage": 120, "power": 18}},
    "transformer": {"parameters": {"voltage": 120, "va": 60, "load_power": 30, "frequency": 60}},
    "constant_power": {"parameters": {"power": 10, "voltage": 100}},
    "rectifier": {
        "parameters": {
            "voltage": 120,
            "topology": "centre_tap",
            "capacitance": 40e-6,
            "dc_resistance": 5000,
            "turns_ratio": 2.2,
            "rectifier": "valve",
        }
    },
    "composite": {
        "parameters": {
            "members": [
                {"kind": "heater", "parameters": {"voltage": 120, "power": 20}},
                {"kind": "resistive", "parameters": {"power": 30, "voltage": 120}},
                {"kind": "transformer", "parameters": {"voltage": 120, "va": 70}},
            ]
        }
    },
    "nameplate": {
        "parameters": {
            "voltage": 120,
            "power": 65,
            "category": "radio",
            "construction": "isolating_transformer",
            "frequency": "60",
            "year": 1954,
        }
    },
}
MODELS = {
    "heater": "heater",
    "transformer": "transformer",
    "constant_power": "constant_power",
    "rectifier": "rectifier",
    "composite": "composite",
    "nameplate": "composite",
}


def _document(kind, **extra):
    return {"kind": kind, "basis": "estimate", **DOCUMENTS[kind], **extra}


def _predict(client_for, document, lamp=LAMP_120, rig=RIG_120):
    body = {"lamp": lamp, "rig": rig, "declared_load": document, "points": 7}
    return client_for("technician").post("/api/predict/", body, format="json")


def test_every_issue_kind_is_a_declared_load_kind():
    assert set(DOCUMENTS) | {"resistive"} == set(LOAD_KINDS)


@pytest.mark.parametrize("kind", ["heater", "transformer", "rectifier", "composite", "nameplate"])
def test_prediction_answers_for_each_kind_and_names_its_model(client_for, db, kind):
    response = _predict(client_for, _document(kind))
    assert response.status_code == 200, response.content
    body = response.json()
    assert body["model"]["model"] == MODELS[kind]
    assert body["model"]["summary"]
    assert 0 < body["load_voltage"][-1] < 120


def test_prediction_answers_for_a_switch_mode_unit_that_runs_through_the_lamp(client_for, db):
    response = _predict(client_for, _document("constant_power"), LAMP_230, RIG_230)
    assert response.status_code == 200, response.content
    body = response.json()
    assert body["model"]["model"] == "constant_power"
    assert body["current"][0] == 0  # off below its start voltage
    assert any("starts" in line for line in body["model"]["assumptions"])


def test_a_nameplate_prediction_lists_its_assumptions(client_for, db):
    body = _predict(client_for, _document("nameplate")).json()
    assumptions = body["model"]["assumptions"]
    assert any("taken as valve gear" in line for line in assumptions)
    assert any("Heaters take" in line for line in assumptions)


@pytest.mark.parametrize(
    ("kind", "parameters", "field"),
    [
        ("heater", {"voltage": 120}, "declared_load.parameters.power"),
        ("heater", {"voltage": 120, "power": 18, "rated_temperature": 500}, "rated_temperature"),
        ("transformer", {"voltage": 120, "va": 50, "load_power": 80}, "load_power"),
        ("transformer", {"voltage": 120, "va": 50, "core": "ferrite"}, "core"),
        ("transformer", {"voltage": 120, "va": 50, "frequency": 400}, "frequency"),
        ("constant_power", {"power": 10, "voltage": 100, "stop_voltage": 95}, "stop_voltage"),
        ("constant_power", {"power": -10, "voltage": 100}, "power"),
        ("constant_power", {"power": 10, "voltage": 100, "input_stage": "valve"}, "input_stage"),
        ("constant_power", {"power": 10, "voltage": 100, "reservoir": 0}, "reservoir"),
        ("nameplate", {"voltage": 120, "power": 60, "category": "toaster"}, "category"),
        ("nameplate", {"voltage": 120, "power": 60, "year": 1700}, "year"),
        (
            "composite",
            {"members": [{"kind": "heater", "parameters": {"voltage": 120}}]},
            "declared_load.parameters.members.0.parameters.power",
        ),
        ("composite", {"members": []}, "declared_load.parameters.members.non_field_errors"),
        ("rectifier", {"voltage": 120, "capacitance": 1e-4}, "dc_resistance"),
        (
            "rectifier",
            {"voltage": 120, "capacitance": 1e-4, "dc_current": 0.1, "topology": "triple"},
            "topology",
        ),
        (
            "rectifier",
            {
                "voltage": 120,
                "capacitance": 1e-4,
                "dc_current": 0.1,
                "topology": "doubler",
                "choke_inductance": 5,
            },
            "choke_inductance",
        ),
        (
            "composite",
            {"members": [{"kind": "constant_power", "parameters": {"power": 5, "voltage": 100}}]},
            "declared_load.parameters.members.0.kind",
        ),
    ],
)
def test_bad_parameters_answer_400_naming_the_field(client_for, db, kind, parameters, field):
    document = {"kind": kind, "parameters": parameters, "basis": "estimate"}
    response = _predict(client_for, document)
    assert response.status_code == 400, response.content
    fields = response.json()["error"]["fields"]
    assert any(name.endswith(field) for name in fields), fields


def test_a_physics_refusal_is_a_validation_error_on_its_parameter():
    document = {
        "kind": "composite",
        "basis": "estimate",
        "parameters": {
            "members": [
                {"kind": "resistive", "parameters": {"power": 30, "voltage": 120}},
                {"kind": "heater", "parameters": {"voltage": 6.3, "power": 10}},
            ]
        },
    }
    with pytest.raises(serializers.ValidationError) as refusal:
        validated_document(document)
    assert "members" in refusal.value.detail["declared_load"]["parameters"]


def test_the_nameplate_kind_uses_the_bench_configuration():
    full = physics_load(validated_document(_document("nameplate")))
    pulled = physics_load(
        validated_document(_document("nameplate", configuration={"rectifier_pulled": True}))
    )
    assert isinstance(full, CompositeLoad)
    assert float(pulled.rated_power) < float(full.rated_power)
    assert any("Rectifier pulled" in line for line in pulled.describe()["assumptions"])


def test_the_unit_model_document_validates_and_builds_from_the_unit(unit):
    document = validated_document(unit_model_document(unit))
    assert document["kind"] == "nameplate"
    assert document["parameters"]["construction"] == "isolating_transformer"
    assert isinstance(physics_load(document), CompositeLoad)


def test_a_switch_mode_document_builds_a_constant_power_input():
    load = physics_load(validated_document(_document("constant_power")))
    assert isinstance(load, ConstantPowerLoad)
    assert load.start_voltage == pytest.approx(80.0, rel=1e-12)


def test_a_capacitor_input_prediction_draws_more_current_than_a_corrected_one(client_for, db):
    corrected = _document("constant_power")
    capacitor = _document("constant_power")
    capacitor["parameters"] = {**capacitor["parameters"], "input_stage": "capacitor"}
    answers = [
        _predict(client_for, document, LAMP_230, RIG_230) for document in (corrected, capacitor)
    ]
    for response in answers:
        assert response.status_code == 200, response.content
    plain, peaky = (response.json() for response in answers)
    assert peaky["model"]["parameters"]["input_stage"]["value"] == "capacitor"
    assert any("capacitor input" in line for line in peaky["model"]["assumptions"])
    # Running at full source: the same power drawn in peaks (shop/physics/capacitor_input.py).
    assert peaky["current"][-1] > 1.3 * plain["current"][-1] > 0
