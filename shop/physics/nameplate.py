"""A reasonable unit model from its nameplate, construction and bench configuration."""

from functools import lru_cache

import numpy as np

from shop.physics.composite import CompositeLoad
from shop.physics.heater import HeaterLoad
from shop.physics.loads import ResistiveLoad, check_scalar
from shop.physics.rectifier import RectifierLoad
from shop.physics.switch_mode import (
    CAPACITOR_INPUT,
    CORRECTED_ABOVE,
    POWER_FACTOR_CORRECTED,
    RESERVOIR_PER_WATT,
    ConstantPowerLoad,
)
from shop.physics.transformer import TransformerLoad

CATEGORIES = (
    "radio",
    "amplifier",
    "instrument_amplifier",
    "hifi",
    "television",
    "test_gear",
    "bench_supply",
    "home_built",
    "other",
)
CONSTRUCTIONS = (
    "isolating_transformer",
    "own_autotransformer",
    "transformerless",
    "switch_mode",
    "unknown",
)
AMPLIFIER_CATEGORIES = ("amplifier", "instrument_amplifier", "hifi")
POWER_UNITS = ("W", "VA")

# Gear made in or before this year is taken as valve gear, later as solid state, unless said:
# valves gave way to transistors in consumer gear through the 1960s, while guitar and other
# instrument amplifiers kept them well into the 1970s (from memory).
LAST_VALVE_YEAR = {"instrument_amplifier": 1975, "other": 1965}
# Share of a valve set's nameplate power taken by its heaters: about half to two thirds in a
# series-string (transformerless) set, about a third in a transformer set (from memory: a
# 0.15 A string across 120 V is 18 W of a 30 W set; a 6.3 V 2-3 A winding is 13-19 W of 50-65
# W). The rest is the rectifier's DC load.
HEATER_SHARE = {"transformerless": 0.6, "transformer": 0.35}
# With the output valves pulled the DC load falls to the small-signal stages' share
# (common practice, no source).
PULLED_VALVES_DC_SHARE = 0.25
# A transformer is rated above the real power it delivers to a rectifier's peaky current:
# VA about 1.2 times the watts (common practice, no source).
VA_PER_WATT = 1.2
# Solid-state amplifiers are rated at full output and idle far lower: about a fifth of the
# nameplate (class AB, from memory); other solid-state gear draws most of its nameplate.
SOLID_STATE_IDLE_SHARE = {"amplifier": 0.2, "other": 0.7}
# A switch-mode unit on the bench without a load idles at a few watts: a twentieth of its
# nameplate, at least a watt (from memory).
SWITCH_MODE_IDLE_SHARE = 0.05
SWITCH_MODE_MIN_IDLE = 1.0  # [W]
# Most switch-mode gear has a universal input, rated 100-240 V (from memory); it starts
# relative to the lowest voltage on that range.
UNIVERSAL_INPUT_LOWEST = 100.0  # [V]
# DC supplies as built (from memory, typical figures): a valve set's HT rail and reservoir,
# a series-string set's half-wave rail straight off the mains (a little under the crest),
# and a solid-state unit's rail and reservoir.
VALVE_DC_VOLTAGE = {"amplifier": 350.0, "other": 250.0}  # [V]
VALVE_RESERVOIR = 40e-6  # [F]
SERIES_STRING_RESERVOIR = 50e-6  # [F]
SOLID_STATE_DC_VOLTAGE = {"amplifier": 40.0, "other": 15.0}  # [V]
SOLID_STATE_RESERVOIR = 4700e-6  # [F]
# A supply's DC load is tuned until it draws its share of the nameplate to this fraction.
SUPPLY_POWER_AGREEMENT = 0.02
SUPPLY_TUNING_STEPS = 8
# A capacitor input draws its charge in peaks of a few times its DC current (from memory).
PEAK_PER_DC = 3.0
# Its draw is quoted on the mains of its voltage: 50 Hz above 150 V, 60 Hz below (an
# assumption where the nameplate does not say).
SUPPLY_FREQUENCY_SPLIT = 150.0  # [V]
SUPPLY_FREQUENCY = {True: 50.0, False: 60.0}  # [Hz] keyed by "above the split"
RECTIFIER_WORDS = {
    "centre_tap": "full-wave centre-tap",
    "half_wave": "half-wave",
    "bridge": "bridge",
}


