"""Rectifiers in the time domain, against ngspice on the same circuits and textbook figures."""

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy.integrate import solve_ivp

from shop.physics import waveform
from shop.physics.circuit import solve_bypassed, solve_series
from shop.physics.composite import CompositeLoad
from shop.physics.heater import HeaterLoad
from shop.physics.lamp import Lamp
from shop.physics.loads import Load
from shop.physics.rectifier import RectifierLoad
from shop.physics.transformer import TransformerLoad
from tests.physics import spice

# RMS and peak current and DC volts agree with ngspice within 2 % (the bar the models are held to).
SPICE_AGREEMENT = 0.02
LAMP = Lamp(120.0, 60.0)  # only for the protocol; the checks bypass it with a fixed resistor


def _figures(load, source, resistance, frequency=60.0):
    """Our periodic steady state with a fixed resistor in place of the lamp."""
    return solve_bypassed(LAMP, load, source, resistance, frequency)


def _spice_figures(body, output, frequency, settle, initial=""):
    samples = spice.simulate(body, ["i(V1)", output], frequency, settle, initial=initial)
    current = samples["i(V1)"]
    return {
        "current": np.sqrt(np.mean(current**2)),
        "peak_current": np.abs(current).max(),
        "dc_voltage": np.mean(samples[output]),
    }


def _assert_agrees(ours, theirs):
    # Within 2 %; the diodes differ (ours switch ideally, ngspice's by millivolts).
    assert_allclose(float(ours.current), theirs["current"], rtol=SPICE_AGREEMENT)
    assert_allclose(float(ours.peak_current), theirs["peak_current"], rtol=SPICE_AGREEMENT)
    assert_allclose(float(ours.dc_voltage), theirs["dc_voltage"], rtol=SPICE_AGREEMENT)


def test_a_rectifier_follows_the_load_protocol_but_has_no_impedance():
    load = RectifierLoad(120.0, 100e-6, dc_resistance=2000.0)
    assert isinstance(load, Load)
    with pytest.raises(ValueError, match="solved in the time domain"):
        load.impedance(0.1, 60.0)


def test_a_direct_silicon_bridge_agrees_with_ngspice():
    load = RectifierLoad(120.0, 220e-6, topology="bridge", dc_resistance=1000.0)
    body = spice.source(120.0, 60.0, 30.0)
    for name, anode, cathode in (
        ("1", "u", "pos"),
        ("2", "0", "pos"),
        ("3", "neg", "u"),
        ("4", "neg", "0"),
    ):
        body += spice.diode(name, anode, cathode, load.diode_drop, load.diode_resistance)
    body += "C1 pos neg 220u\nRL pos neg 1000\nRG1 pos 0 1e9\nRG2 neg 0 1e9\nEOUT out 0 pos neg 1\n"
    theirs = _spice_figures(body, "v(out)", 60.0, settle=2.0)
    _assert_agrees(_figures(load, 120.0, 30.0), theirs)


def test_a_half_wave_valve_rectifier_straight_off_the_mains_agrees_with_ngspice():
    load = RectifierLoad(
        120.0, 50e-6, topology="half_wave", dc_resistance=3000.0, rectifier="valve"
    )
    body = spice.source(120.0, 60.0, 20.0)
    body += spice.diode("1", "u", "out", load.diode_drop, load.diode_resistance)
    body += "C1 out 0 50u\nRL out 0 3000\n"
    theirs = _spice_figures(body, "v(out)", 60.0, settle=2.0)
    _assert_agrees(_figures(load, 120.0, 20.0), theirs)


def test_a_centre_tap_valve_rectifier_through_a_transformer_agrees_with_ngspice():
    load = RectifierLoad(
        230.0,
        32e-6,
        topology="centre_tap",
        dc_resistance=6000.0,
        turns_ratio=1.4,
        winding_resistance=60.0,
        rectifier="valve",
    )
    body = spice.source(230.0, 50.0, 40.0)
    # An ideal transformer: each half of the secondary an EMF of n v(u), the primary drawing
    # n times each half's current.
    body += "EA a 0 u 0 1.4\nEB b 0 u 0 -1.4\nVSA a a1 0\nVSB b b1 0\n"
    body += "FA u 0 VSA 1.4\nFB u 0 VSB -1.4\nRWA a1 a2 60\nRWB b1 b2 60\n"
    body += spice.diode("1", "a2", "out", load.diode_drop, load.diode_resistance)
    body += spice.diode("2", "b2", "out", load.diode_drop, load.diode_resistance)
    body += "C1 out 0 32u\nRL out 0 6000\n"
    theirs = _spice_figures(body, "v(out)", 50.0, settle=2.0)
    _assert_agrees(_figures(load, 230.0, 40.0, 50.0), theirs)


