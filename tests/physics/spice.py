"""ngspice in batch mode, for the checks of the time-domain models outside the project.

The Debian package ``ngspice`` provides the program. Without it the checks skip locally and
fail when the environment variable ``CI`` is ``"true"``, so that CI never passes them unrun.
"""

import os
import shutil
import subprocess
import tempfile
from pathlib import Path

import numpy as np
import pytest

NGSPICE = shutil.which("ngspice")
# A diode that switches within millivolts: the models' diodes are an ideal switch with a
# forward drop and a resistance in series, which the netlists add as parts of their own.
SHARP_DIODE = ".model SHARP D(IS=1e-14 N=0.05 CJO=10n)"
STEPS_PER_CYCLE = 400
TIMEOUT = 120  # [s]


def require_ngspice():
    """Skip the calling test without ngspice, or fail when CI says it must run."""
    if NGSPICE is None:
        if os.environ.get("CI") == "true":
            pytest.fail("ngspice is missing and CI=true: install the Debian package ngspice")
        pytest.skip("ngspice is not installed (Debian package ngspice); CI fails instead")


def diode(name, anode, cathode, drop, resistance):
    """A sharp diode with a forward drop and a resistance in series, as netlist lines."""
    return (
        f"DD{name} {anode} d{name}a SHARP\n"
        f"VD{name} d{name}a d{name}b DC {drop}\n"
        f"RD{name} d{name}b {cathode} {resistance}\n"
    )


def simulate(body, probes, frequency, settle, cycles=4, initial=""):
    """Run ``body`` to ``settle`` seconds and return ``probes`` over the next ``cycles`` cycles.

    Parameters
    ----------
    body : str
        Netlist lines; the source must be ``V1`` so that ``i(V1)`` is its current.
    probes : sequence of str
        ngspice vectors, e.g. ``"i(V1)"``, ``"v(out)"``.
    frequency : float
        Mains frequency [Hz].
    settle : float
        Time to let the circuit reach its periodic steady state [s].
    cycles : int
        Whole cycles sampled after ``settle``.
    initial : str
        An ``.ic`` line to start near the steady state.

    Returns
    -------
    dict
        Each probe's samples on a uniform grid of ``STEPS_PER_CYCLE`` points per cycle.
    """
    require_ngspice()
    period = 1.0 / frequency
    step = period / STEPS_PER_CYCLE
    stop = settle + cycles * period
    with tempfile.TemporaryDirectory() as folder:
        output = Path(folder) / "out.txt"
        netlist = Path(folder) / "circuit.cir"
        netlist.write_text(
            "* check of a shop.physics model\n"
            f"{body}\n{SHARP_DIODE}\n{initial}\n"
            ".options reltol=1e-5 abstol=1e-12 vntol=1e-9\n"
            f".tran {step} {stop} {settle} {step} uic\n"
            ".control\nrun\nlinearize\n"
            f"wrdata {output} {' '.join(probes)}\nquit\n.endc\n.end\n"
        )
        run = subprocess.run(
            [NGSPICE, "-b", str(netlist)], capture_output=True, text=True, timeout=TIMEOUT
        )
        if run.returncode != 0 or not output.exists():
            raise RuntimeError(f"ngspice failed:\n{run.stdout}\n{run.stderr}")
        data = np.loadtxt(output)
    samples = data[:-1]  # the last point closes the window: leave it out of the means
    return {probe: samples[:, 2 * k + 1] for k, probe in enumerate(probes)}
