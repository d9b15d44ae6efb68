"""An independent tungsten lamp and series circuit that makes readings for the judgement tests.

It shares no code with ``shop.physics`` (numpy and scipy only) and none of its data: its own
resistivity source, its own emissivity, its own heat balance and its own solver. A wrong
filament model in ``shop.physics`` would then show as readings the judgement misjudges,
rather than pass because the readings came from the same model.

- Resistivity of tungsten: the polynomial fit by G. K. White and M. L. Minges, Int. J.
  Thermophys. 18, 1269 (1997), of the recommended values of P. D. Desai et al., J. Phys.
  Chem. Ref. Data 13, 1069 (1984), valid 300-3695 K; the coefficients are read from
  ``fixtures/physics/checks/tungsten_resistivity_white_minges.csv``. (``shop.physics`` uses
  the classic lamp-filament table of Forsythe & Worthing and Jones & Langmuir.)
- Total hemispherical emissivity of tungsten: the values of W. E. Forsythe and A. G.
  Worthing, Astrophys. J. 61, 146 (1925), as tabulated in handbooks, every 200 K from 1000 K
  (from memory), interpolated linearly. (``shop.physics`` uses the fit by Tolias, 2017.)
- Heat balance: radiation, ``eps(T) sigma A (T^4 - T_amb^4)``, plus the loss to the fill gas
  taken as natural convection, proportional to ``(T - T_amb)^1.25`` (the laminar
  free-convection exponent, from memory), that loss's share at rating fixed by
  ``GAS_SHARE``. (``shop.physics`` takes the gas and lead loss as linear in T.)
- Rated filament temperature: rising with wattage, ``2450 K + 200 K log10(P / 1 W)``
  (2730 K at 25 W, 2850 K at 100 W: within the 2700-2870 K that general-service lamps run
  at, from memory).
- Circuit: a supply of RMS volts ``supply`` behind the rig's windings (resistance
  ``windings``), the lamp and a resistive unit in series, all in phase; solved for the
  filament temperature with ``scipy.optimize.brentq``. The source is read at the rig's
  output, after the windings, as a technician's meter reads it. A transformer, bridge and
  reservoir unit is stepped through the cycle on its own (``bridge_operating_point``).
"""

from __future__ import annotations

import csv
from dataclasses import dataclass
from pathlib import Path

import numpy as np
from scipy.optimize import brentq

WHITE_MINGES = Path(__file__).resolve().parents[2] / (
    "fixtures/physics/checks/tungsten_resistivity_white_minges.csv"
)
STEFAN_BOLTZMANN = 5.670374419e-8  # [W m^-2 K^-4], CODATA 2018
AMBIENT = 300.0  # [K]
HOTTEST = 3600.0  # [K] well inside the White & Minges fit's range
# Total emissivity of tungsten by temperature [K] (Forsythe & Worthing 1925 as tabulated in
# handbooks, from memory); 300 K from the same tables' room-temperature value (from memory).
EMISSIVITY_TABLE = (
    (300.0, 0.032),
    (1000.0, 0.114),
    (1200.0, 0.143),
    (1400.0, 0.175),
    (1600.0, 0.207),
    (1800.0, 0.236),
    (2000.0, 0.260),
    (2200.0, 0.281),
    (2400.0, 0.297),
    (2600.0, 0.312),
    (2800.0, 0.324),
    (3000.0, 0.333),
    (3200.0, 0.341),
    (3400.0, 0.348),
    (3600.0, 0.354),
)
# Share of a gas-filled lamp's power at rating lost to the fill gas and leads (from memory:
# a tenth to a fifth for general-service lamps).
GAS_SHARE = 0.15
FREE_CONVECTION_EXPONENT = 1.25


def _white_minges_coefficients():
    with WHITE_MINGES.open(newline="") as handle:
        rows = list(csv.DictReader(handle))
    by_power = {int(row["power_of_t"]): float(row["coefficient_microohm_cm"]) for row in rows}
    return np.array([by_power[power] for power in sorted(by_power)])


