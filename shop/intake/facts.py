"""The unit facts the bench rules read, and which changes of them lower the recorded hazard."""

from __future__ import annotations

from decimal import Decimal

from .models import (
    LIVE_CHASSIS_CONSTRUCTIONS,
    FrequencyRating,
    ProtectionClass,
    Unit,
)

# The fields a power-up test freezes at open and the bench rules read: the isolation rule
# (construction), the rig/unit voltage and frequency checks (nameplate, selector) and the
# declared load built from the nameplate.
RULE_FIELDS = (
    "construction",
    "protection_class",
    "rated_voltage",
    "rated_power",
    "rated_power_unit",
    "rated_frequency",
    "voltage_selector_setting",
)
# A rated voltage is taken to cover this fraction either side: IEC 60038 gives 230 V +/-10 %
# for supply voltages, and equipment is built to run across its supply's tolerance.
RATED_VOLTAGE_TOLERANCE = Decimal("0.10")


def _plain(value):
    if isinstance(value, Decimal):
        return f"{value.normalize():f}"
    return value


def unit_facts(unit: Unit) -> dict:
    """The rule facts of `unit` as JSON-ready values, with the words a certificate prints."""
    facts = {name: _plain(getattr(unit, name)) for name in RULE_FIELDS}
    facts.update(
        category=unit.category,
        year=unit.year,
        construction_display=unit.get_construction_display(),
        protection_class_display=unit.get_protection_class_display(),
        rated_frequency_display=unit.get_rated_frequency_display(),
        chassis_may_be_live=unit.construction in LIVE_CHASSIS_CONSTRUCTIONS,
    )
    return facts


def changed_rule_fields(before: dict, after: dict) -> list[str]:
    """The rule fields whose values differ between two `unit_facts` dicts."""
    return [name for name in RULE_FIELDS if before.get(name) != after.get(name)]


def hazard_lowering(unit: Unit, changes: dict) -> list[str]:
    """The fields of `changes` that lower the unit's recorded hazard.

    A live-chassis construction (or "unknown") changed to one whose chassis is not live, and a
    protection class or rated frequency changed from "unknown" to a stated value: each drops
    a caution the bench would otherwise apply.
    """
    lowered = []
    if "construction" in changes:
        new = changes["construction"]
        if unit.construction in LIVE_CHASSIS_CONSTRUCTIONS and new not in (
            LIVE_CHASSIS_CONSTRUCTIONS
        ):
            lowered.append("construction")
    if "protection_class" in changes:
        if unit.protection_class == ProtectionClass.UNKNOWN and (
            changes["protection_class"] != ProtectionClass.UNKNOWN
        ):
            lowered.append("protection_class")
    if "rated_frequency" in changes:
        if unit.rated_frequency == FrequencyRating.UNKNOWN and (
            changes["rated_frequency"] != FrequencyRating.UNKNOWN
        ):
            lowered.append("rated_frequency")
    return lowered


def rule_fields_changed(unit: Unit, changes: dict) -> list[str]:
    """The rule fields `changes` would give a new value."""
    return [
        name for name in RULE_FIELDS if name in changes and changes[name] != getattr(unit, name)
    ]


def rated_voltage_range(facts: dict) -> tuple[Decimal, Decimal, str] | None:
    """The mains voltages the unit may be powered on: (low, high, what they rest on), or None
    when neither a selector setting nor a legible rated voltage is recorded.

    A voltage selector setting, where recorded, decides; else the nameplate rated voltage.
    """
    if facts.get("voltage_selector_setting") is not None:
        centre, basis = Decimal(str(facts["voltage_selector_setting"])), "voltage selector"
    elif facts.get("rated_voltage") is not None:
        centre, basis = Decimal(str(facts["rated_voltage"])), "nameplate"
    else:
        return None
    spread = centre * RATED_VOLTAGE_TOLERANCE
    return centre - spread, centre + spread, basis
