"""Unit-model benchmark: rectifier steady states and a switch-on, beside ngspice in the same run.

Run with ``python bench/loads_bench.py`` (``make bench``). Each figure is printed beside
ngspice (the Debian package) solving the same circuit in the same run, with the lamp replaced
by a fixed resistor of the resistance our solution gives it (the lamp is steady over a cycle),
or for the switch-ons with the lamp's filament's and the heaters' heat balances written as
ngspice behavioural sources. Exits non-zero when ngspice is missing or when the figures
disagree by more than the 2 % the models are held to.
"""

import statistics
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from shop.physics import (  # noqa: E402
    Lamp,
    ResistiveLoad,
    solve_series,
    switch_on,
    unit_load_from_nameplate,
)
from shop.physics.rectifier import RectifierLoad  # noqa: E402
from shop.physics.transformer import magnetising_current  # noqa: E402
from shop.physics.waveform import Network  # noqa: E402
from tests.physics import spice  # noqa: E402

AGREEMENT = 0.02  # RMS and peak current and DC volts within 2 % of ngspice
STEADY_AIM = 0.300  # [s] aim: a rectifier unit's 20 source steps under 300 ms
SWITCH_ON_AIM = 0.200  # [s] aim: one switch-on of 1 s under 200 ms
REPEATS = 7
STEPS = np.linspace(6.0, 120.0, 20)  # [V] the 20 source steps of a power-up
WINDINGS = 2.0  # [ohm] the rig
FREQUENCY = 60.0  # [Hz]
SETTLE = 2.0  # [s] ngspice's run before sampling, against the slowest time constant
# A silicon bridge is compared where its DC is at least this: below, the secondary's crest
# barely clears the diodes' drops, and ngspice's exponential diode (tens of millivolts at
# milliamperes) and our ideal switch with a drop differ by more than 2 % of so little.
COMPARED_DC_VOLTAGE = 5.0  # [V]


def median_time(work, repeats=REPEATS):
    times, result = [], None
    for _ in range(repeats):
        start = time.perf_counter()
        result = work()
        times.append(time.perf_counter() - start)
    return statistics.median(times), result


def show_times(label, ours, theirs, aim):
    met = "met" if ours <= aim else "NOT MET"
    print(
        f"  {label:<46}{ours * 1e3:9.1f} ms   ngspice {theirs * 1e3:9.1f} ms   "
        f"aim < {aim * 1e3:.0f} ms: {met}"
    )


def check(label, value):
    ok = value <= AGREEMENT
    print(f"  {label:<46}{value:9.2e}      limit {AGREEMENT:.0e}   {'ok' if ok else 'FAILED'}")
    return ok


def spice_figures(body, initial=""):
    samples = spice.simulate(body, ["i(V1)", "v(out)"], FREQUENCY, SETTLE, initial=initial)
    current = samples["i(V1)"]
    return (
        np.sqrt(np.mean(current**2)),
        np.abs(current).max(),
        np.mean(samples["v(out)"]),
    )


def compare(ours, theirs, compared):
    """Largest relative difference in RMS current, peak current and DC volts, over steps."""
    mine = np.column_stack([ours.current, ours.peak_current, ours.dc_voltage])
    return float(np.max(np.abs(mine[compared] / np.array(theirs)[compared] - 1.0)))


