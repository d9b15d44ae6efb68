"""Tests of calibrating a lamp to measurements, shop.physics.lamp.Lamp.fit."""

import numpy as np
import pytest
from numpy.testing import assert_allclose

from shop.physics.lamp import (
    DEFAULT_CONDUCTION_FRACTION,
    FILLS,
    FIT_CONDUCTION_FRACTION_RANGE,
    FIT_MAX_VOLTAGE_RATIO,
    RATED_TEMPERATURE_RANGE,
    Lamp,
    LampFit,
)

# The lamp the measurements come from: not the defaults, so the fit has to move.
TRUE_TEMPERATURE = 2700.0
TRUE_FRACTION = 0.25
NOISE = 0.003  # relative standard deviation of the simulated ammeter, 0.3 %
# Bench points from 1 % of rated voltage to 1.1x rated: the low ones show the cold resistance.
VOLTAGES = np.geomspace(1.2, 132.0, 12)


def true_lamp():
    return Lamp(120.0, 60.0, rated_temperature=TRUE_TEMPERATURE, conduction_fraction=TRUE_FRACTION)


def noisy_points(seed, voltages=VOLTAGES):
    rng = np.random.default_rng(seed)
    current = true_lamp().current(voltages) * (1.0 + NOISE * rng.standard_normal(voltages.size))
    return np.column_stack([voltages, current])


def test_fit_recovers_the_lamp_from_exact_points():
    points = np.column_stack([VOLTAGES, true_lamp().current(VOLTAGES)])
    fit = Lamp.fit(120.0, 60.0, points=points)
    # Noise-free data: only the optimiser's tolerance is left, far inside 0.01 K and 1e-5.
    assert_allclose(fit.rated_temperature, TRUE_TEMPERATURE, atol=0.01)
    assert_allclose(fit.conduction_fraction, TRUE_FRACTION, atol=1e-5)
    assert fit.rms_residual < 1e-9


def test_fit_recovers_rated_temperature_and_conduction_from_noisy_points():
    fit = Lamp.fit(120.0, 60.0, points=noisy_points(seed=3))
    # Over 20 seeds at 0.3 % noise the fitted values scattered by 12 K and 0.0017 (standard
    # deviations, measured when this test was written): 4 standard deviations.
    assert_allclose(fit.rated_temperature, TRUE_TEMPERATURE, atol=50.0)
    assert_allclose(fit.conduction_fraction, TRUE_FRACTION, atol=0.007)


def test_fit_with_a_cold_resistance_pins_the_rated_temperature():
    lamp = true_lamp()
    points = noisy_points(seed=5, voltages=np.linspace(12.0, 132.0, 11))
    fit = Lamp.fit(120.0, 60.0, points=points, cold_resistance=lamp.cold_resistance * 1.003)
    # rho rises about 0.5 % per 10 K near 2700 K, so the 0.3 % cold-resistance error moves T_r
    # by about 7 K; over 20 seeds the points then scattered T_r by 0.1 K and the conduction
    # fraction by 0.0022 (standard deviations): 15 K and 4 standard deviations.
    assert_allclose(fit.rated_temperature, TRUE_TEMPERATURE, atol=15.0)
    assert_allclose(fit.conduction_fraction, TRUE_FRACTION, atol=0.009)
    assert abs(fit.cold_resistance_residual) < 0.01 * lamp.cold_resistance


def test_fit_residuals_are_model_minus_measured_current_at_each_point():
    points = noisy_points(seed=7)
    fit = Lamp.fit(120.0, 60.0, points=points)
    # Recomputed from the returned lamp: same solver, same numbers.
    assert_allclose(fit.residuals, fit.lamp.current(points[:, 0]) - points[:, 1], rtol=1e-12)
    assert_allclose(fit.rms_residual, np.sqrt(np.mean(fit.residuals**2)), rtol=1e-12)