COEFFICIENTS = _white_minges_coefficients()  # rho = sum c_k T^k [microohm cm]


def resistivity(temperature):
    """Tungsten resistivity [microohm cm] at ``temperature`` [K] (White & Minges fit)."""
    temperature = np.asarray(temperature, dtype=float)
    return sum(c * temperature**k for k, c in enumerate(COEFFICIENTS))


def emissivity(temperature):
    """Total hemispherical emissivity of tungsten at ``temperature`` [K] (Forsythe & Worthing)."""
    kelvin, values = zip(*EMISSIVITY_TABLE, strict=True)
    return np.interp(temperature, kelvin, values)


@dataclass(frozen=True)
class ReferenceLamp:
    """A gas-filled general-service lamp: rating, and its filament temperature at rating."""

    rated_voltage: float  # [V]
    rated_power: float  # [W]
    rated_temperature: float  # [K]

    @classmethod
    def typical(cls, rated_voltage, rated_power, power_factor=1.0, temperature_shift=0.0):
        """A lamp of that rating, one of its production spread if factor and shift are given."""
        temperature = 2450.0 + 200.0 * np.log10(rated_power) + temperature_shift
        return cls(rated_voltage, rated_power * power_factor, float(temperature))

    @property
    def hot_resistance(self):
        return self.rated_voltage**2 / self.rated_power

    def resistance(self, temperature):
        """Filament resistance [ohm] at ``temperature`` [K]."""
        return self.hot_resistance * resistivity(temperature) / resistivity(self.rated_temperature)

    def loss(self, temperature):
        """Power the filament loses at ``temperature`` [K], radiation plus fill gas [W]."""
        rated = self.rated_temperature

        def radiation(t):
            return emissivity(t) * STEFAN_BOLTZMANN * (t**4 - AMBIENT**4)

        def gas(t):
            return (t - AMBIENT) ** FREE_CONVECTION_EXPONENT

        return self.rated_power * (
            (1.0 - GAS_SHARE) * radiation(temperature) / radiation(rated)
            + GAS_SHARE * gas(temperature) / gas(rated)
        )

    def current(self, temperature):
        """Current [A] that holds the filament at ``temperature`` [K]: ``I^2 R = loss``."""
        return np.sqrt(self.loss(temperature) / self.resistance(temperature))


@dataclass(frozen=True)
class Point:
    """One steady operating point."""

    supply: float  # [V] ahead of the windings
    rig_output: float  # [V] at the rig's output
    load_voltage: float  # [V]
    current: float  # [A]
    lamp_voltage: float  # [V]
    filament_temperature: float  # [K]


def operating_point(lamp, resistance, supply, windings=0.0):
    """A resistive unit of ``resistance`` [ohm] (inf: open) through the lamp from ``supply``.

    Returns the unit's, the lamp's and the rig output's volts and the current.
    """
    if supply <= 0.0 or np.isinf(resistance):
        return Point(supply, supply, supply, 0.0, 0.0, AMBIENT)

    def excess(temperature):
        current = lamp.current(temperature)
        return current * (lamp.resistance(temperature) + windings + resistance) - supply

    temperature = brentq(excess, AMBIENT, HOTTEST, xtol=1e-9, rtol=1e-12)
    current = float(lamp.current(temperature))
    lamp_voltage = current * float(lamp.resistance(temperature))
    return Point(
        supply=supply,
        rig_output=current * (float(lamp.resistance(temperature)) + resistance),
        load_voltage=current * resistance,
        current=current,
        lamp_voltage=lamp_voltage,
        filament_temperature=float(temperature),
    )


def meter_reading(value, relative, absolute, rng):
    """A meter's reading of ``value``: Gaussian error of half its stated limit, clipped at it."""
    limit = relative * abs(value) + absolute
    return max(value + float(np.clip(rng.normal(0.0, limit / 2.0), -limit, limit)), 0.0)


