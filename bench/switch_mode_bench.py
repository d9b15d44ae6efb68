"""Switch-mode switch-on benchmark: 1 s of a switch-mode input beside a resistive switch-on.

Run with ``python bench/switch_mode_bench.py`` (``--quick`` for a short trial). Prints the
median time of one 1 s switch-on at 60 Hz over 10 source voltages of a 4.5 W universal-input
adapter through a 40 W 230 V lamp (and with the lamp bypassed on a 0.5 ohm rig), beside the
baseline measured in the same run: :func:`shop.physics.transient.switch_on` of a resistive
unit of the same 4.5 W through the same lamp, the same columns and duration.
"""

import argparse
import statistics
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from shop.physics import ConstantPowerLoad, Lamp, ResistiveLoad, switch_on  # noqa: E402
from shop.physics.switch_mode_start import switch_mode_switch_on  # noqa: E402

AIM = 0.200  # [s] one 1 s switch-on of 10 columns at 60 Hz
SOURCES = np.linspace(100.0, 240.0, 10)  # [V] the columns
DURATION = 1.0  # [s]
FREQUENCY = 60.0  # [Hz]


def median_times(work, repeats):
    """Median time of each job [s], the jobs taken in turn so that a busy machine slows all."""
    times = {label: [] for label in work}
    for _ in range(repeats):
        for label, job in work.items():
            start = time.perf_counter()
            job()
            times[label].append(time.perf_counter() - start)
    return {label: statistics.median(values) for label, values in times.items()}


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="three repeats, not nine")
    repeats = 3 if parser.parse_args(argv).quick else 9
    lamp = Lamp(230.0, 40.0)
    adapter = ConstantPowerLoad(4.5, rated_voltage=100.0)
    resistor = ResistiveLoad.from_rating(230.0, 4.5)
    options = {"frequency": FREQUENCY, "duration": DURATION}
    work = {
        "switch-mode, through the lamp": lambda: switch_mode_switch_on(
            lamp, adapter, SOURCES, **options
        ),
        "switch-mode, lamp bypassed (0.5 ohm rig)": lambda: switch_mode_switch_on(
            lamp, adapter, SOURCES, source_resistance=0.5, lamp_bypassed=True, **options
        ),
        "baseline: resistive switch_on, same lamp": lambda: switch_on(
            lamp, resistor, SOURCES, **options
        ),
    }
    for job in work.values():  # the lamp's tables are built once, outside the timing
        job()
    print(
        f"numpy {np.__version__}; 1 s at {FREQUENCY:g} Hz, {SOURCES.size} source voltages, "
        f"median of {repeats}"
    )
    medians = median_times(work, repeats)
    baseline = medians["baseline: resistive switch_on, same lamp"]
    for label, seconds in medians.items():
        line = f"  {label:<44}{seconds * 1e3:9.1f} ms   x{seconds / baseline:5.2f} of baseline"
        if not label.startswith("baseline"):
            line += f"   aim < {AIM * 1e3:.0f} ms: {'met' if seconds <= AIM else 'NOT MET'}"
        print(line)
    return 0


if __name__ == "__main__":
    sys.exit(main())
