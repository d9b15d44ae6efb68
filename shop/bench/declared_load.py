"""The declared load document: what the unit should draw on the bench, validated by kind.

A document looks like::

    {"kind": "resistive", "parameters": {"power": 60, "voltage": 120},
     "basis": "nameplate", "configuration": {"dummy_load_on_output": true, "notes": "..."}}

Each kind names a parameter serializer and a builder of the physics load model; the real-loads
issue adds kinds by adding entries to LOAD_KINDS.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

from rest_framework import serializers

from shop.intake.models import Category, Construction, PowerUnit, Unit
from shop.physics.loads import ResistiveLoad

BASES = ("nameplate", "measured_idle", "estimate")

# Said wherever a nameplate default is offered: the nameplate is rarely the bench draw.
NAMEPLATE_CAUTIONS = {
    "amplifier": "Amplifiers are rated at full output and idle far lower: declare the idle draw "
    "(measured_idle or estimate) for a fair judgement.",
    "switch_mode": "Switch-mode units idle at a few watts and may not start through a lamp: "
    "declare the idle draw.",
}
AMPLIFIER_CATEGORIES = {Category.AMPLIFIER, Category.INSTRUMENT_AMPLIFIER, Category.HIFI}


class ResistiveParameters(serializers.Serializer):
    """A unit that behaves as a resistance: give its power at a voltage, or its resistance."""

    power = serializers.FloatField(
        required=False, min_value=0.1, max_value=10000, help_text="Declared draw [W]."
    )
    voltage = serializers.FloatField(
        required=False, min_value=1, max_value=480, help_text="Voltage the power is quoted at [V]."
    )
    resistance = serializers.FloatField(
        required=False, min_value=0.0, max_value=1e7, help_text="Resistance [ohm]; 0 is a short."
    )

    def validate(self, attrs):
        if "resistance" in attrs:
            if "power" in attrs:
                raise serializers.ValidationError(
                    {"power": "Give either resistance or power and voltage, not both."}
                )
            return attrs
        missing = [name for name in ("power", "voltage") if name not in attrs]
        if missing:
            raise serializers.ValidationError(
                {name: "Required unless resistance is given." for name in missing}
            )
        return attrs


def build_resistive(parameters: dict) -> ResistiveLoad:
    if "resistance" in parameters:
        return ResistiveLoad(parameters["resistance"])
    return ResistiveLoad.from_rating(parameters["voltage"], parameters["power"])


@dataclass(frozen=True)
class LoadKind:
    parameters: type[serializers.Serializer]
    build: Callable[[dict], object]
    words: str


LOAD_KINDS: dict[str, LoadKind] = {
    "resistive": LoadKind(ResistiveParameters, build_resistive, "a plain resistance"),
}


class BenchConfiguration(serializers.Serializer):
    """How the unit was set up for this test."""

    valves_pulled = serializers.BooleanField(required=False, default=False)
    rectifier_pulled = serializers.BooleanField(required=False, default=False)
    dummy_load_on_output = serializers.BooleanField(required=False, default=False)
    voltage_selector = serializers.CharField(
        required=False, default="", allow_blank=True, max_length=100
    )
    notes = serializers.CharField(required=False, default="", allow_blank=True, max_length=2000)


class DeclaredLoadSerializer(serializers.Serializer):
    """The declared load: kind, its parameters, what they rest on and the bench configuration."""

    kind = serializers.ChoiceField(choices=sorted(LOAD_KINDS))
    parameters = serializers.DictField()
    basis = serializers.ChoiceField(choices=BASES)
    configuration = BenchConfiguration(required=False)

    def validate(self, attrs):
        kind = LOAD_KINDS[attrs["kind"]]
        parameters = kind.parameters(data=attrs["parameters"])
        if not parameters.is_valid():
            raise serializers.ValidationError({"parameters": parameters.errors})
        attrs["parameters"] = dict(parameters.validated_data)
        attrs["configuration"] = dict(
            attrs.get("configuration") or BenchConfiguration(data={}).to_internal_value({})
        )
        return attrs


def validated_document(data) -> dict:
    """Validate a declared-load document; raises a DRF ValidationError naming the field."""
    serializer = DeclaredLoadSerializer(data=data)
    if not serializer.is_valid():
        raise serializers.ValidationError({"declared_load": serializer.errors})
    return dict(serializer.validated_data)


def physics_load(document: dict):
    """The shop.physics load model a validated document describes."""
    return LOAD_KINDS[document["kind"]].build(document["parameters"])


def nameplate_document(unit: Unit) -> dict:
    """The default declared load, built from the unit's nameplate, with its cautions."""
    cautions = []
    if unit.category in AMPLIFIER_CATEGORIES:
        cautions.append(NAMEPLATE_CAUTIONS["amplifier"])
    if unit.construction == Construction.SWITCH_MODE:
        cautions.append(NAMEPLATE_CAUTIONS["switch_mode"])
    if unit.rated_power_unit == PowerUnit.VOLT_AMPERE:
        cautions.append(
            "The nameplate gives VA; it is taken as watts, which overstates the "
            "real power of a reactive unit."
        )
    return {
        "kind": "resistive",
        "parameters": {"power": float(unit.rated_power), "voltage": float(unit.rated_voltage)},
        "basis": "nameplate",
        "configuration": BenchConfiguration(data={}).to_internal_value({}),
        "cautions": cautions,
    }