def bench_valve_set():
    print(
        "1. periodic steady state: a 65 W 120 V valve radio (transformer, heaters, valve "
        f"centre-tap rectifier) through a 100 W lamp, {STEPS.size} source steps"
    )
    radio = unit_load_from_nameplate(
        rated_voltage=120.0,
        rated_power=65.0,
        category="radio",
        construction="isolating_transformer",
        rated_frequency=FREQUENCY,
        year=1954,
    )
    lamp = Lamp(120.0, 100.0)
    solve_series(lamp, radio, STEPS, WINDINGS, FREQUENCY)  # tables built once per process
    ours_time, ours = median_time(lambda: solve_series(lamp, radio, STEPS, WINDINGS, FREQUENCY))
    members = {type(member).__name__: member for member in radio.members}
    transformer, heaters = members["TransformerLoad"], members["HeaterLoad"]
    rectifier = members["RectifierLoad"]
    theirs, start = [], time.perf_counter()
    for index, volts in enumerate(STEPS):
        series = WINDINGS + float(ours.lamp_voltage[index] / ours.current[index])
        unit_voltage = float(ours.load_voltage[index])
        heater_resistance = 1.0 / float(heaters.admittance(unit_voltage, FREQUENCY).real)
        body, initial = spice.valve_set(
            transformer, heater_resistance, rectifier, unit_voltage, FREQUENCY
        )
        theirs.append(spice_figures(spice.source(volts, FREQUENCY, series) + body, initial=initial))
    spice_time = time.perf_counter() - start
    show_times(
        f"all {STEPS.size} steps (ours median of {REPEATS})", ours_time, spice_time, STEADY_AIM
    )
    compared = np.ones(STEPS.size, dtype=bool)
    return check("max relative difference from ngspice", compare(ours, np.array(theirs), compared))


def bench_bridge():
    print(
        "2. periodic steady state: a silicon bridge, 4700 uF, 36 W DC through its transformer, "
        f"through a 100 W lamp, {STEPS.size} source steps"
    )
    supply = RectifierLoad(120.0, 4700e-6, dc_resistance=44.0, turns_ratio=0.25)
    lamp = Lamp(120.0, 100.0)
    solve_series(lamp, supply, STEPS, WINDINGS, FREQUENCY)
    ours_time, ours = median_time(lambda: solve_series(lamp, supply, STEPS, WINDINGS, FREQUENCY))
    theirs, start = [], time.perf_counter()
    for index, volts in enumerate(STEPS):
        series = WINDINGS + float(ours.lamp_voltage[index] / ours.current[index])
        body = spice.source(volts, FREQUENCY, series)
        n, winding = supply.turns_ratio, supply.winding_resistance
        body += f"ES s 0 u 0 {n}\nVSS s s1 0\nFS u 0 VSS {n}\nRW s1 s2 {winding}\n"
        for name, anode, cathode in (
            ("1", "s2", "pos"),
            ("2", "0", "pos"),
            ("3", "neg", "s2"),
            ("4", "neg", "0"),
        ):
            body += spice.diode(name, anode, cathode, supply.diode_drop, supply.diode_resistance)
        body += f"C1 pos neg {supply.capacitance}\nRL pos neg {supply.dc_resistance}\n"
        # 10 nF across the secondary keeps ngspice's steps from collapsing where the sharp
        # diodes switch; it carries about 0.1 mA at 60 Hz beside amperes.
        body += "CS s2 0 10n\nRG1 pos 0 1e9\nRG2 neg 0 1e9\nEOUT out 0 pos neg 1\n"
        theirs.append(spice_figures(body))
    spice_time = time.perf_counter() - start
    show_times(
        f"all {STEPS.size} steps (ours median of {REPEATS})", ours_time, spice_time, STEADY_AIM
    )
    compared = ours.dc_voltage >= COMPARED_DC_VOLTAGE
    print(f"  {'steps compared (DC at least 5 V)':<46}{int(compared.sum()):9d} of {STEPS.size}")
    return check("max relative difference from ngspice", compare(ours, np.array(theirs), compared))


