"""A switch-mode unit's capacitor input at steady state: a bridge, a reservoir, a converter.

A switch-mode supply without power-factor correction rectifies the mains straight into its
reservoir and its converter draws a constant power from that reservoir. Its current comes in
peaks near the crest, so through a lamp its RMS current is well above its power over the volts,
and the lamp heats on that RMS current. This module solves that circuit to its periodic steady
state with the time-domain shooting of :mod:`shop.physics.waveform` (the lamp steady over a
cycle), the same circuit :mod:`shop.physics.switch_mode_start` follows from switch-on.
"""

from dataclasses import fields

import numpy as np

from shop.physics.rectifier import RectifierLoad
from shop.physics.waveform import Network, WaveformFigures, _Lamp, _solve, _steps_per_cycle

# RK4 steps a cycle, at least (more where the charging's time constant asks): half the
# shooting's general minimum. Against the unit's own switch-on on 480 points (chargers of
# 10-40 W at 0.3-2.5x their draw through 60-150 W lamps, 84-253 V) the largest current
# difference is 2.5 % with 128 or 256 steps, the two disagree on whether it runs at 2-3 points
# on the edge, and a judgement's inferred draws agree to 0.001; 128 takes about half the time.
STEPS_PER_CYCLE_MIN = 128
FIGURES = tuple(field.name for field in fields(WaveformFigures))


def input_rectifier(load):
    """The capacitor input of one unit as a :class:`RectifierLoad` (draw factor 1).

    A bridge of silicon diodes straight off the mains charging ``load.reservoir``, its DC
    load the converter drawing ``load.power``: the circuit of
    :func:`shop.physics.switch_mode_start.switch_mode_switch_on` once the converter runs.
    """
    return RectifierLoad(load.rated_voltage, load.reservoir, topology="bridge", dc_power=load.power)


def capacitor_input_solution(
    lamp, load, target, source_resistance, frequency, bypassed, unreachable=None
):
    r"""Every steady figure of a capacitor-input :class:`ConstantPowerLoad`, per column.

    Parameters
    ----------
    lamp : Lamp or LampBank
        The series lamp (ignored when ``bypassed``).
    load : ConstantPowerLoad
        With ``input_stage == "capacitor"``; its draw factor ``k`` is ``k`` copies in
        parallel, each with its own reservoir and converter.
    target : numpy.ndarray
        RMS source voltage [V], broadcast against the draw factor.
    source_resistance : float
        The rig's windings [ohm].
    frequency : float
        Source frequency [Hz].
    bypassed : bool
        Whether the lamp is switched out.
    unreachable : numpy.ndarray, optional
        Columns (bool, broadcast shape) where even a power-factor-corrected input of the
        same power has no operating point: no capacitor input has one there either (see
        Notes), and they are not shot.

    Returns
    -------
    figures : dict
        ``FIGURES`` as flat arrays over the broadcast columns: zero current where the unit
        is off (its volts the source's), NaN where it has no operating point.
    off : numpy.ndarray
        Below the start voltage, or drawing nothing (bool per column).
    missing : numpy.ndarray
        No operating point (bool per column): the cycle has no periodic steady state, or
        its reservoir dips below the crest of the stop voltage (the converter would stop:
        the unit cycles or does not start).
    shape : tuple
        The broadcast shape of the columns.

    Notes
    -----
    The shooting's unknowns are the reservoir's voltage at the start of a half cycle and the
    lamp's RMS voltage; its first guess takes the unit as the resistance :math:`V_s^2 / P`,
    with the reservoir charged to the crest, so that Newton's method finds the operating
    point at the higher reservoir voltage (the one a running supply holds), not the other
    root of the constant-power load.

    Through a series resistance R (lamp and rig, steady over the cycle) a sinusoidal source
    of RMS ``V`` delivers to any unit drawing RMS current ``I`` at most
    :math:`V I_1 - R I^2 \le V I - R I^2` (only the fundamental :math:`I_1 \le I` draws
    real power), which is what a resistive draw of the same RMS current takes. So where the
    power-factor-corrected input cannot draw its power, neither can the capacitor input.
    """
    factor = np.asarray(load.draw_factor, dtype=float)
    shape = np.broadcast_shapes(np.shape(target), factor.shape)
    source = np.broadcast_to(np.asarray(target, dtype=float), shape).ravel()
    factor = np.broadcast_to(factor, shape).ravel()
    figures = {name: np.zeros(source.size) for name in FIGURES}
    for name in ("dc_voltage", "ripple_voltage", "conduction_angle"):
        figures[name][:] = np.nan
    off = (factor == 0) | (source < load.start_voltage)
    figures["load_voltage"][off] = source[off]
    running = ~off & np.isfinite(factor)
    if unreachable is not None:
        running &= ~np.broadcast_to(unreachable, shape).ravel()
    missing = ~off & ~running
    if running.any():
        rectifier = input_rectifier(load)
        network = Network(rectifier, frequency)
        columns = np.flatnonzero(running)
        # A column of a small draw (a small reservoir) needs a fine step; shot apart, it does
        # not impose it on the rest: columns go in groups of steps within a factor of two.
        steps = _steps_per_cycle(
            network,
            None if bypassed else _Lamp(lamp),
            source[columns],
            factor[columns],
            source_resistance,
            STEPS_PER_CYCLE_MIN,
        )
        groups = np.ceil(np.log2(steps)).astype(int)
        for group in np.unique(groups):
            chosen = columns[groups == group]
            # The first guess of each column: the unit as V_s^2 / P at its own source
            # voltage (the shooting's guess reads the rectifier's rated volts over this).
            guess_power = load.power * (rectifier.rated_voltage / source[chosen]) ** 2
            solved = _solve(
                network,
                None if bypassed else lamp,
                source[chosen],
                factor[chosen],
                source_resistance,
                guess_power,
                strict=False,
                floor=np.sqrt(2.0) * load.stop_voltage,
                steps_min=STEPS_PER_CYCLE_MIN,
            )
            stopped = solved["lowest_dc_voltage"] < np.sqrt(2.0) * load.stop_voltage
            holds = solved["converged"] & ~stopped & np.isfinite(solved["current"])
            for name in FIGURES:
                figures[name][chosen] = solved[name]
            missing[chosen[~holds]] = True
    for name in FIGURES:
        figures[name][missing] = np.nan
    return figures, off, missing, shape