@dataclass(frozen=True)
class BridgeSupply:
    """A transformer, a silicon bridge and a reservoir capacitor feeding a resistive DC load.

    The transformer is ideal but for its winding resistance referred to the secondary; each
    conducting diode drops a fixed ``diode_drop``; no magnetising current.
    """

    turns_ratio: float  # secondary / primary
    capacitance: float  # [F]
    dc_resistance: float  # [ohm]
    winding_resistance: float = 0.5  # [ohm] referred to the secondary
    diode_drop: float = 0.8  # [V] per diode, silicon at a few amperes (from memory)

    def doubled(self, factor):
        """The same supply drawing ``factor`` times as much: the DC load divided."""
        return BridgeSupply(
            self.turns_ratio,
            self.capacitance * factor,
            self.dc_resistance / factor,
            self.winding_resistance / factor,
            self.diode_drop,
        )


SUPPLY_CYCLES = 15  # cycles from switch-on to the one measured; the reservoir settles in ~10
SUPPLY_STEPS_PER_CYCLE = 600


def _bridge_cycle(supply_unit, primary_resistance, supply, frequency):
    """RMS primary current and the instantaneous supply and primary current over a last cycle.

    Steps of a 600th of a cycle on the reservoir voltage (the stiff part, charging
    through the referred resistance, is solved exactly within each step).
    """
    n = supply_unit.turns_ratio
    referred = primary_resistance * n**2 + supply_unit.winding_resistance
    period = 1.0 / frequency
    step = period / SUPPLY_STEPS_PER_CYCLE
    times = np.arange(SUPPLY_CYCLES * SUPPLY_STEPS_PER_CYCLE) * step
    source = np.sqrt(2.0) * supply * np.sin(2.0 * np.pi * frequency * times)
    reservoir = 0.0
    charging = np.empty_like(times)
    decay = step / (supply_unit.dc_resistance * supply_unit.capacitance)
    for index, volts in enumerate(source):
        drive = n * abs(volts) - 2.0 * supply_unit.diode_drop
        if drive > reservoir:
            # Charging through `referred` towards `drive` while the load discharges: the
            # step's exact exponential for the two resistances in parallel.
            tau = supply_unit.capacitance / (1.0 / referred + 1.0 / supply_unit.dc_resistance)
            target = drive * supply_unit.dc_resistance / (supply_unit.dc_resistance + referred)
            reservoir = target + (reservoir - target) * np.exp(-step / tau)
            charging[index] = (drive - reservoir) / referred
        else:
            reservoir *= np.exp(-decay)
            charging[index] = 0.0
    last = slice((SUPPLY_CYCLES - 1) * SUPPLY_STEPS_PER_CYCLE, None)
    primary = n * charging[last] * np.sign(source[last])
    return primary, source[last]


def bridge_operating_point(lamp, supply_unit, supply, windings=0.0, frequency=60.0):
    """The bridge supply through the lamp from ``supply`` [V RMS] behind the windings.

    The filament is held at one temperature through the cycle (its heat capacity smooths a
    100-120 Hz ripple; the thermal time of a general-service filament is a tenth of a second
    or more, from memory), found by brentq so that its mean power equals its loss.
    """

    def cycle(temperature):
        resistance = float(lamp.resistance(temperature))
        primary, source = _bridge_cycle(supply_unit, resistance + windings, supply, frequency)
        return resistance, primary, source

    def excess(temperature):
        resistance, primary, _ = cycle(temperature)
        return float(np.mean(primary**2) * resistance - lamp.loss(temperature))

    temperature = brentq(excess, AMBIENT + 1e-6, HOTTEST, xtol=0.5)
    resistance, primary, source = cycle(temperature)
    rms = float(np.sqrt(np.mean(primary**2)))
    return Point(
        supply=supply,
        rig_output=float(np.sqrt(np.mean((source - primary * windings) ** 2))),
        load_voltage=float(np.sqrt(np.mean((source - primary * (windings + resistance)) ** 2))),
        current=rms,
        lamp_voltage=rms * resistance,
        filament_temperature=float(temperature),
    )