def bench_switch_on():
    print("3. switch-on: a 100 W 120 V lamp alone (unit shorted) at the crest, 1 s, 2 ohm rig")
    lamp = Lamp(120.0, 100.0)
    short = ResistiveLoad(0.0)

    def ours_run():
        return switch_on(
            lamp, short, 120.0, source_resistance=WINDINGS, frequency=FREQUENCY, duration=1.0
        )

    ours_time, ours = median_time(ours_run)
    body, initial = spice.lamp_switch_on(lamp)
    body = spice.source(120.0, FREQUENCY, WINDINGS, phase=90.0) + body + "RUNIT unit 0 1e-6\n"
    start = time.perf_counter()
    samples = spice.simulate(body, ["i(V1)"], FREQUENCY, settle=0.0, cycles=60, initial=initial)
    spice_time = time.perf_counter() - start
    current = samples["i(V1)"]
    halves = np.sqrt((current.reshape(120, -1) ** 2).mean(axis=1))
    show_times("one switch-on of 1 s (ours median of 7)", ours_time, spice_time, SWITCH_ON_AIM)
    print(
        f"  {'inrush peak, ours / ngspice':<46}{float(ours.inrush_peak):9.3f} A  "
        f"{np.abs(current).max():9.3f} A;  settles in {float(ours.settle_time):.3f} s"
    )
    ok = check(
        "inrush peak, relative difference",
        abs(float(ours.inrush_peak) / np.abs(current).max() - 1.0),
    )
    # Half-cycle RMS currents from the second half cycle on (the first holds the filament's
    # millisecond heating, which our step resolves only to about 10 %).
    return ok & check(
        "half-cycle RMS currents, max relative difference",
        float(np.max(np.abs(ours.current[1:] / halves[1:] - 1.0))),
    )


def bench_valve_set_switch_on():
    print("4. switch-on: the valve radio of 1. through its 100 W lamp, 1 s, at a zero crossing")
    radio = unit_load_from_nameplate(
        rated_voltage=120.0,
        rated_power=65.0,
        category="radio",
        construction="isolating_transformer",
        rated_frequency=FREQUENCY,
        year=1954,
    )
    lamp = Lamp(120.0, 100.0)
    ours_time, ours = median_time(
        lambda: switch_on(
            lamp, radio, 120.0, source_resistance=WINDINGS, frequency=FREQUENCY, phase=0.0
        ),
        3,
    )
    network = Network(radio, FREQUENCY)
    (heater, _), (transformer, _) = network.heaters[0], network.transformers[0]
    residual = transformer.knee_current * magnetising_current(
        transformer.remanence, transformer.core
    )
    lamp_body, lamp_initial = spice.lamp_switch_on(lamp)
    unit_body, unit_initial = spice.valve_set_switch_on(
        transformer, heater, network.rectifier, FREQUENCY, residual, "unit"
    )
    body = spice.source(120.0, FREQUENCY, WINDINGS, phase=0.0) + lamp_body + unit_body
    start = time.perf_counter()
    samples = spice.simulate(
        body,
        ["i(V1)", "v(unit)"],
        FREQUENCY,
        settle=0.0,
        cycles=60,
        initial=f"{lamp_initial} {unit_initial}",
    )
    spice_time = time.perf_counter() - start
    current = samples["i(V1)"]
    halves = np.sqrt((current.reshape(120, -1) ** 2).mean(axis=1))
    volts = np.sqrt((samples["v(unit)"].reshape(120, -1) ** 2).mean(axis=1))
    show_times("one switch-on of 1 s (ours median of 3)", ours_time, spice_time, SWITCH_ON_AIM)
    print(
        f"  {'inrush peak, ours / ngspice':<46}{float(ours.inrush_peak):9.3f} A  "
        f"{np.abs(current).max():9.3f} A;  current at 1 s / steady "
        f"{float(ours.current[-1] / ours.steady_current):.3f}, behaviour {ours.behaviour}"
    )
    ok = check(
        "inrush peak, relative difference",
        abs(float(ours.inrush_peak) / np.abs(current).max() - 1.0),
    )
    ok &= check(
        "half-cycle RMS currents, max relative difference",
        float(np.max(np.abs(ours.current / halves - 1.0))),
    )
    return ok & check(
        "half-cycle RMS unit volts, max relative difference",
        float(np.max(np.abs(ours.load_voltage / volts - 1.0))),
    )


def main():
    if spice.NGSPICE is None:
        print("ngspice is missing (Debian package ngspice): no reference to compare with")
        return 1
    print(f"numpy {np.__version__}; ngspice {spice.NGSPICE}")
    ok = bench_valve_set()
    ok &= bench_bridge()
    ok &= bench_switch_on()
    ok &= bench_valve_set_switch_on()
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