def _check_choice(value, name, choices):
    if value not in choices:
        raise ValueError(f"{name} must be one of {', '.join(choices)} (got {value!r})")
    return value


def _is_valve(valve, year, category, assumptions):
    if valve is not None:
        return bool(valve)
    if year is None:
        assumptions.append("Year not known: taken as solid-state gear (say valve=True if not).")
        return False
    last = LAST_VALVE_YEAR.get(category, LAST_VALVE_YEAR["other"])
    guess = int(year) <= last
    assumptions.append(
        f"Made in {int(year)}: taken as {'valve' if guess else 'solid-state'} gear (such gear "
        f"of {last} and before is taken as valve gear)."
    )
    return guess


def _kind(category):
    return "amplifier" if category in AMPLIFIER_CATEGORIES else "other"


def _supply(
    voltage, dc_power, dc_voltage, reservoir, topology, rectifier, assumptions, *, direct=False
):
    """A rectifier giving about ``dc_voltage`` and drawing ``dc_power``, with its assumption."""
    assumptions.append(
        f"A {rectifier} {RECTIFIER_WORDS[topology]} rectifier "
        f"{'straight off the mains' if direct else 'on its own winding'}, "
        f"{1e6 * reservoir:.3g} uF reservoir, about {dc_voltage:.3g} V DC, its load set so "
        f"that it draws {dc_power:.3g} W (typical figures, from memory)."
    )
    return _tuned_supply(voltage, dc_power, dc_voltage, reservoir, topology, rectifier, direct)


@lru_cache(maxsize=128)
def _tuned_supply(voltage, dc_power, dc_voltage, reservoir, topology, rectifier, direct):
    """The rectifier whose DC load makes it draw ``dc_power`` from the mains (cached).

    The winding is chosen so that the crest, less the drops of the path at the peaks of a
    capacitor input (``PEAK_PER_DC`` times the DC current), gives ``dc_voltage``; the
    draw is then close to inverse in the load resistance, so a few secant steps in their
    logarithms bring it within ``SUPPLY_POWER_AGREEMENT``.
    """
    frequency = SUPPLY_FREQUENCY[voltage > SUPPLY_FREQUENCY_SPLIT]
    probe = RectifierLoad(
        voltage,
        reservoir,
        topology=topology,
        rectifier=rectifier,
        dc_resistance=dc_voltage**2 / dc_power,
        turns_ratio=None if direct else 1.0,
    )
    drops = probe.path_drop + PEAK_PER_DC * (dc_power / dc_voltage) * probe.diode_resistance
    turns = None if direct else (dc_voltage + drops) / (np.sqrt(2.0) * voltage)

    def build(resistance):
        return RectifierLoad(
            voltage,
            reservoir,
            topology=topology,
            rectifier=rectifier,
            dc_resistance=resistance,
            turns_ratio=turns,
            rated_frequency=frequency,
        )

    resistance = dc_voltage**2 / dc_power
    supply = build(resistance)
    slope = -1.0  # d log(draw) / d log(resistance), exact for a plain resistance
    previous = None
    for _ in range(SUPPLY_TUNING_STEPS):
        drawn = np.log(float(supply.rated_power))
        if abs(drawn - np.log(dc_power)) <= SUPPLY_POWER_AGREEMENT:
            break
        if previous is not None and drawn != previous[1]:
            slope = (drawn - previous[1]) / (np.log(resistance) - previous[0])
        previous = (np.log(resistance), drawn)
        resistance *= np.exp((np.log(dc_power) - drawn) / slope)
        supply = build(resistance)
    return supply


