"""Physics benchmark: the vectorised solver, judgement and advice against scalar references.

Run with ``python bench/physics_bench.py`` (``make bench``; ``--quick``: fewer repeats, and
one reference run). Every figure is printed beside
its baseline measured in the same run, and the ratio. The baseline is a per-point scalar
reference written here: scipy ``brentq`` for the filament temperature inside ``brentq`` for
the circuit (and, for the judgement, inside ``brentq`` for the draw). Exits non-zero when the
vectorised results disagree with the reference beyond the stated limits.

Beside the scalar references, the judgement is also timed against its floor: one flat
``solve_series`` of the points it solves first (each reading at the declared draw, its double
and the search grid of draws, three times for the meters' limits), and against the same
judgement of a unit declared by its nameplate (a composite load).
"""

import statistics
import sys
import time

import numpy as np
import scipy
from scipy.optimize import brentq

from shop.physics import Lamp, LampBank, Reading, ResistiveLoad, advise_lamp, judge, solve_series
from shop.physics import judgement as rules
from shop.physics.materials import TABLE_MAX_TEMPERATURE
from shop.physics.nameplate import unit_load_from_nameplate

SWEEP_POINTS = 1000
SWEEP_AGREEMENT = 1e-6  # [V] aim: the sweep agrees with the scalar reference to 1e-6 V
SWEEP_SPEED_AIM = 200.0  # aim: at least 200x faster than the reference
FIGURE_AGREEMENT = 1e-6  # [V] band, prediction and sensitivity of judge and advice
DRAW_AGREEMENT = 1e-5  # relative, inferred draw (the judgement polishes to about 1e-7)
VECTORISED_REPEATS = 21
REFERENCE_REPEATS = 3
WINDINGS = 2.0  # [ohm]
NOMINAL = 120.0  # [V]


def filament_temperature(lamp, voltage):
    """Scalar filament temperature [K] at a lamp voltage [V]: brentq on V**2/R(T) = P(T)."""
    if voltage == 0:
        return lamp.ambient_temperature

    def balance(temperature):
        return voltage**2 / float(lamp.resistance_at_temperature(temperature)) - float(
            lamp.power_loss(temperature)
        )

    return brentq(balance, lamp.ambient_temperature, TABLE_MAX_TEMPERATURE, xtol=1e-12, rtol=1e-15)


def lamp_current(lamp, voltage, factor=1.0):
    """Scalar lamp current [A]; ``factor`` scales it as the judgement's lamp spread does."""
    if voltage == 0:
        return 0.0
    temperature = filament_temperature(lamp, voltage)
    return factor * voltage / float(lamp.resistance_at_temperature(temperature))


def operating_point(lamp, resistance, source, factor=1.0):
    """Scalar unit volts [V], current [A] and lamp volts [V]: brentq over the lamp volts."""
    if source == 0:
        return 0.0, 0.0, 0.0

    def circuit(lamp_voltage):
        return (
            lamp_voltage
            + lamp_current(lamp, lamp_voltage, factor) * (WINDINGS + resistance)
            - source
        )

    lamp_voltage = brentq(circuit, 0.0, source, xtol=1e-13, rtol=1e-15)
    current = lamp_current(lamp, lamp_voltage, factor)
    return current * resistance, current, lamp_voltage


def timed(function, repeats):
    """Median wall time [s] of ``repeats`` calls, and the last result."""
    times = []
    for _ in range(repeats):
        start = time.perf_counter()
        result = function()
        times.append(time.perf_counter() - start)
    return statistics.median(times), result


def show(label, vectorised, reference):
    print(
        f"  {label:<44}{vectorised * 1e3:10.2f} ms   reference {reference * 1e3:10.1f} ms   "
        f"ratio {reference / vectorised:8.0f}x"
    )


def check(label, value, limit, unit):
    ok = value <= limit
    print(
        f"  {label:<44}{value:10.2e} {unit:<3} limit {limit:.0e} {unit}   "
        f"{'ok' if ok else 'FAILED'}"
    )
    return ok


