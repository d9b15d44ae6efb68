"""Switch-ons against ngspice: the filament's and heaters' heat balances as behavioural sources.

ngspice (the Debian package) integrates the same circuit with its own variable-step method:
the lamp's filament and the valve set's heaters warm by ``C dT/dt = v^2 / R(T) - P_loss(T)``
on our tungsten tables, written as ``pwl`` functions; everything else (core, valve rectifier,
reservoir) is the netlist of :mod:`tests.physics.spice`.
"""

import numpy as np
import pytest

from shop.physics.lamp import Lamp
from shop.physics.loads import ResistiveLoad
from shop.physics.nameplate import unit_load_from_nameplate
from shop.physics.transformer import magnetising_current
from shop.physics.transient import switch_on
from shop.physics.waveform import Network
from tests.physics import spice

# The bar for the checks against ngspice: within 2 %.
AGREEMENT = 0.02
FREQUENCY = 60.0  # [Hz]
RIG = 2.0  # [ohm]
CYCLES = 30  # half a second


def _half_cycle_rms(samples):
    return np.sqrt((samples.reshape(2 * CYCLES, -1) ** 2).mean(axis=1))


@pytest.fixture(scope="module")
def radio():
    return unit_load_from_nameplate(
        rated_voltage=120.0,
        rated_power=65.0,
        category="radio",
        construction="isolating_transformer",
        rated_frequency=FREQUENCY,
        year=1954,
    )


def test_a_lamp_switched_at_the_crest_agrees_with_ngspice():
    lamp = Lamp(120.0, 100.0)
    ours = switch_on(
        lamp,
        ResistiveLoad(0.0),
        120.0,
        source_resistance=RIG,
        frequency=FREQUENCY,
        duration=CYCLES / FREQUENCY,
    )
    body, initial = spice.lamp_switch_on(lamp)
    body = spice.source(120.0, FREQUENCY, RIG, phase=90.0) + body + "RUNIT unit 0 1e-6\n"
    current = spice.simulate(
        body, ["i(V1)"], FREQUENCY, settle=0.0, cycles=CYCLES, initial=initial
    )["i(V1)"]
    assert abs(float(ours.inrush_peak) / np.abs(current).max() - 1.0) <= AGREEMENT
    # From the second half cycle on: the first holds the filament's millisecond heating,
    # which a step of 1/32 cycle resolves only to about 10 %.
    theirs = _half_cycle_rms(current)
    assert np.max(np.abs(ours.current[1:] / theirs[1:] - 1.0)) <= AGREEMENT


def test_a_valve_radio_switched_on_at_a_zero_crossing_agrees_with_ngspice(radio):
    lamp = Lamp(120.0, 100.0)
    ours = switch_on(
        lamp,
        radio,
        120.0,
        source_resistance=RIG,
        frequency=FREQUENCY,
        phase=0.0,
        duration=CYCLES / FREQUENCY,
    )
    network = Network(radio, FREQUENCY)
    (heater, heaters), (transformer, cores) = network.heaters[0], network.transformers[0]
    assert (len(network.heaters), len(network.transformers), heaters, cores) == (1, 1, 1.0, 1.0)
    assert network.rectifier.topology == "centre_tap" and network.rectifier.warm_up_time > 0
    # The core starts at its residual flux, as ours does with remanence.
    residual = transformer.knee_current * magnetising_current(
        transformer.remanence, transformer.core
    )
    lamp_body, lamp_initial = spice.lamp_switch_on(lamp)
    unit_body, unit_initial = spice.valve_set_switch_on(
        transformer, heater, network.rectifier, FREQUENCY, residual, "unit"
    )
    samples = spice.simulate(
        spice.source(120.0, FREQUENCY, RIG, phase=0.0) + lamp_body + unit_body,
        ["i(V1)", "v(unit)"],
        FREQUENCY,
        settle=0.0,
        cycles=CYCLES,
        initial=f"{lamp_initial} {unit_initial}",
    )
    current = samples["i(V1)"]
    assert abs(float(ours.inrush_peak) / np.abs(current).max() - 1.0) <= AGREEMENT
    assert np.max(np.abs(ours.current / _half_cycle_rms(current) - 1.0)) <= AGREEMENT
    unit_voltage = _half_cycle_rms(samples["v(unit)"])
    assert np.max(np.abs(ours.load_voltage / unit_voltage - 1.0)) <= AGREEMENT
    # The heaters are still warming at the end: the current has not settled, and falls.
    assert ours.current[-1] < ours.current[2 * CYCLES // 3] < ours.current[1]
