"""The declared load document: what the unit should draw on the bench, validated by kind.

A document looks like::

    {"kind": "resistive", "parameters": {"power": 60, "voltage": 120},
     "basis": "nameplate", "configuration": {"dummy_load_on_output": true, "notes": "..."}}

Each kind names a parameter serializer and a builder of the physics load model (from the
parameters and the bench configuration). Kinds: ``resistive``, ``heater``, ``transformer``,
``rectifier``, ``constant_power``, ``composite`` (members of the first four, one rectifier at
most) and ``nameplate`` (a model built from the unit's nameplate, construction and the
test's configuration). A parameter the
serializer accepts but the physics refuses (a load above its transformer's rating) is turned
into a validation error on that parameter, so every bad document answers 400 by field.
"""

from __future__ import annotations

import re
from collections.abc import Callable
from dataclasses import dataclass

from rest_framework import serializers

from shop.core.errors import Conflict
from shop.intake.models import Category, Construction, FrequencyRating, PowerUnit, Unit
from shop.physics.composite import CompositeLoad
from shop.physics.heater import HeaterLoad
from shop.physics.lamp import FILAMENT_TEMPERATURE_RANGE
from shop.physics.loads import ResistiveLoad
from shop.physics.nameplate import CATEGORIES, CONSTRUCTIONS, unit_load_from_nameplate
from shop.physics.rectifier import RECTIFIERS, TOPOLOGIES, RectifierLoad
from shop.physics.switch_mode import INPUT_STAGES, ConstantPowerLoad
from shop.physics.transformer import CORES, TransformerLoad

BASES = ("nameplate", "measured_idle", "estimate")
MAX_MEMBERS = 8

# Said wherever a nameplate default is offered: the nameplate is rarely the bench draw.
NAMEPLATE_CAUTIONS = {
    "amplifier": "Amplifiers are rated at full output and idle far lower: declare the idle draw "
    "(measured_idle or estimate) for a fair judgement.",
    "switch_mode": "Switch-mode units idle at a few watts and may not start through a lamp: "
    "declare the idle draw.",
}
AMPLIFIER_CATEGORIES = {Category.AMPLIFIER, Category.INSTRUMENT_AMPLIFIER, Category.HIFI}
FREQUENCY_HERTZ = {FrequencyRating.HZ_50: 50.0, FrequencyRating.HZ_60: 60.0}

VOLTAGE_LIMITS = {"min_value": 1, "max_value": 480}
POWER_LIMITS = {"min_value": 0.1, "max_value": 10000}