def bench_sweep():
    print(
        f"1. solve_series: {SWEEP_POINTS}-point sweep, 60 W 120 V gas lamp, 30 W resistive "
        f"unit, {WINDINGS:g} ohm rig"
    )
    lamp = Lamp(120.0, 60.0)
    load = ResistiveLoad.from_rating(120.0, 30.0)
    source = np.linspace(0.5, 130.0, SWEEP_POINTS)
    solve_series(lamp, load, source, WINDINGS)  # warm the lamp's cached curve
    fast, result = timed(lambda: solve_series(lamp, load, source, WINDINGS), VECTORISED_REPEATS)
    slow, expected = timed(
        lambda: np.array(
            [operating_point(lamp, float(load.resistance), volts) for volts in source]
        ),
        1,
    )
    show(f"time per sweep (vectorised, median of {VECTORISED_REPEATS})", fast, slow)
    ok = check(
        "max |load volts - reference|",
        float(np.max(np.abs(result.load_voltage - expected[:, 0]))),
        SWEEP_AGREEMENT,
        "V",
    )
    print(
        f"  {'max |current - reference| / current':<44}"
        f"{float(np.max(np.abs(result.current / expected[:, 1] - 1))):10.2e}"
    )
    speed = slow / fast
    print(
        f"  {'speed ratio':<44}{speed:10.0f}x   aim >= {SWEEP_SPEED_AIM:g}x   "
        f"{'met' if speed >= SWEEP_SPEED_AIM else 'NOT MET'}"
    )
    return ok


def reference_judge_figures(lamp, load, readings):
    """The judgement's per-reading numbers, point by point with scalar brentq solves."""
    resistance = float(load.resistance)
    meter = (rules.METER_RELATIVE_ACCURACY, rules.METER_ABSOLUTE_ACCURACY)
    low_factor, high_factor = 1 - rules.LAMP_POWER_TOLERANCE, 1 + rules.LAMP_POWER_TOLERANCE
    heavy, light = 1 + rules.LOAD_TOLERANCE, 1 - rules.LOAD_TOLERANCE
    figures = []
    for reading in readings:
        source, measured = reading.source_voltage, reading.load_voltage
        source_span = meter[0] * source + meter[1]
        span = meter[0] * measured + meter[1]
        healthy = operating_point(lamp, resistance, source)[0]
        doubled = operating_point(lamp, resistance / 2, source)[0]
        lowest = operating_point(lamp, resistance / heavy, source - source_span, low_factor)[0]
        highest = operating_point(lamp, resistance / light, source + source_span, high_factor)[0]
        draws = []
        for volts, supply in (
            (measured, source),
            (measured + span, source - source_span),
            (measured - span, source + source_span),
        ):

            def miss(log_draw, volts=volts, supply=supply):
                return operating_point(lamp, resistance / np.exp(log_draw), supply)[0] - volts

            least, most = np.log(rules.DRAW_SEARCH_RANGE)
            if miss(least) <= 0:  # reads at or above a unit drawing the least searched
                draws.append(0.0)
            elif miss(most) >= 0:  # reads at or below a unit drawing the most searched
                draws.append(np.inf)
            else:
                draws.append(np.exp(brentq(miss, least, most, xtol=1e-12)))
        figures.append(
            (
                healthy,
                lowest - (meter[0] * lowest + meter[1]),
                highest + (meter[0] * highest + meter[1]),
                healthy - doubled,
                *draws,
            )
        )
    return np.array(figures)


