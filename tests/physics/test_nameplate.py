"""A unit model from its nameplate, construction and bench configuration."""

import pytest

from shop.physics.composite import CompositeLoad
from shop.physics.heater import HeaterLoad
from shop.physics.nameplate import unit_load_from_nameplate
from shop.physics.rectifier import RectifierLoad
from shop.physics.switch_mode import ConstantPowerLoad
from shop.physics.transformer import TransformerLoad

RADIO = {
    "rated_voltage": 120.0,
    "rated_power": 65.0,
    "category": "radio",
    "construction": "isolating_transformer",
    "rated_frequency": 60.0,
    "year": 1954,
}


def _kinds(load):
    return sorted(type(member).__name__ for member in load.members)


def test_a_valve_radio_is_heaters_a_valve_rectifier_and_its_transformer():
    load = unit_load_from_nameplate(**RADIO)
    assert isinstance(load, CompositeLoad)
    assert _kinds(load) == ["HeaterLoad", "RectifierLoad", "TransformerLoad"]
    rectifier = next(m for m in load.members if isinstance(m, RectifierLoad))
    assert (rectifier.topology, rectifier.rectifier) == ("centre_tap", "valve")


def test_a_series_string_set_rectifies_half_wave_straight_off_the_mains():
    load = unit_load_from_nameplate(**{**RADIO, "construction": "transformerless"})
    assert _kinds(load) == ["HeaterLoad", "RectifierLoad"]
    rectifier = next(m for m in load.members if isinstance(m, RectifierLoad))
    assert rectifier.topology == "half_wave" and rectifier.direct


def test_the_valve_set_draws_about_its_nameplate():
    load = unit_load_from_nameplate(**RADIO)
    # The rectifier's load is tuned to 2 % of its share; the transformer adds its losses.
    assert 65.0 * 0.98 <= float(load.rated_power) <= 65.0 * 1.05


def test_pulling_the_rectifier_leaves_heaters_and_transformer():
    load = unit_load_from_nameplate(**RADIO, rectifier_pulled=True)
    assert _kinds(load) == ["HeaterLoad", "TransformerLoad"]
    assert any("Rectifier pulled" in line for line in load.describe()["assumptions"])


def test_pulling_valves_lowers_the_declared_draw():
    full = unit_load_from_nameplate(**RADIO)
    pulled = unit_load_from_nameplate(**RADIO, valves_pulled=True)
    assert float(pulled.rated_power) < float(full.rated_power)


def test_a_solid_state_amplifier_idles_at_a_fifth_of_its_nameplate():
    load = unit_load_from_nameplate(
        rated_voltage=230.0,
        rated_power=180.0,
        category="hifi",
        construction="isolating_transformer",
        rated_frequency=50.0,
        year=1979,
    )
    supply = next(m for m in load.members if isinstance(m, RectifierLoad))
    # Tuned to within SUPPLY_POWER_AGREEMENT (2 %) of a fifth of the nameplate.
    assert float(supply.rated_power) == pytest.approx(0.2 * 180.0, rel=0.02)
    assert supply.topology == "bridge"
    assert any(isinstance(m, TransformerLoad) for m in load.members)


def test_a_switch_mode_unit_is_a_constant_power_input_idling_at_a_few_watts():
    load = unit_load_from_nameplate(
        rated_voltage=230.0, rated_power=90.0, category="other", construction="switch_mode"
    )
    assert isinstance(load, ConstantPowerLoad)
    assert float(load.rated_power) == pytest.approx(4.5, rel=1e-12)
    assert load.start_voltage == pytest.approx(80.0, rel=1e-12)


def test_an_unknown_construction_is_a_resistance_and_says_so():
    load = unit_load_from_nameplate(rated_voltage=230.0, rated_power=25.0)
    assert _kinds(load) == ["ResistiveLoad"]
    assert any("Construction unknown" in line for line in load.describe()["assumptions"])


def test_every_model_lists_the_assumptions_it_made():
    load = unit_load_from_nameplate(**{**RADIO, "year": None, "valve": True})
    assumptions = load.describe()["assumptions"]
    assert any("Heaters take 35 %" in line for line in assumptions)
    assert any("1.2 VA per nameplate watt" in line for line in assumptions)
    assert any("No-load current" in line for line in assumptions)


def test_the_year_decides_valve_or_solid_state_when_not_said():
    old = unit_load_from_nameplate(**{**RADIO, "year": 1960})
    new = unit_load_from_nameplate(**{**RADIO, "year": 1975})
    assert any(isinstance(m, HeaterLoad) for m in old.members)
    assert not any(isinstance(m, HeaterLoad) for m in new.members)


@pytest.mark.parametrize(
    ("change", "name"),
    [
        ({"category": "toaster"}, "category"),
        ({"construction": "magic"}, "construction"),
        ({"rated_power": 0.0}, "rated_power"),
        ({"power_unit": "kW"}, "power_unit"),
    ],
)
def test_bad_nameplates_are_refused_by_name(change, name):
    with pytest.raises(ValueError, match=name):
        unit_load_from_nameplate(**{**RADIO, **change})