def _valve_set(
    voltage, power, category, series_string, rated_frequency, configuration, assumptions
):
    """Members of a valve set: heaters, the rectifier and its DC load, and the transformer."""
    heater_share = HEATER_SHARE["transformerless" if series_string else "transformer"]
    heater_power = heater_share * power
    dc_power = (1.0 - heater_share) * power
    assumptions.append(
        f"Heaters take {100 * heater_share:.0f} % of the nameplate ({heater_power:.3g} W) and "
        f"start cold; the rectifier's DC load takes the rest ({dc_power:.3g} W)."
    )
    if configuration["rectifier_pulled"]:
        dc_power = 0.0
        assumptions.append("Rectifier pulled: no DC load.")
    elif configuration["valves_pulled"]:
        dc_power *= PULLED_VALVES_DC_SHARE
        assumptions.append(
            f"Valves pulled: the DC load falls to {100 * PULLED_VALVES_DC_SHARE:.0f} % "
            f"({dc_power:.3g} W)."
        )
    members = [HeaterLoad(voltage, heater_power)]
    if dc_power > 0 and series_string:
        rail = 0.9 * np.sqrt(2.0) * voltage
        members.append(
            _supply(
                voltage,
                dc_power,
                rail,
                SERIES_STRING_RESERVOIR,
                "half_wave",
                "valve",
                assumptions,
                direct=True,
            )
        )
    elif dc_power > 0:
        rail = VALVE_DC_VOLTAGE[_kind(category)]
        members.append(
            _supply(voltage, dc_power, rail, VALVE_RESERVOIR, "centre_tap", "valve", assumptions)
        )
    if not series_string:
        members.append(
            TransformerLoad(voltage, VA_PER_WATT * power, rated_frequency=rated_frequency)
        )
    return members


