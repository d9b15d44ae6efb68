"""Warm-up benchmark: judging readings taken while a valve set's heaters warm.

Run with ``python bench/warm_up_bench.py`` (``--quick`` for fewer repeats). Every figure is
printed beside its baseline measured in the same run:

1. ``judge`` of three readings of a valve radio (from its nameplate) taken 5, 15 and 30 s
   after switch-on through a 100 W 120 V lamp, judged against its warm-up, beside the same
   judge with the readings at steady state (no seconds since switch-on).
2. One switch-on of that radio followed for 60 s (its first part in detail, then the heaters'
   slow phase) beside that first part alone, and beside the detailed integrator run for 10 s,
   whose currents it must match within 1 % (the quasi-static error is the lamp's lag).

Exits non-zero when a verdict is not the expected pass or the currents disagree.
"""

import sys
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from bench.physics_bench import timed  # noqa: E402
from shop.physics import (  # noqa: E402
    Lamp,
    Reading,
    judge,
    solve_series,
    switch_on,
    transient,
    unit_load_from_nameplate,
)

WINDINGS = 2.0  # [ohm] the rig
SOURCE = 120.0  # [V]
SECONDS = (5.0, 15.0, 30.0)  # [s] since switch-on, as a technician reads a valve set
COMPARED_AT = (2.0, 5.0, 10.0)  # [s]
AGREEMENT = 0.01  # the slow phase's RMS current against the detailed integrator's
REPEATS, QUICK_REPEATS = 7, 3


def show(label, ours, baseline, name):
    print(
        f"  {label:<48}{ours * 1e3:9.1f} ms   {name} {baseline * 1e3:9.1f} ms   "
        f"ratio {ours / baseline:6.2f}"
    )


def bench_judge(radio, lamp, repeats):
    print(
        f"1. judge: 3 readings of the 1954 valve radio at {SOURCE:g} V through a 100 W lamp, "
        f"median of {repeats}"
    )
    warm = switch_on(lamp, radio, SOURCE, source_resistance=WINDINGS, duration=max(SECONDS))
    warming = [
        Reading(
            source_voltage=SOURCE,
            load_voltage=float(warm.load_voltage[warm.at(seconds)]),
            current=float(warm.current[warm.at(seconds)]),
            seconds_since_switch_on=seconds,
        )
        for seconds in SECONDS
    ]
    steady = solve_series(lamp, radio, SOURCE, WINDINGS)
    settled = [
        Reading(
            source_voltage=SOURCE,
            load_voltage=float(steady.load_voltage),
            current=float(steady.current),
        )
    ] * len(SECONDS)

    def verdict(readings):
        return judge(
            lamp, radio, readings, nominal_source_voltage=SOURCE, source_resistance=WINDINGS
        )

    verdict(settled)  # the lamp's and the composite's cached tables
    baseline, steady_verdict = timed(lambda: verdict(settled), repeats)
    ours, warm_verdict = timed(lambda: verdict(warming), repeats)
    show("readings at 5, 15, 30 s (against the warm-up)", ours, baseline, "at steady state")
    against = ", ".join(item.judged_against for item in warm_verdict.readings)
    print(f"  {'judged against':<48}{against}")
    print(f"  {'outcomes (warm-up, steady)':<48}{warm_verdict.outcome}, {steady_verdict.outcome}")
    return warm_verdict.outcome == "pass" and steady_verdict.outcome == "pass"


def bench_switch_on(radio, lamp, repeats):
    print(f"2. switch-on of that radio at {SOURCE:g} V through the lamp, median of {repeats}")
    detail = transient.DETAILED_SECONDS
    first, _ = timed(
        lambda: switch_on(lamp, radio, SOURCE, source_resistance=WINDINGS, duration=detail),
        repeats,
    )
    ours, result = timed(
        lambda: switch_on(lamp, radio, SOURCE, source_resistance=WINDINGS, duration=60.0),
        repeats,
    )
    show(
        f"60 s ({detail:g} s in detail, then the slow phase)",
        ours,
        first,
        f"the first {detail:g} s",
    )
    saved = transient.DETAILED_SECONDS
    transient.DETAILED_SECONDS = np.inf
    try:
        detailed_time, detailed = timed(
            lambda: switch_on(lamp, radio, SOURCE, source_resistance=WINDINGS, duration=10.0), 1
        )
    finally:
        transient.DETAILED_SECONDS = saved
    show("60 s with the slow phase", ours, detailed_time, "10 s in detail")
    worst = max(
        abs(float(result.current[result.at(s)] / detailed.current[detailed.at(s)]) - 1.0)
        for s in COMPARED_AT
    )
    ok = worst <= AGREEMENT
    print(
        f"  {'RMS current at 2, 5, 10 s against the detailed':<48}{worst:9.2e}     "
        f"limit {AGREEMENT:g}   {'ok' if ok else 'FAILED'}"
    )
    settle = float(result.settle_time)
    print(f"  {'settle time (current within 10 % of steady)':<48}{settle:9.1f} s")
    return ok


def main():
    quick = "--quick" in sys.argv[1:]
    repeats = QUICK_REPEATS if quick else REPEATS
    radio = unit_load_from_nameplate(
        rated_voltage=120.0,
        rated_power=65.0,
        category="radio",
        construction="isolating_transformer",
        year=1954,
        rated_frequency=60.0,
    )
    lamp = Lamp(120.0, 100.0)
    print(f"warm-up benchmark (numpy {np.__version__}); times are wall-clock on this machine")
    judged = bench_judge(radio, lamp, repeats)
    followed = bench_switch_on(radio, lamp, repeats)
    print("all checks passed" if judged and followed else "CHECK FAILED")
    return 0 if judged and followed else 1


if __name__ == "__main__":
    sys.exit(main())