def test_a_voltage_doubler_agrees_with_ngspice():
    load = RectifierLoad(120.0, 100e-6, topology="doubler", dc_resistance=4000.0)
    body = spice.source(120.0, 60.0, 25.0)
    body += spice.diode("1", "u", "top", load.diode_drop, load.diode_resistance)
    body += spice.diode("2", "bottom", "u", load.diode_drop, load.diode_resistance)
    body += "C1 top 0 100u\nC2 0 bottom 100u\nRL top bottom 4000\nEOUT out 0 top bottom 1\n"
    theirs = _spice_figures(body, "v(out)", 60.0, settle=3.0)
    _assert_agrees(_figures(load, 120.0, 25.0), theirs)


def test_a_choke_input_bridge_agrees_with_ngspice():
    load = RectifierLoad(
        120.0,
        50e-6,
        topology="bridge",
        dc_resistance=1500.0,
        turns_ratio=2.0,
        winding_resistance=20.0,
        choke_inductance=4.0,
        choke_resistance=100.0,
    )
    body = spice.source(120.0, 60.0, 10.0)
    body += "ES s 0 u 0 2\nVSS s s1 0\nFS u 0 VSS 2\nRW s1 s2 20\n"
    for name, anode, cathode in (
        ("1", "s2", "pos"),
        ("2", "0", "pos"),
        ("3", "neg", "s2"),
        ("4", "neg", "0"),
    ):
        body += spice.diode(name, anode, cathode, load.diode_drop, load.diode_resistance)
    body += "L1 pos m 4\nRCH m out 100\nC1 out neg 50u\nRL out neg 1500\nRG neg 0 1e9\n"
    body += "EOUT dc 0 out neg 1\n"
    theirs = _spice_figures(body, "v(dc)", 60.0, settle=3.0)
    _assert_agrees(_figures(load, 120.0, 10.0), theirs)


def test_a_valve_set_of_transformer_heaters_and_rectifier_agrees_with_ngspice():
    transformer = TransformerLoad(120.0, 80.0, magnetising_fraction=0.08)
    heaters = HeaterLoad(120.0, 22.0)
    rectifier = RectifierLoad(
        120.0,
        40e-6,
        topology="centre_tap",
        dc_resistance=6000.0,
        turns_ratio=2.5,
        rectifier="valve",
    )
    unit = CompositeLoad([transformer, heaters, rectifier])
    ours = _figures(unit, 120.0, 15.0)
    # The heaters sit at the resistance of the RMS volts our solution gives them.
    heater_resistance = 1.0 / float(heaters.admittance(ours.load_voltage, 60.0).real)
    body, initial = spice.valve_set(
        transformer, heater_resistance, rectifier, float(ours.load_voltage), 60.0
    )
    theirs = _spice_figures(
        spice.source(120.0, 60.0, 15.0) + body, "v(out)", 60.0, settle=2.0, initial=initial
    )
    _assert_agrees(ours, theirs)


def test_through_a_lamp_the_current_is_that_of_a_resistor_of_the_lamps_resistance():
    load = RectifierLoad(120.0, 220e-6, topology="bridge", dc_resistance=1000.0)
    through_lamp = solve_series(LAMP, load, 120.0, 2.0)
    lamp_resistance = float(through_lamp.lamp_voltage / through_lamp.current)
    fixed = solve_bypassed(LAMP, load, 120.0, 2.0 + lamp_resistance)
    # The lamp is a fixed resistance over the cycle: both are the same periodic steady
    # state, converged to 1e-10 of their scales.
    assert_allclose(fixed.current, through_lamp.current, rtol=1e-8)
    assert_allclose(fixed.dc_voltage, through_lamp.dc_voltage, rtol=1e-8)
    # The lamp heats on the RMS current: its steady curve at that voltage, to rounding.
    assert_allclose(LAMP.current(through_lamp.lamp_voltage), through_lamp.current, rtol=1e-8)


def test_ripple_and_conduction_follow_the_textbook_capacitor_input_approximations():
    # The textbook's idealisation: a stiff source and diodes without resistance. The
    # reservoir sags by at most I / (2 f C) between crests (the capacitor does not quite
    # discharge for a whole half cycle, so a little less), and the diodes conduct from
    # where the sine rises back to the sagged reservoir, arccos(1 - ripple / crest) before
    # each crest (P. Horowitz and W. Hill, "The Art of Electronics", 2nd ed., section
    # 1.27, from memory).
    load = RectifierLoad(
        120.0,
        1000e-6,
        topology="bridge",
        dc_resistance=500.0,
        diode_drop=0.0,
        diode_resistance=0.002,
    )
    result = solve_bypassed(LAMP, load, 120.0, 0.005)
    current = float(result.dc_voltage) / 500.0
    bound = current / (2 * 60.0 * 1000e-6)
    # Below the bound by the share of the half cycle spent conducting (6 % here).
    assert 0.90 * bound <= float(result.ripple_voltage) <= bound
    angle = np.degrees(np.arccos(1 - bound / (np.sqrt(2) * 120.0)))
    # The diodes charge a little past the crest as well: within 5 %.
    assert_allclose(float(result.conduction_angle), angle, rtol=0.05)


