"""Meter correction fit: least squares against an independent reference fit."""

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import stats

from shop.physics.meters import fit_meter_correction


def test_fit_recovers_a_known_gain_and_offset():
    indicated = np.array([10.0, 50.0, 100.0, 150.0, 230.0])
    reference = 1.02 * indicated - 0.7
    correction = fit_meter_correction(reference, indicated)
    # Exact data: only floating-point round-off separates the fit from the truth.
    assert_allclose([correction.gain, correction.offset], [1.02, -0.7], rtol=1e-12, atol=1e-10)
    assert correction.largest_residual < 1e-9


def test_fit_agrees_with_scipy_linregress_on_noisy_pairs():
    rng = np.random.default_rng(7)
    indicated = np.linspace(20, 240, 9)
    reference = 0.985 * indicated + 1.3 + rng.normal(0, 0.2, indicated.size)
    correction = fit_meter_correction(reference, indicated)
    # scipy.stats.linregress is an independent implementation of the same least squares.
    expected = stats.linregress(indicated, reference)
    assert_allclose(
        [correction.gain, correction.offset], [expected.slope, expected.intercept], rtol=1e-10
    )
    residual = reference - correction.apply(indicated)
    assert correction.largest_residual == pytest.approx(np.abs(residual).max())


@pytest.mark.parametrize(
    ("reference", "indicated"),
    [([1.0], [1.0]), ([1.0, 2.0], [1.0]), ([1.0, np.nan], [1.0, 2.0]), ([1.0, 2.0], [5.0, 5.0])],
)
def test_unusable_pairs_are_refused(reference, indicated):
    with pytest.raises(ValueError):
        fit_meter_correction(reference, indicated)
