"""Vectorised root finding shared by the solvers: bracketed roots and monotone inverses."""

import numpy as np

SOLVER_MAX_ITERATIONS = 100
# A monotone inverse is polished until the function matches its target to this fraction.
INVERSE_RELATIVE_TOLERANCE = 1e-13


def bracketed_root(
    function,
    lower,
    upper,
    f_lower,
    f_upper,
    tolerance,
    start=None,
    max_iterations=SOLVER_MAX_ITERATIONS,
):
    """Roots of a vectorised function, each inside its own sign-changing bracket.

    Parameters
    ----------
    function : callable
        ``function(x)`` returns the residual for every element of the 1-D array
        ``x`` (evaluated all at once; elements already converged are ignored).
    lower, upper : numpy.ndarray
        1-D brackets, ``lower <= upper``, with ``f_lower`` and ``f_upper`` of
        opposite sign (or one of them within ``tolerance`` of zero).
    f_lower, f_upper : numpy.ndarray
        Residuals at the bracket ends.
    tolerance : numpy.ndarray or float
        A root is accepted once ``|function(x)| <= tolerance``.
    start : numpy.ndarray, optional
        A better first estimate inside each bracket than the secant through its
        ends (e.g. from a higher-order interpolation).
    max_iterations : int
        Iterations allowed; the bracket also stops once it is a few ulp wide.

    Returns
    -------
    x, residual : numpy.ndarray
        The roots and the residual at each.

    Notes
    -----
    Safeguarded secant: while the residual keeps halving, each step is the
    secant through the last two iterates; otherwise it is Illinois false
    position (Dowell & Jarratt 1971), the secant through the bracket ends with
    the residual of an end kept twice halved. Every step is checked to lie
    inside the bracket, which shrinks each time and guarantees convergence;
    a step that would leave it falls back to bisection.

    References
    ----------
    M. Dowell and P. Jarratt, "A modified regula falsi method for computing
    the root of an equation", BIT 11, 168-174 (1971).
    """
    lower = np.array(lower, dtype=float)
    upper = np.array(upper, dtype=float)
    f_lower = np.array(f_lower, dtype=float)
    f_upper = np.array(f_upper, dtype=float)
    tolerance = np.broadcast_to(np.asarray(tolerance, dtype=float), lower.shape)
    at_upper = np.abs(f_upper) <= tolerance
    x = np.where(at_upper, upper, lower)
    residual = np.where(at_upper, f_upper, f_lower)
    done = np.abs(residual) <= tolerance
    nearer_upper = np.abs(f_upper) < np.abs(f_lower)
    previous = np.where(nearer_upper, upper, lower)
    f_previous = np.where(nearer_upper, f_upper, f_lower)
    kept = np.zeros(lower.shape, dtype=int)  # +1: upper end kept last step, -1: lower end
    for iteration in range(max_iterations):
        active = ~done
        if not active.any():
            break
        with np.errstate(divide="ignore", invalid="ignore"):
            step = (lower * f_upper - upper * f_lower) / (f_upper - f_lower)
            secant = x - residual * (x - previous) / (residual - f_previous)
        if iteration == 0 and start is not None:
            step = np.array(start, dtype=float)
        elif iteration > 0:
            # The secant through the last two iterates, while it keeps halving the residual.
            improving = np.abs(residual) <= 0.5 * np.abs(f_previous)
            step = np.where(improving & (secant > lower) & (secant < upper), secant, step)
        outside = ~((step > lower) & (step < upper))
        step = np.where(outside, 0.5 * (lower + upper), step)
        step = np.where(active, step, x)
        f_step = function(step)
        previous = np.where(active, x, previous)
        f_previous = np.where(active, residual, f_previous)
        x = np.where(active, step, x)
        residual = np.where(active, f_step, residual)
        converged = active & (np.abs(f_step) <= tolerance)
        moving = active & ~converged
        replace_upper = moving & (np.sign(f_step) == np.sign(f_upper))
        replace_lower = moving & ~replace_upper
        f_lower = np.where(replace_upper & (kept == 1), 0.5 * f_lower, f_lower)
        f_upper = np.where(replace_lower & (kept == -1), 0.5 * f_upper, f_upper)
        upper = np.where(replace_upper, step, upper)
        f_upper = np.where(replace_upper, f_step, f_upper)
        lower = np.where(replace_lower, step, lower)
        f_lower = np.where(replace_lower, f_step, f_lower)
        kept = np.where(replace_upper, 1, np.where(replace_lower, -1, kept))
        width = upper - lower
        collapsed = width <= 4 * np.finfo(float).eps * np.maximum(np.abs(lower), np.abs(upper))
        done |= converged | (moving & collapsed)
    return x, residual


def monotone_inverse(
    function, target, grid_x, grid_y, relative_tolerance=INVERSE_RELATIVE_TOLERANCE
):
    """Where a rising function reaches each target, from its table and a vectorised polish.

    Parameters
    ----------
    function : callable
        ``function(x)`` for a 1-D array ``x``, rising strictly with ``x``.
    target : numeric
        Values to reach, any shape, within ``grid_y[0]`` to ``grid_y[-1]``.
    grid_x, grid_y : numpy.ndarray
        1-D table of the function, both strictly increasing.
    relative_tolerance : float, default ``INVERSE_RELATIVE_TOLERANCE``
        The polish stops once ``|function(x) - target|`` is below this fraction of the target.

    Returns
    -------
    numpy.ndarray
        ``x``, shaped like ``target``.

    Notes
    -----
    Each target is bracketed between neighbouring grid points, started from the linear
    interpolation and polished by :func:`bracketed_root`.
    """
    target = np.asarray(target, dtype=float)
    flat = target.ravel()
    if (flat < grid_y[0]).any() or (flat > grid_y[-1]).any():
        raise ValueError(
            f"target must lie within the table, {grid_y[0]:g} to {grid_y[-1]:g} "
            f"(got {flat.min():g} to {flat.max():g})"
        )
    index = np.clip(np.searchsorted(grid_y, flat), 1, grid_y.size - 1)
    lower, upper = grid_x[index - 1], grid_x[index]
    f_lower, f_upper = grid_y[index - 1] - flat, grid_y[index] - flat
    with np.errstate(divide="ignore", invalid="ignore"):
        start = np.where(
            f_upper > f_lower, lower - f_lower * (upper - lower) / (f_upper - f_lower), lower
        )

    def residual(x):
        return function(x) - flat

    root, _ = bracketed_root(
        residual, lower, upper, f_lower, f_upper, relative_tolerance * np.abs(flat), start=start
    )
    return root.reshape(target.shape)
