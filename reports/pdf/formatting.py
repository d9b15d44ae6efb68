"""How the documents print numbers, dates and free text: units, precision and escaping."""

from __future__ import annotations

import math
from datetime import date, datetime
from zoneinfo import ZoneInfo

from .fonts import runs

CURRENT_SIGNIFICANT_DIGITS = 3
NOT_RECORDED = "not recorded"
# Month names spelled here, not by strftime("%B"), so that the process locale cannot change them.
MONTHS = (
    "January",
    "February",
    "March",
    "April",
    "May",
    "June",
    "July",
    "August",
    "September",
    "October",
    "November",
    "December",
)
BEHAVIOUR_WORDS = {"steady": "steady", "flash_then_dims": "flash, then dim", "cycling": "cycling"}


def text(value) -> str:
    """Free text made safe for reportlab's paragraph mark-up; line breaks kept, each script
    set in a face that has it and right-to-left words in display order (fonts.runs)."""
    if value is None or value == "":
        return NOT_RECORDED
    return runs(str(value))


def volts(value) -> str:
    """A voltage to 0.1 V: "28.1 V"."""
    return f"{float(value):.1f} V"


def amperes(value) -> str:
    """A current to three significant figures ("0.870 A"), or "not measured"."""
    if value is None:
        return "not measured"
    current = float(value)
    if current == 0:
        return "0 A"
    decimals = CURRENT_SIGNIFICANT_DIGITS - 1 - math.floor(math.log10(abs(current)))
    return f"{current:.{max(decimals, 0)}f} A"


def draw(value, status: str) -> str:
    """Inferred draw as a multiple of the declared load: "1.02x".

    The judgement reports a draw beyond its search range as 0 (nothing measurable) or as
    unbounded, which a snapshot stores as null beside the ``draw_high`` status; a null
    elsewhere means the readings could not tell the draw.
    """
    if value is None or math.isinf(float(value)):
        return "unbounded (short)" if status == "draw_high" else "cannot be inferred"
    multiple = float(value)
    if math.isnan(multiple):
        return "cannot be inferred"
    if multiple == 0:
        return "none measurable"
    if multiple >= 100:
        return f"{multiple:.0f}x"
    return f"{multiple:.1f}x" if multiple >= 10 else f"{multiple:.2f}x"


def band(low, high) -> str:
    """A predicted range of unit volts: "26.9-29.8 V" with an en dash."""
    return f"{float(low):.1f}\u2013{float(high):.1f} V"


def glow(glow_seen: str | None, behaviour: str | None) -> str:
    """What the technician saw of the lamp: "faint, steady"."""
    words = [glow_seen or "glow not noted"]
    if behaviour:
        words.append(BEHAVIOUR_WORDS.get(behaviour, behaviour.replace("_", " ")))
    return ", ".join(words)


def day(iso: str | None, zone: str = "UTC") -> str:
    """An ISO date as "2 October 2027"; a date-time is first put in `zone` (an IANA name)."""
    if not iso:
        return NOT_RECORDED
    if len(iso) > 10:
        value = datetime.fromisoformat(iso)
        if value.tzinfo is not None:
            value = value.astimezone(ZoneInfo(zone))
        value = value.date()
    else:
        value = date.fromisoformat(iso)
    return f"{value.day} {MONTHS[value.month - 1]} {value.year}"


def moment(iso: str, zone: str = "UTC") -> str:
    """An ISO date-time in the shop's `zone`, named: "1 December 2026, 22:50 CET
    (Europe/Berlin)", "1 December 2026, 21:50 UTC" (or without zone when it has none)."""
    value = datetime.fromisoformat(iso)
    if value.tzinfo is None:
        return f"{day(iso)}, {value:%H:%M}"
    local = value.astimezone(ZoneInfo(zone))
    named = local.tzname() if local.tzname() == zone else f"{local.tzname()} ({zone})"
    return f"{day(local.isoformat())}, {local:%H:%M} {named}"


def unit_name(unit: dict) -> str:
    """Maker, model and year as one line: "Brightwave Console 7 (1954)"."""
    name = " ".join(part for part in (unit.get("maker"), unit.get("model_name")) if part)
    name = name or "Unnamed unit"
    return f"{name} ({unit['year']})" if unit.get("year") else name


def rating(unit: dict) -> str:
    """The nameplate's rated volts, power and frequency, as given: "120 V, 65 W, 60 Hz"."""
    parts = [unit.get(key) for key in ("rated_voltage", "rated_power", "rated_frequency")]
    return ", ".join(str(part) for part in parts if part) or NOT_RECORDED