def test_the_periodic_steady_state_does_not_move_with_a_finer_step(monkeypatch):
    load = RectifierLoad(120.0, 100e-6, topology="bridge", dc_resistance=2000.0)
    coarse = solve_series(LAMP, load, np.array([60.0, 120.0]), 2.0)
    monkeypatch.setattr(waveform, "PERIOD_STEPS_MIN", 4 * waveform.PERIOD_STEPS_MIN)
    fine = solve_series(LAMP, load, np.array([60.0, 120.0]), 2.0)
    # RK4 with the diodes' kinks: about 1e-5 at 256 steps a cycle.
    assert_allclose(coarse.current, fine.current, rtol=1e-4)
    assert_allclose(coarse.dc_voltage, fine.dc_voltage, rtol=1e-4)


def test_a_sweep_solves_every_step_at_once_and_shapes_follow_the_source():
    load = RectifierLoad(120.0, 100e-6, dc_resistance=2000.0).scaled([[1.0], [2.0]])
    result = solve_series(LAMP, load, np.array([0.0, 40.0, 120.0]), 2.0)
    assert result.current.shape == (2, 3)
    assert_allclose(result.current[:, 0], 0.0, atol=0)
    assert (result.current[1, 1:] > result.current[0, 1:]).all()
    assert (result.peak_current[:, 1:] > np.sqrt(2) * result.current[:, 1:]).all()


def test_describe_says_what_rectifier_and_what_it_draws():
    load = RectifierLoad(
        230.0,
        47e-6,
        topology="centre_tap",
        dc_resistance=5000.0,
        turns_ratio=1.3,
        rectifier="valve",
    )
    description = load.describe()
    assert description["model"] == "rectifier"
    assert "valve full-wave centre-tap rectifier" in description["summary"]
    assert any("warm-up" in line for line in description["assumptions"])


@pytest.mark.parametrize(
    ("arguments", "name"),
    [
        ({"topology": "triple"}, "topology"),
        ({"rectifier": "selenium"}, "rectifier"),
        ({"capacitance": 0.0}, "capacitance"),
        ({"dc_current": 0.1}, "dc_resistance or dc_current or dc_power"),
        ({"topology": "doubler", "choke_inductance": 5.0}, "choke_inductance"),
        ({"turns_ratio": -2.0}, "turns_ratio"),
    ],
)
def test_bad_rectifier_parameters_are_refused_by_name(arguments, name):
    options = {"capacitance": 100e-6, "dc_resistance": 2000.0, **arguments}
    with pytest.raises(ValueError, match=name):
        RectifierLoad(120.0, **options)


def test_the_shooting_agrees_with_scipy_solve_ivp_run_to_steady_state():
    load = RectifierLoad(120.0, 47e-6, topology="half_wave", dc_resistance=2500.0)
    ours = solve_bypassed(LAMP, load, 120.0, 20.0)
    network = waveform.Network(load, 60.0)
    evaluate = network.kernel(np.array([1.0]), np.array([20.0]), np.array([0.0]))
    amplitude = np.sqrt(2) * 120.0

    def rate(time, state):
        drive = np.array([amplitude * np.sin(2 * np.pi * 60.0 * time)])
        return evaluate(drive, state.reshape(-1, 1))[0].ravel()

    # From a discharged reservoir for 2 s (17 time constants of 47 uF and 2500 ohm), then one
    # cycle sampled finely; an adaptive Runge-Kutta of scipy's own, tight tolerances.
    settled = solve_ivp(rate, (0.0, 2.0), [0.0], method="RK45", rtol=1e-9, atol=1e-9)
    times = 2.0 + np.arange(4000) / 4000 / 60.0
    cycle = solve_ivp(
        rate, (2.0, 2.0 + 1 / 60.0), settled.y[:, -1], t_eval=times, rtol=1e-10, atol=1e-10
    )
    current = np.array(
        [
            evaluate(np.array([amplitude * np.sin(2 * np.pi * 60.0 * t)]), y.reshape(-1, 1))[2]
            for t, y in zip(cycle.t, cycle.y.T)
        ]
    ).ravel()
    # Our RK4 at 256 steps a cycle against scipy's adaptive steps: about 1e-5.
    assert_allclose(float(ours.current), np.sqrt(np.mean(current**2)), rtol=1e-4)
    assert_allclose(float(ours.dc_voltage), np.mean(cycle.y[0]), rtol=1e-4)
