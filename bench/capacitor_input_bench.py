"""Capacitor-input benchmark: a switch-mode charger's steady state, prediction and judgement.

Run with ``python bench/capacitor_input_bench.py`` (``--quick`` for a short trial). An
invented 20 W charger with a universal input through a 100 W 120 V lamp on a 2 ohm rig,
declared with a capacitor input (shot for its periodic steady state,
:mod:`shop.physics.capacitor_input`), each figure printed beside the same charger declared
power-factor corrected (the closed-form root) measured in the same run: 25 source steps
solved; the five solves of a prediction (healthy, band corners, doubled draw); one
judgement of two readings with a current measured. Also prints the largest difference of the
steady current from the charger's own switch-on (its step-by-step integration from cold).
"""

import argparse
import statistics
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from shop.physics import ConstantPowerLoad, Lamp, ResistiveLoad, judge, solve_series  # noqa: E402
from shop.physics import scenarios as reference  # noqa: E402
from shop.physics.judgement import lamp_with_spread  # noqa: E402
from shop.physics.switch_mode_start import switch_mode_switch_on  # noqa: E402

FREQUENCY = 60.0  # [Hz]
RIG = 2.0  # [ohm]
STEPS = np.linspace(0.0, 120.0, 25)  # [V] a prediction's default sweep


def median_time(job, repeats):
    times = []
    for _ in range(repeats):
        start = time.perf_counter()
        job()
        times.append(time.perf_counter() - start)
    return statistics.median(times)


def prediction(lamp, load):
    """The solves of shop.bench.prediction.predict, without the service around them."""
    solve_series(lamp, load, STEPS, RIG, FREQUENCY)
    solve_series(lamp_with_spread(lamp, 0.9), load.scaled(1.2), STEPS, RIG, FREQUENCY)
    solve_series(lamp_with_spread(lamp, 1.1), load.scaled(0.8), STEPS, RIG, FREQUENCY)
    solve_series(lamp, load.scaled(2.0), STEPS, RIG, FREQUENCY)


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="one repeat, not three")
    repeats = 1 if parser.parse_args(argv).quick else 3
    lamp = Lamp(120.0, 100.0)
    peaky = ConstantPowerLoad(20.0, rated_voltage=100.0, input_stage="capacitor")
    plain = ConstantPowerLoad(20.0, rated_voltage=100.0)
    rng = np.random.default_rng(5)
    readings = reference.readings(
        reference.random_perturbed_lamp(lamp, rng),
        peaky,
        [112.0, 120.0],
        rng,
        source_resistance=RIG,
        with_current=True,
    )
    jobs = {
        f"{STEPS.size} source steps solved": lambda load: solve_series(
            lamp, load, STEPS, RIG, FREQUENCY
        ),
        "a prediction's four sweeps": lambda load: prediction(lamp, load),
        "a judgement of two readings": lambda load: judge(
            lamp, load, readings, nominal_source_voltage=120.0, source_resistance=RIG
        ),
    }
    print(
        f"numpy {np.__version__}; median of {repeats}; "
        "baseline: the same charger declared power-factor corrected"
    )
    for label, job in jobs.items():
        job(plain)  # tables built once, outside the timing
        ours = median_time(lambda job=job: job(peaky), repeats)
        baseline = median_time(lambda job=job: job(plain), repeats)
        print(
            f"  {label:<34}{ours * 1e3:9.1f} ms   baseline {baseline * 1e3:8.1f} ms   "
            f"x{ours / baseline:6.0f}"
        )
    # The judgement of a full test beside a resistive unit of the same rating, same readings.
    many = reference.readings(
        reference.random_perturbed_lamp(lamp, rng),
        peaky,
        np.linspace(20.0, 120.0, 25),
        rng,
        source_resistance=RIG,
        with_current=True,
    )
    resistive = ResistiveLoad.from_rating(100.0, 20.0)

    def judged(load):
        return judge(lamp, load, many, nominal_source_voltage=120.0, source_resistance=RIG)

    judged(peaky)
    judged(resistive)
    ours = median_time(lambda: judged(peaky), repeats)
    baseline = median_time(lambda: judged(resistive), repeats)
    print(
        f"  {'judge, 25 readings':<34}{ours * 1e3:9.1f} ms   resistive {baseline * 1e3:7.1f} ms   "
        f"x{ours / baseline:6.1f}   (aim: < 10x the resistive judge)"
    )
    sources = np.array([105.0, 110.0, 115.0, 120.0])
    steady = solve_series(lamp, peaky, sources, RIG, FREQUENCY)
    run = switch_mode_switch_on(
        lamp, peaky, sources, source_resistance=RIG, frequency=FREQUENCY, duration=3.0
    )
    runs = steady.state == "steady"
    difference = np.abs(steady.current[runs] / run.current[-1][runs] - 1.0).max()
    print(
        f"  steady current against its own switch-on at {runs.sum()} of {sources.size} steps: "
        f"largest difference {difference:.2%}"
    )
    return 0


if __name__ == "__main__":
    sys.exit(main())