class ResistiveParameters(serializers.Serializer):
    """A unit that behaves as a resistance: give its power at a voltage, or its resistance."""

    power = serializers.FloatField(required=False, help_text="Declared draw [W].", **POWER_LIMITS)
    voltage = serializers.FloatField(
        required=False, help_text="Voltage the power is quoted at [V].", **VOLTAGE_LIMITS
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


class HeaterParameters(serializers.Serializer):
    """Heaters (a series string, or a winding's heaters referred to the primary)."""

    voltage = serializers.FloatField(help_text="Voltage across the heaters [V].", **VOLTAGE_LIMITS)
    power = serializers.FloatField(help_text="Heater power when hot [W].", **POWER_LIMITS)
    rated_temperature = serializers.FloatField(
        required=False,
        min_value=FILAMENT_TEMPERATURE_RANGE[0],
        max_value=FILAMENT_TEMPERATURE_RANGE[1],
        help_text="Element temperature when hot [K]; default 1400 K.",
    )
    warm_up_time = serializers.FloatField(
        required=False, min_value=0.01, max_value=300, help_text="Warm-up time constant [s]."
    )


class TransformerParameters(serializers.Serializer):
    """A power transformer with a resistive load on its secondary (0 W: on no load)."""

    voltage = serializers.FloatField(help_text="Primary rated voltage [V].", **VOLTAGE_LIMITS)
    va = serializers.FloatField(help_text="Transformer rating [VA].", **POWER_LIMITS)
    load_power = serializers.FloatField(
        required=False, default=0.0, min_value=0.0, max_value=10000, help_text="Secondary load [W]."
    )
    frequency = serializers.ChoiceField(
        choices=[50, 60],
        required=False,
        allow_null=True,
        default=None,
        help_text="Frequency it was built for [Hz]; null if not known.",
    )
    core = serializers.ChoiceField(choices=CORES, required=False, default="ei")
    magnetising_fraction = serializers.FloatField(required=False, min_value=1e-4, max_value=1.0)
    core_loss_fraction = serializers.FloatField(required=False, min_value=0.0, max_value=0.2)
    regulation = serializers.FloatField(required=False, min_value=0.0, max_value=0.5)

    def validate(self, attrs):
        if attrs.get("load_power", 0.0) > attrs["va"]:
            raise serializers.ValidationError(
                {"load_power": "Must not exceed the transformer's VA: declare a larger one."}
            )
        return attrs


class ConstantPowerParameters(serializers.Serializer):
    """A switch-mode input holding its power once started."""

    power = serializers.FloatField(help_text="Power drawn once running [W].", **POWER_LIMITS)
    voltage = serializers.FloatField(
        help_text="Lowest input voltage on the nameplate [V] (100 for 100-240 V).",
        **VOLTAGE_LIMITS,
    )
    start_voltage = serializers.FloatField(required=False, min_value=0, max_value=480)
    stop_voltage = serializers.FloatField(required=False, min_value=0, max_value=480)
    input_stage = serializers.ChoiceField(
        choices=INPUT_STAGES,
        required=False,
        help_text=(
            "power_factor_corrected (the default: draws its power as a resistance would) or "
            "capacitor (a bridge and reservoir without correction: peaky current)."
        ),
    )
    reservoir = serializers.FloatField(
        required=False,
        min_value=1e-7,
        max_value=1.0,
        help_text="Reservoir behind its bridge [F]; default 1.5 uF per watt of power.",
    )

    def validate(self, attrs):
        start = attrs.get("start_voltage", 0.8 * attrs["voltage"])
        if attrs.get("stop_voltage", 0.7 * attrs["voltage"]) > start:
            raise serializers.ValidationError(
                {"stop_voltage": "Must not exceed the start voltage."}
            )
        return attrs


class RectifierParameters(serializers.Serializer):
    """A rectifier with a reservoir, fed directly or through a transformer."""

    voltage = serializers.FloatField(help_text="Mains voltage of the unit [V].", **VOLTAGE_LIMITS)
    topology = serializers.ChoiceField(choices=TOPOLOGIES, required=False, default="bridge")
    capacitance = serializers.FloatField(
        min_value=1e-7, max_value=1.0, help_text="Reservoir capacitance [F] (each of a doubler's)."
    )
    dc_resistance = serializers.FloatField(
        required=False, min_value=0.1, max_value=1e7, help_text="DC load as a resistance [ohm]."
    )
    dc_current = serializers.FloatField(
        required=False, min_value=0.0, max_value=50.0, help_text="DC load as a current [A]."
    )
    turns_ratio = serializers.FloatField(
        required=False,
        allow_null=True,
        default=None,
        min_value=0.01,
        max_value=100.0,
        help_text="Secondary over primary volts; null when fed straight from the mains.",
    )
    winding_resistance = serializers.FloatField(required=False, min_value=0.0, max_value=1e5)
    rectifier = serializers.ChoiceField(choices=RECTIFIERS, required=False, default="silicon")
    choke_inductance = serializers.FloatField(required=False, min_value=1e-3, max_value=100.0)
    choke_resistance = serializers.FloatField(required=False, min_value=0.0, max_value=1e4)
    frequency = serializers.ChoiceField(
        choices=[50, 60], required=False, default=60, help_text="Mains its draw is quoted on."
    )

    def validate(self, attrs):
        given = [name for name in ("dc_resistance", "dc_current") if name in attrs]
        if len(given) != 1:
            message = "Give exactly one of dc_resistance and dc_current."
            raise serializers.ValidationError({"dc_resistance": message, "dc_current": message})
        return attrs


class NameplateParameters(serializers.Serializer):
    """The unit's nameplate and construction; the model follows with its assumptions."""

    voltage = serializers.FloatField(help_text="Nameplate mains voltage [V].", **VOLTAGE_LIMITS)
    power = serializers.FloatField(help_text="Nameplate power [W or VA].", **POWER_LIMITS)
    power_unit = serializers.ChoiceField(choices=PowerUnit.values, required=False, default="W")
    category = serializers.ChoiceField(choices=CATEGORIES, required=False, default="other")
    construction = serializers.ChoiceField(choices=CONSTRUCTIONS, required=False, default="unknown")
    frequency = serializers.ChoiceField(
        choices=FrequencyRating.values, required=False, default=FrequencyRating.UNKNOWN
    )
    year = serializers.IntegerField(required=False, min_value=1880, max_value=2100)
    valve = serializers.BooleanField(required=False, allow_null=True, default=None)


class MemberSerializer(serializers.Serializer):
    """One part of a composite unit."""

    kind = serializers.ChoiceField(choices=["resistive", "heater", "transformer", "rectifier"])
    parameters = serializers.DictField()

    def validate(self, attrs):
        parameters = LOAD_KINDS[attrs["kind"]].parameters(data=attrs["parameters"])
        if not parameters.is_valid():
            raise serializers.ValidationError({"parameters": parameters.errors})
        attrs["parameters"] = dict(parameters.validated_data)
        return attrs


class CompositeParameters(serializers.Serializer):
    """Parts on one supply (all rated at the unit's mains voltage)."""

    members = MemberSerializer(many=True, min_length=1, max_length=MAX_MEMBERS)

    def to_internal_value(self, data):
        value = super().to_internal_value(data)
        value["members"] = [dict(member) for member in value["members"]]
        return value


def build_resistive(parameters: dict, configuration: dict) -> ResistiveLoad:
    if "resistance" in parameters:
        return ResistiveLoad(parameters["resistance"])
    return ResistiveLoad.from_rating(parameters["voltage"], parameters["power"])


def build_heater(parameters: dict, configuration: dict) -> HeaterLoad:
    options = {
        name: parameters[name]
        for name in ("rated_temperature", "warm_up_time")
        if name in parameters
    }
    return HeaterLoad(parameters["voltage"], parameters["power"], **options)


def build_transformer(parameters: dict, configuration: dict) -> TransformerLoad:
    options = {
        name: parameters[name]
        for name in ("magnetising_fraction", "core_loss_fraction", "regulation")
        if name in parameters
    }
    frequency = parameters.get("frequency")
    return TransformerLoad(
        parameters["voltage"],
        parameters["va"],
        load_power=parameters.get("load_power", 0.0),
        rated_frequency=None if frequency is None else float(frequency),
        core=parameters.get("core", "ei"),
        **options,
    )


def build_constant_power(parameters: dict, configuration: dict) -> ConstantPowerLoad:
    return ConstantPowerLoad(
        parameters["power"],
        rated_voltage=parameters["voltage"],
        start_voltage=parameters.get("start_voltage"),
        stop_voltage=parameters.get("stop_voltage"),
        reservoir=parameters.get("reservoir"),
        input_stage=parameters.get("input_stage"),
    )


def build_composite(parameters: dict, configuration: dict) -> CompositeLoad:
    return CompositeLoad(
        [
            LOAD_KINDS[member["kind"]].build(member["parameters"], configuration)
            for member in parameters["members"]
        ]
    )


def build_rectifier(parameters: dict, configuration: dict) -> RectifierLoad:
    options = {
        name: parameters[name]
        for name in (
            "dc_resistance",
            "dc_current",
            "winding_resistance",
            "choke_inductance",
            "choke_resistance",
        )
        if name in parameters
    }
    return RectifierLoad(
        parameters["voltage"],
        parameters["capacitance"],
        topology=parameters.get("topology", "bridge"),
        turns_ratio=parameters.get("turns_ratio"),
        rectifier=parameters.get("rectifier", "silicon"),
        rated_frequency=float(parameters.get("frequency", 60)),
        **options,
    )


def build_nameplate(parameters: dict, configuration: dict):
    return unit_load_from_nameplate(
        rated_voltage=parameters["voltage"],
        rated_power=parameters["power"],
        power_unit=parameters.get("power_unit", "W"),
        category=parameters.get("category", "other"),
        construction=parameters.get("construction", "unknown"),
        rated_frequency=FREQUENCY_HERTZ.get(parameters.get("frequency")),
        year=parameters.get("year"),
        valve=parameters.get("valve"),
        valves_pulled=configuration.get("valves_pulled", False),
        rectifier_pulled=configuration.get("rectifier_pulled", False),
        dummy_load_on_output=configuration.get("dummy_load_on_output", False),
    )


@dataclass(frozen=True)
class LoadKind:
    parameters: type[serializers.Serializer]
    build: Callable[[dict, dict], object]
    words: str


LOAD_KINDS: dict[str, LoadKind] = {
    "resistive": LoadKind(ResistiveParameters, build_resistive, "a plain resistance"),
    "heater": LoadKind(
        HeaterParameters,
        build_heater,
        "heaters that start cold at a fraction of their hot resistance",
    ),
    "transformer": LoadKind(
        TransformerParameters,
        build_transformer,
        "a power transformer: windings, a saturating core and a resistive load",
    ),
    "constant_power": LoadKind(
        ConstantPowerParameters,
        build_constant_power,
        "a switch-mode input that holds its power once started",
    ),
    "rectifier": LoadKind(
        RectifierParameters,
        build_rectifier,
        "a rectifier charging a reservoir capacitor, solved in the time domain",
    ),
    "composite": LoadKind(CompositeParameters, build_composite, "parts on one supply"),
    "nameplate": LoadKind(
        NameplateParameters,
        build_nameplate,
        "a model built from the nameplate and construction, with its assumptions",
    ),
}

# Physics argument names that differ from the document's parameter names.
PHYSICS_FIELD_NAMES = {
    "rated_voltage": "voltage",
    "rated_power": "power",
    "rated_va": "va",
    "rated_frequency": "frequency",
    "members": "members",
}


class BenchConfiguration(serializers.Serializer):
    """How the unit was set up for this test."""

    valves_pulled = serializers.BooleanField(required=False, default=False)
    rectifier_pulled = serializers.BooleanField(required=False, default=False)
    dummy_load_on_output = serializers.BooleanField(required=False, default=False)
    output_load_connected = serializers.BooleanField(
        required=False,
        default=False,
        help_text="A speaker or dummy load is on the output (a valve amplifier needs one).",
    )
    voltage_selector = serializers.CharField(
        required=False, default="", allow_blank=True, max_length=100
    )
    notes = serializers.CharField(required=False, default="", allow_blank=True, max_length=2000)


def _physics_field(message: str, parameters: dict) -> str:
    """The document field a physics refusal names (its first word), else non-field."""
    match = re.match(r"(\w+)", message)
    name = match.group(1) if match else ""
    name = PHYSICS_FIELD_NAMES.get(name, name)
    return name if name in parameters else "non_field_errors"


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
        try:
            kind.build(attrs["parameters"], attrs["configuration"])
        except ValueError as error:
            field = _physics_field(str(error), attrs["parameters"])
            raise serializers.ValidationError({"parameters": {field: [str(error)]}}) from error
        return attrs


def validated_document(data) -> dict:
    """Validate a declared-load document; raises a DRF ValidationError naming the field."""
    serializer = DeclaredLoadSerializer(data=data)
    if not serializer.is_valid():
        raise serializers.ValidationError({"declared_load": serializer.errors})
    return dict(serializer.validated_data)


def physics_load(document: dict):
    """The shop.physics load model a validated document describes."""
    return LOAD_KINDS[document["kind"]].build(
        document["parameters"], document.get("configuration") or {}
    )


def _cautions(unit: Unit) -> list[str]:
    cautions = []
    if unit.category in AMPLIFIER_CATEGORIES:
        cautions.append(NAMEPLATE_CAUTIONS["amplifier"])
    if unit.construction == Construction.SWITCH_MODE:
        cautions.append(NAMEPLATE_CAUTIONS["switch_mode"])
    return cautions


def require_nameplate(unit: Unit) -> None:
    """Refuse (409) to model a unit whose nameplate was not legible."""
    if not unit.nameplate_known:
        raise Conflict(
            f"Unit {unit} has no legible nameplate (rated voltage unknown or power unknown), so no "
            "load can be taken from it. A lead must declare the load (declared_load) for a "
            "power-up test.",
            field="declared_load",
            code="nameplate_unknown",
        )


def nameplate_document(unit: Unit) -> dict:
    """The default declared load, built from the unit's nameplate, with its cautions."""
    require_nameplate(unit)
    cautions = _cautions(unit)
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


def unit_model_document(unit: Unit) -> dict:
    """A declared load of kind ``nameplate``: the unit's model from its nameplate and build.

    The model (transformer, heaters, switch-mode input...) and every assumption behind it
    come from ``shop.physics.nameplate.unit_load_from_nameplate``.
    """
    require_nameplate(unit)
    parameters = {
        "voltage": float(unit.rated_voltage),
        "power": float(unit.rated_power),
        "power_unit": unit.rated_power_unit,
        "category": unit.category,
        "construction": unit.construction,
        "frequency": unit.rated_frequency,
    }
    if unit.year is not None:
        parameters["year"] = int(unit.year)
    return {
        "kind": "nameplate",
        "parameters": parameters,
        "basis": "nameplate",
        "configuration": BenchConfiguration(data={}).to_internal_value({}),
        "cautions": _cautions(unit),
    }