def test_fit_rms_residual_is_the_size_of_the_meter_noise():
    points = noisy_points(seed=11)
    fit = Lamp.fit(120.0, 60.0, points=points)
    noise = NOISE * np.sqrt(np.mean(points[:, 1] ** 2))
    # Two parameters fitted to 12 points leave most of the noise; a factor of 2 either way
    # covers the chi-square spread for 10 degrees of freedom.
    assert noise / 2.0 < fit.rms_residual < 2.0 * noise


def test_fit_from_a_cold_resistance_alone_keeps_the_default_conduction():
    lamp = true_lamp()
    fit = Lamp.fit(120.0, 60.0, cold_resistance=lamp.cold_resistance)
    # The cold resistance fixes T_r through the resistivity table exactly: 1e-9 K.
    assert_allclose(fit.rated_temperature, TRUE_TEMPERATURE, atol=1e-9)
    assert fit.conduction_fraction == DEFAULT_CONDUCTION_FRACTION["gas"]
    assert fit.residuals.shape == (0,)
    assert fit.rms_residual == 0.0
    assert fit.cold_resistance_residual == 0.0


def test_fit_takes_points_as_a_list_of_pairs_or_an_array():
    points = noisy_points(seed=2)
    from_array = Lamp.fit(120.0, 60.0, points=points)
    from_list = Lamp.fit(120.0, 60.0, points=[tuple(pair) for pair in points])
    # Same numbers in, same deterministic optimiser: identical results.
    assert from_list.rated_temperature == from_array.rated_temperature
    assert isinstance(from_list, LampFit)
    assert from_list.residuals.shape == (len(points),)


@pytest.mark.parametrize("fill", FILLS)
def test_every_lamp_the_fit_may_try_reaches_the_highest_accepted_voltage(fill):
    # The corner of the search (hottest rating, most conduction) reaches least far.
    corner = Lamp(
        120.0,
        60.0,
        fill=fill,
        rated_temperature=RATED_TEMPERATURE_RANGE[1],
        conduction_fraction=FIT_CONDUCTION_FRACTION_RANGE[1],
    )
    assert corner.max_voltage >= FIT_MAX_VOLTAGE_RATIO * 120.0


def test_fit_without_points_or_cold_resistance_is_refused():
    with pytest.raises(ValueError, match="give points, cold_resistance or both"):
        Lamp.fit(120.0, 60.0)


def test_fit_with_empty_points_is_refused():
    with pytest.raises(ValueError, match="points must not be empty"):
        Lamp.fit(120.0, 60.0, points=[])


@pytest.mark.parametrize("bad", [np.nan, np.inf])
def test_fit_with_nan_or_infinite_points_is_refused(bad):
    with pytest.raises(ValueError, match="points must be finite numbers"):
        Lamp.fit(120.0, 60.0, points=[[60.0, 0.3], [120.0, bad]])


def test_fit_with_negative_points_is_refused():
    with pytest.raises(ValueError, match="points must not be negative"):
        Lamp.fit(120.0, 60.0, points=[[60.0, 0.3], [-120.0, 0.5]])


def test_fit_with_points_not_in_pairs_is_refused():
    with pytest.raises(ValueError, match=r"points must be \(volts, amps\) pairs"):
        Lamp.fit(120.0, 60.0, points=[60.0, 0.3, 120.0])


def test_fit_with_one_point_and_no_cold_resistance_is_refused():
    with pytest.raises(ValueError, match="points must hold at least 2"):
        Lamp.fit(120.0, 60.0, points=[[120.0, 0.5]])


def test_fit_with_points_beyond_the_models_reach_is_refused():
    with pytest.raises(ValueError, match=r"points must not exceed 1.1x rated voltage"):
        Lamp.fit(120.0, 60.0, points=[[60.0, 0.3], [140.0, 0.55]])


@pytest.mark.parametrize("cold_resistance", [0.0, -16.0, np.nan])
def test_fit_with_a_non_positive_or_nan_cold_resistance_is_refused(cold_resistance):
    with pytest.raises(ValueError, match="cold_resistance must"):
        Lamp.fit(120.0, 60.0, cold_resistance=cold_resistance)