def unit_load_from_nameplate(
    *,
    rated_voltage,
    rated_power,
    power_unit="W",
    category="other",
    construction="unknown",
    rated_frequency=None,
    year=None,
    valve=None,
    valves_pulled=False,
    rectifier_pulled=False,
    dummy_load_on_output=False,
):
    """A reasonable model of what the unit should draw on the bench, from its nameplate.

    Parameters
    ----------
    rated_voltage : float
        Nameplate mains voltage [V].
    rated_power : float
        Nameplate power [W or VA, as ``power_unit``].
    power_unit : str, default "W"
        ``"W"`` or ``"VA"``.
    category : str, default "other"
        One of ``CATEGORIES``.
    construction : str, default "unknown"
        One of ``CONSTRUCTIONS``.
    rated_frequency : float, optional
        The frequency the unit was built for [Hz]; ``None`` when the nameplate says 50/60 Hz
        or nothing (taken as built for the mains it runs on).
    year : int, optional
        Year of manufacture, to tell valve from solid-state gear when ``valve`` is not given.
    valve : bool, optional
        Whether it is valve gear.
    valves_pulled, rectifier_pulled, dummy_load_on_output : bool, default False
        The bench configuration of the test.

    Returns
    -------
    load
        A :class:`CompositeLoad` (or a single model) whose ``describe()["assumptions"]``
        lists every assumption made, in plain words.

    Notes
    -----
    - Switch-mode: a :class:`ConstantPowerLoad` idling at ``SWITCH_MODE_IDLE_SHARE`` of the
      nameplate (at least ``SWITCH_MODE_MIN_IDLE``), with a universal input: a capacitor
      input with a reservoir sized to the nameplate up to ``CORRECTED_ABOVE`` (75 W), a
      power-factor-corrected one above.
    - Valve gear: heaters (:class:`HeaterLoad`) with ``HEATER_SHARE`` of the nameplate, the
      rest as the rectifier's DC load; with a power transformer also its magnetising branch
      (:class:`TransformerLoad` on no load, rated ``VA_PER_WATT`` times the nameplate).
      Transformerless sets have a series heater string across the mains.
    - Solid-state gear with a transformer: the transformer and a resistance drawing the idle
      share of the nameplate (``SOLID_STATE_IDLE_SHARE``).
    - Unknown construction: a resistance drawing the nameplate power.

    Every share is common practice or recalled (see the module constants); a measured idle
    draw, declared as its own kind, is always better.
    """
    voltage = check_scalar(rated_voltage, "rated_voltage", "V", positive=True, allow_zero=False)
    power = check_scalar(rated_power, "rated_power", "W", positive=True, allow_zero=False)
    _check_choice(power_unit, "power_unit", POWER_UNITS)
    _check_choice(category, "category", CATEGORIES)
    _check_choice(construction, "construction", CONSTRUCTIONS)
    configuration = {
        "valves_pulled": bool(valves_pulled),
        "rectifier_pulled": bool(rectifier_pulled),
        "dummy_load_on_output": bool(dummy_load_on_output),
    }
    assumptions = []
    if power_unit == "VA":
        assumptions.append(f"The nameplate's {power:g} VA is taken as {power:g} W of draw.")
    if rated_frequency is None:
        assumptions.append("Frequency not stated singly: taken as built for the bench's mains.")

    if construction == "switch_mode":
        idle = max(SWITCH_MODE_IDLE_SHARE * power, SWITCH_MODE_MIN_IDLE)
        assumptions.append(
            f"Switch-mode, no load on its output: idles at {idle:.3g} W "
            f"({100 * SWITCH_MODE_IDLE_SHARE:.0f} % of the nameplate, at least "
            f"{SWITCH_MODE_MIN_IDLE:g} W)."
        )
        assumptions.append(
            f"Universal input: starts and stops relative to {UNIVERSAL_INPUT_LOWEST:g} V."
        )
        if power > CORRECTED_ABOVE:
            assumptions.append(
                f"Rated above {CORRECTED_ABOVE:g} W: an input with power-factor correction "
                "(IEC 61000-3-2 limits the harmonics above 75 W; from memory)."
            )
            unit = ConstantPowerLoad(
                idle, rated_voltage=UNIVERSAL_INPUT_LOWEST, input_stage=POWER_FACTOR_CORRECTED
            )
        else:
            reservoir = RESERVOIR_PER_WATT * power
            assumptions.append(
                f"Rated {CORRECTED_ABOVE:g} W or less: a capacitor input without power-factor "
                f"correction (IEC 61000-3-2 limits the harmonics only above 75 W; from "
                f"memory), its reservoir {1e6 * reservoir:.3g} uF, "
                f"{1e6 * RESERVOIR_PER_WATT:.3g} uF per nameplate watt (common practice, no "
                "source)."
            )
            unit = ConstantPowerLoad(
                idle,
                rated_voltage=UNIVERSAL_INPUT_LOWEST,
                reservoir=reservoir,
                input_stage=CAPACITOR_INPUT,
            )
        return unit.with_assumptions(assumptions)
    if construction == "unknown":
        assumptions.append("Construction unknown: taken as a resistance drawing the nameplate.")
        return CompositeLoad([ResistiveLoad.from_rating(voltage, power)]).with_assumptions(
            assumptions
        )

    valve_gear = _is_valve(valve, year, category, assumptions)
    series_string = construction == "transformerless"
    if construction == "own_autotransformer":
        assumptions.append(
            "Its own autotransformer is taken as a transformer (same magnetising current)."
        )
    if category in AMPLIFIER_CATEGORIES and configuration["dummy_load_on_output"]:
        assumptions.append("Dummy load on the output, no signal: the amplifier idles.")
    if valve_gear:
        members = _valve_set(
            voltage, power, category, series_string, rated_frequency, configuration, assumptions
        )
    else:
        share = SOLID_STATE_IDLE_SHARE[_kind(category)]
        idle = share * power
        assumptions.append(
            f"Solid state: draws {100 * share:.0f} % of the nameplate ({idle:.3g} W) on the bench."
        )
        if series_string:
            members = [ResistiveLoad.from_rating(voltage, idle)]
            assumptions.append("Transformerless solid state: taken as a resistance.")
        else:
            rail = SOLID_STATE_DC_VOLTAGE[_kind(category)]
            members = [
                _supply(
                    voltage, idle, rail, SOLID_STATE_RESERVOIR, "bridge", "silicon", assumptions
                )
            ]
        if not series_string:
            members.append(
                TransformerLoad(voltage, VA_PER_WATT * power, rated_frequency=rated_frequency)
            )
    if not series_string:
        assumptions.append(
            f"Power transformer rated {VA_PER_WATT:g} VA per nameplate watt, E-I core."
        )
    return CompositeLoad(members).with_assumptions(assumptions)