def bench_judge():
    print("2. judge: 25 readings of a unit drawing 1.5x its declared 30 W, 60 W lamp")
    lamp = Lamp(120.0, 60.0)
    declared = ResistiveLoad.from_rating(120.0, 30.0)
    steps = np.linspace(5.0, 125.0, 25)
    readings = [
        Reading(float(volts), round(operating_point(lamp, 320.0, volts)[0], 1)) for volts in steps
    ]

    def run():
        return judge(
            lamp, declared, readings, nominal_source_voltage=NOMINAL, source_resistance=WINDINGS
        )

    run()
    fast, verdict = timed(run, VECTORISED_REPEATS)
    slow, expected = timed(
        lambda: reference_judge_figures(lamp, declared, readings), REFERENCE_REPEATS
    )
    show(
        f"time per judgement (median of {VECTORISED_REPEATS} / of {REFERENCE_REPEATS})", fast, slow
    )
    draws = np.concatenate([[1.0, 2.0], np.geomspace(*rules.DRAW_SEARCH_RANGE, 13)])
    sources = np.tile(steps, 3)
    floor, _ = timed(
        lambda: solve_series(lamp, declared.scaled(draws[:, None]), sources, WINDINGS),
        VECTORISED_REPEATS,
    )
    print(
        f"  {'judge beside one flat solve_series (floor)':<44}{fast * 1e3:10.2f} ms   "
        f"floor {floor * 1e3:14.2f} ms   ratio {fast / floor:8.2f}x   (aim: within 1.5x)"
    )
    nameplate = unit_load_from_nameplate(rated_voltage=120.0, rated_power=30.0, category="radio")
    composite, _ = timed(
        lambda: judge(
            lamp, nameplate, readings, nominal_source_voltage=NOMINAL, source_resistance=WINDINGS
        ),
        VECTORISED_REPEATS,
    )
    print(
        f"  {'judge, nameplate (composite) beside resistive':<44}{composite * 1e3:10.2f} ms   "
        f"resistive {fast * 1e3:10.2f} ms   ratio {composite / fast:8.2f}x   (aim: within 1.3x)"
    )
    got = np.array(
        [
            (
                item.predicted_load_voltage,
                item.load_voltage_low,
                item.load_voltage_high,
                item.sensitivity,
                item.inferred_draw,
                item.inferred_draw_low,
                item.inferred_draw_high,
            )
            for item in verdict.readings
        ]
    )
    ok = check(
        "max |prediction, band, sensitivity - ref|",
        float(np.max(np.abs(got[:, :4] - expected[:, :4]))),
        FIGURE_AGREEMENT,
        "V",
    )
    interior = np.isfinite(expected[:, 4:]) & (expected[:, 4:] > 0)
    same_limits = np.array_equal(got[:, 4:][~interior], expected[:, 4:][~interior])
    print(
        f"  {'draws beyond the search range (0 or inf)':<44}{np.sum(~interior):10d}   "
        f"{'same as reference' if same_limits else 'DIFFERENT FROM REFERENCE'}"
    )
    ok = ok and same_limits
    ok &= check(
        "max |inferred draw / reference - 1|",
        float(np.max(np.abs(got[:, 4:][interior] / expected[:, 4:][interior] - 1))),
        DRAW_AGREEMENT,
        "",
    )
    print(f"  {'outcome':<44}{verdict.outcome} {verdict.codes}")
    return ok


def bench_advice():
    print("3. advise_lamp: 8 candidates (15-150 W and a bank of 2 x 100 W) for a 30 W unit")
    lamps = [Lamp(120.0, power) for power in (15.0, 25.0, 40.0, 60.0, 75.0, 100.0, 150.0)]
    lamps.append(LampBank([Lamp(120.0, 100.0), Lamp(120.0, 100.0)]))
    declared = ResistiveLoad.from_rating(120.0, 30.0)

    def run():
        return advise_lamp(declared, lamps, NOMINAL, source_resistance=WINDINGS)

    def reference():
        figures = []
        for lamp in lamps[:-1]:  # the scalar reference knows single lamps only
            healthy = operating_point(lamp, 480.0, NOMINAL)
            doubled = operating_point(lamp, 240.0, NOMINAL)
            fault = operating_point(lamp, 0.0, NOMINAL)[1]
            lamp.glow(healthy[2])
            figures.append((fault, healthy[0], healthy[0] - doubled[0]))
        return np.array(figures)

    run()
    fast, advice = timed(run, VECTORISED_REPEATS)
    slow, expected = timed(reference, REFERENCE_REPEATS)
    print(f"  (aim: more than 20x the scalar reference; measured {slow / fast:.0f}x)")
    # The reference covers 7 of the 8 candidates; scale its time to 8 for the ratio.
    show("time per advice (median of 21 / of 3)", fast, slow * 8 / 7)
    by_index = sorted(advice, key=lambda entry: entry.index)[:-1]
    got = np.array(
        [(entry.fault_current, entry.load_voltage, entry.sensitivity) for entry in by_index]
    )
    ok = check(
        "max |fault A, unit V, sensitivity - ref|",
        float(np.max(np.abs(got - expected))),
        FIGURE_AGREEMENT,
        "",
    )
    print(f"  {'advice':<44}{advice[0].label} ({advice[0].suitability})")
    return ok


def main(argv=None):
    global VECTORISED_REPEATS, REFERENCE_REPEATS
    if "--quick" in (sys.argv[1:] if argv is None else argv):
        VECTORISED_REPEATS, REFERENCE_REPEATS = 5, 1
    print(
        f"shop.physics benchmark (numpy {np.__version__}, scipy {scipy.__version__}); "
        "times are wall-clock on this machine"
    )
    results = [bench_sweep(), bench_judge(), bench_advice()]
    if not all(results):
        print("AGREEMENT CHECK FAILED")
        return 1
    print("all agreement checks passed")
    return 0


if __name__ == "__main__":
    sys.exit(main())
