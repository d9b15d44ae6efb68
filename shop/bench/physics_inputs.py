"""Turn bench records into the plain numbers and objects that shop.physics takes."""

from __future__ import annotations

from shop.physics.lamp import Lamp as PhysicsLamp
from shop.physics.lamp import LampBank as PhysicsBank
from shop.physics.materials import TABLE_MIN_TEMPERATURE

from .models import Lamp, LampBank, LampTechnology


def lamp_parameters(lamp: Lamp) -> dict:
    """The numbers that define one lamp's model: rating, fill and any calibration."""
    parameters = {
        "label": lamp.label,
        "rated_voltage": float(lamp.rated_voltage),
        "rated_power": float(lamp.rated_power),
        "fill": "halogen" if lamp.technology == LampTechnology.HALOGEN else lamp.fill,
    }
    if lamp.fitted_rated_temperature is not None:
        parameters["rated_temperature"] = lamp.fitted_rated_temperature
        parameters["conduction_fraction"] = lamp.fitted_conduction_fraction
    elif lamp.cold_resistance is not None:
        parameters["cold_resistance"] = float(lamp.cold_resistance)
    return parameters


def limiter_parameters(*, lamp: Lamp | None = None, bank: LampBank | None = None) -> list[dict]:
    """The lamps in circuit, one entry each (a bank lists all of its lamps)."""
    lamps = [lamp] if lamp is not None else list(bank.lamps.all())
    return [lamp_parameters(item) for item in lamps]


def modelled_ambient(ambient_temperature: float) -> float:
    """The ambient the lamp model uses: the resistivity table starts at 300 K, so a cooler
    bench is modelled at 300 K (about 1.5 % on the cold resistance at 20 C) and the inputs
    record that."""
    return max(float(ambient_temperature), TABLE_MIN_TEMPERATURE)


def physics_limiter(lamps: list[dict], ambient_temperature: float = TABLE_MIN_TEMPERATURE):
    """A shop.physics Lamp, or LampBank for several lamps, from `limiter_parameters` output."""
    ambient = modelled_ambient(ambient_temperature)
    built = [
        PhysicsLamp(**{k: v for k, v in item.items() if k != "label"}, ambient_temperature=ambient)
        for item in lamps
    ]
    return built[0] if len(built) == 1 else PhysicsBank(built)
