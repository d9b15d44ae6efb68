"""Meter checks: a linear correction fitted to paired readings against a reference meter."""

from dataclasses import dataclass

import numpy as np

MIN_PAIRS = 2


@dataclass(frozen=True)
class MeterCorrection:
    """``true = gain * indicated + offset``, with the fit's largest residual.

    Attributes
    ----------
    gain : float
        Multiplier on the indicated value [dimensionless].
    offset : float
        Added after the gain [V or A, as the readings].
    largest_residual : float
        Largest |reference - corrected indicated| over the pairs [V or A].
    """

    gain: float
    offset: float
    largest_residual: float

    def apply(self, indicated):
        """Corrected values for indicated readings (numeric, any shape) [V or A]."""
        return self.gain * np.asarray(indicated, dtype=float) + self.offset


def fit_meter_correction(reference, indicated):
    """Fit a gain and offset that map a meter's readings onto a reference meter's.

    Parameters
    ----------
    reference : array_like
        Values read on the reference meter [V or A].
    indicated : array_like
        The same quantities as the checked meter showed them [V or A].

    Returns
    -------
    MeterCorrection

    Notes
    -----
    Ordinary least squares of ``reference = gain * indicated + offset``
    (``numpy.linalg.lstsq``). With exactly two pairs the line passes through
    both and the residual is zero; more pairs show how linear the meter is.
    """
    reference = np.asarray(reference, dtype=float)
    indicated = np.asarray(indicated, dtype=float)
    if reference.shape != indicated.shape or reference.ndim != 1:
        raise ValueError("reference and indicated must be two lists of the same length")
    if reference.size < MIN_PAIRS:
        raise ValueError(f"a meter check needs at least {MIN_PAIRS} paired readings")
    if not (np.isfinite(reference).all() and np.isfinite(indicated).all()):
        raise ValueError("paired readings must be finite numbers")
    if np.ptp(indicated) == 0:
        raise ValueError("indicated readings must not all be equal: check at several points")
    design = np.column_stack([indicated, np.ones_like(indicated)])
    (gain, offset), *_ = np.linalg.lstsq(design, reference, rcond=None)
    residual = reference - (gain * indicated + offset)
    return MeterCorrection(float(gain), float(offset), float(np.abs(residual).max()))
