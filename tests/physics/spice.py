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

from shop.physics.transformer import magnetising_flux_slope

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


def source(volts, frequency, resistance, phase=0.0):
    """The rig: a sine of ``volts`` RMS from ``V1`` through ``resistance`` to node ``u``."""
    return f"V1 src 0 SIN(0 {np.sqrt(2) * volts} {frequency} 0 0 {phase})\nRS src u {resistance}\n"


def _core_and_taps(transformer, turns, frequency, node):
    """A transformer's T circuit at ``node`` and the two halves of a centre-tapped secondary.

    The primary's resistance, the core's loss and reflected load as a resistance to node
    ``m``, the magnetising current held as the voltage of a 1 F capacitor ``x`` (see
    :func:`valve_set`), and ideal windings of ratio ``turns`` from ``node`` to ``a1`` and
    ``b1``, their currents fed back to the primary.
    """
    scale = transformer.saturation_flux(frequency) / transformer.knee_current
    slope = float(magnetising_flux_slope(np.inf, transformer.core))
    knee = transformer.knee_current
    inner = transformer.core_conductance + transformer.load_conductance
    body = f"R1 {node} m {transformer.primary_resistance}\nRC m 0 {1 / inner}\n"
    body += f"CX x 0 1\nBX 0 x I = v(m) / ({scale} * ({slope} + {2 / np.pi} / "
    body += f"(1 + (v(x) / {knee})^2)))\nBM m 0 I = v(x)\n"
    body += f"EA a 0 {node} 0 {turns}\nEB b 0 {node} 0 {-turns}\nVSA a a1 0\nVSB b b1 0\n"
    return body + f"FA {node} 0 VSA {turns}\nFB {node} 0 VSB {-turns}\n"


def valve_set(transformer, heater_resistance, rectifier, unit_voltage, frequency):
    """A transformer's core, heaters and a centre-tap rectifier at node ``u``; its ``.ic``.

    The core's magnetising current is held as the voltage of a 1 F capacitor ``x``:
    ``d i_m / dt = v_m / L_d(i_m)`` with ``L_d = scale (c + (2/pi) / (1 + (i_m / i_k)^2))``,
    the curve of ``shop.physics.transformer.magnetising_flux``. It starts near its steady
    flux at the unit's RMS voltage ``unit_voltage`` [V], so that the run settles quickly.
    """
    knee = transformer.knee_current
    path = rectifier.winding_resistance
    body = f"RH u 0 {heater_resistance}\n"
    body += _core_and_taps(transformer, rectifier.turns_ratio, frequency, "u")
    body += f"RWA a1 a2 {path}\nRWB b1 b2 {path}\n"
    body += diode("1", "a2", "out", rectifier.diode_drop, rectifier.diode_resistance)
    body += diode("2", "b2", "out", rectifier.diode_drop, rectifier.diode_resistance)
    body += f"C1 out 0 {rectifier.capacitance}\nRL out 0 {rectifier.dc_resistance}\n"
    flux = np.sqrt(2) * unit_voltage / (2 * np.pi * frequency)
    start = -knee * np.tan(np.pi / 2 * flux / transformer.saturation_flux(frequency))
    return body, f".ic v(x)={start}"


def lamp_switch_on(lamp, table_step=25.0):
    """The lamp between nodes ``u`` and ``unit`` with its filament's temperature at node ``t``.

    ``C(T) dT/dt = v^2 / R(T) - P_loss(T)``, the filament's own resistance, heat loss and heat
    capacity tabulated every ``table_step`` kelvin as ngspice ``pwl`` functions; the
    temperature starts at the lamp's ambient (``.ic``).
    """
    table = lamp.thermal_table()

    def pwl(column):
        return _pwl(table, column, "t", table_step)

    resistance = pwl(table.resistance)
    body = f"BL u unit I = v(u,unit) / {resistance}\nCT t 0 1\n"
    body += (
        f"BT 0 t I = (v(u,unit)^2 / {resistance} - {pwl(table.power_loss)}) / "
        f"{pwl(table.heat_capacity)}\n"
    )
    return body, f".ic v(t)={table.temperature[0]}"


def heater_switch_on(heater, multiplier, node, temperature_node):
    """``multiplier`` heaters from ``node`` to ground, each warming at ``temperature_node``.

    ``C dT/dt = v^2 / R(T) - P_loss(T)`` with the element's resistance and heat loss from its
    tungsten tables (as :func:`lamp_switch_on`) and the heater's lumped heat capacity.
    """
    table = heater.element.thermal_table()
    resistance = _pwl(table, table.resistance, temperature_node)
    body = f"BH{temperature_node} {node} 0 I = {multiplier} * v({node}) / {resistance}\n"
    body += f"CT{temperature_node} {temperature_node} 0 1\n"
    body += (
        f"BT{temperature_node} 0 {temperature_node} I = (v({node})^2 / {resistance} - "
        f"{_pwl(table, table.power_loss, temperature_node)}) / {heater.heat_capacity}\n"
    )
    return body, f"v({temperature_node})={table.temperature[0]}"


def _pwl(table, column, temperature_node, table_step=25.0):
    last = table.temperature.size - 1
    rows = np.unique(np.append(np.arange(0, last, int(table_step)), last))
    pairs = ", ".join(
        f"{t:.6g},{value:.9g}" for t, value in zip(table.temperature[rows], column[rows])
    )
    return f"pwl(v({temperature_node}), {pairs})"


def valve_set_switch_on(transformer, heater, rectifier, frequency, magnetising_current, node):
    """A valve set switched on at ``node``: core, heaters warming, a valve rectifier warming.

    The transformer's core as in :func:`valve_set`, its magnetising current starting at
    ``magnetising_current`` [A] (the residual flux); the heaters as in
    :func:`heater_switch_on`; the centre-tap rectifier's path (winding and valve) conducting
    in proportion to ``min(time / warm_up_time, 1)``, the reservoir starting discharged.
    Returns the netlist lines and the ``.ic`` entries.
    """
    body, heater_ic = heater_switch_on(heater, 1.0, node, "th")
    body += _core_and_taps(transformer, rectifier.turns_ratio, frequency, node)
    warm = "1" if rectifier.warm_up_time == 0 else f"min(time / {rectifier.warm_up_time}, 1)"
    for name, start in (("1", "a1"), ("2", "b1")):
        body += f"BW{name} {start} w{name} I = v({start}, w{name}) * {warm} / "
        body += f"{rectifier.path_resistance}\n"
        body += diode(name, f"w{name}", "out", rectifier.diode_drop, 1e-6)
    body += f"C1 out 0 {rectifier.capacitance}\nRL out 0 {rectifier.dc_resistance}\n"
    return body, f"{heater_ic} v(x)={magnetising_current} v(out)=0"
