"""Vectorised root finders of the sizing layer, one element per design, no loop over designs.

Each solver iterates only the elements not yet converged and never raises for one odd
element: a NaN function value counts as "past the root" or "not closed", as each solver says.

:func:`falling_root` (regula falsi, Anderson-Bjorck) lives in
:mod:`optimiser.physics.performance`, where the physics tests pin it; it is re-exported here
so that the sizing layer takes every solver from this one module.
"""

from __future__ import annotations

import numpy as np

from .physics.performance import falling_root

__all__ = ["falling_root", "newton_falling_root", "quadratic_start", "root_after_prediction",
           "secant_in_bracket", "whole_or"]


def whole_or(ix, n):
    """``slice(None)`` where the index array ``ix`` is every one of ``n`` elements in order
    (a view instead of a gathered copy), else ``ix``."""
    return slice(None) if len(ix) == n else ix


def secant_in_bracket(f, x_first, f_first, active, low, high, f_low, f_high, x_prev, f_prev,
                      rtol, nan_low, max_iterations=60):
    """Roots of an increasing function by secant steps kept inside a bracket.

    A step that leaves the bracket is replaced by the false-position step between the
    bracket's ends, or by bisection when that too falls outside. Only the elements not yet
    converged are evaluated.

    Parameters
    ----------
    f : callable
        ``f(x, ix)`` evaluates the function at ``x`` for the elements ``ix`` (an index
        array, or ``slice(None)`` when every element is evaluated).
    x_first, f_first : ndarray, shape (n,)
        First point of every element and its function value (evaluated by the caller). [x], [f]
    active : ndarray of bool, shape (n,)
        Elements to solve; the others are returned as ``x_first`` and counted as converged.
    low, high : array_like, broadcast to (n,)
        Bracket ends (the root lies between them). [x]
    f_low, f_high : array_like, broadcast to (n,)
        Function values (or weights for the false-position step) at the ends. [f]
    x_prev, f_prev : array_like, broadcast to (n,)
        The point before ``x_first``, for the first secant step. [x], [f]
    rtol : float
        An element stops when ``|f| <= rtol * x``. [f]/[x]
    nan_low : float
        Value taken for a NaN function value when it moves the low end (NaN counts as
        "below the root"). [f]
    max_iterations : int, default 60
        Elements still unconverged after this many steps are reported so.

    Returns
    -------
    x : ndarray, shape (n,)
        The last point of every element. [x]
    converged : ndarray of bool, shape (n,)
        True where the element converged or was not solved.

    References
    ----------
    .. [1] R. P. Brent, "Algorithms for Minimization without Derivatives", Prentice-Hall,
       1973, ch. 4 (secant and bisection safeguarded in a bracket; from memory).
    """
    n = np.shape(x_first)[0]
    ia = np.flatnonzero(active)

    def part(v):
        v = np.asarray(v, dtype=float)
        return np.full(ia.size, float(v)) if v.ndim == 0 else v[ia]

    lo, hi, r_lo, r_hi = part(low), part(high), part(f_low), part(f_high)
    m_prev, r_prev = part(x_prev), part(f_prev)
    m = np.array(x_first, dtype=float)
    for step_no in range(max_iterations):
        if ia.size == 0:
            break
        mi = m[ia]
        r = f_first[ia] if step_no == 0 else f(mi, whole_or(ia, n))
        up = r >= 0.0  # a NaN value counts as not yet closed
        lo, r_lo = np.where(up, lo, mi), np.where(up, r_lo, np.nan_to_num(r, nan=nan_low))
        hi, r_hi = np.where(up, mi, hi), np.where(up, r, r_hi)
        todo = ~(np.abs(r) <= rtol * mi)
        ia, mi, r, lo, hi = ia[todo], mi[todo], r[todo], lo[todo], hi[todo]
        r_lo, r_hi, m_prev, r_prev = r_lo[todo], r_hi[todo], m_prev[todo], r_prev[todo]
        with np.errstate(divide="ignore", invalid="ignore"):
            step = mi - r * (mi - m_prev) / (r - r_prev)
            inside = (step > lo) & (step < hi)  # False for NaN
            # outside the bracket: the false-position step between its ends, else bisection
            fp = lo - r_lo * (hi - lo) / (r_hi - r_lo)
        fp = np.where((fp > lo) & (fp < hi), fp, 0.5 * (lo + hi))
        m_prev, r_prev = mi, r
        m[ia] = np.where(inside, step, fp)
    converged = np.ones(n, dtype=bool)
    converged[ia] = False
    return m, converged


def quadratic_start(x, f, low, high, f_low, f_high):
    """A first guess of the root of an increasing function from three probes of it, and the
    bracket the probes leave.

    The quadratic through the three points (Newton's divided differences) is solved for its
    root inside the bracket; where it has none there (or a value is NaN), the false-position
    point between the bracket's ends is taken, and the midpoint where that too fails.

    Parameters
    ----------
    x : sequence of three floats or arrays broadcast to (n,)
        Probe points, increasing. [x]
    f : sequence of three ndarrays, shape (n,)
        The function at them; NaN counts as below the root. [f]
    low, high, f_low, f_high : array_like, broadcast to (n,)
        Outer bracket and its end values (or weights) before the probes. [x], [f]

    Returns
    -------
    guess, slope, low, high, f_low, f_high : ndarray, shape (n,)
        The guess, strictly inside the narrowed bracket where it has width; the quadratic's
        slope there (NaN where the guess is not its root) [f]/[x], for a first Newton-like
        step; and the narrowed bracket with its end values.

    References
    ----------
    .. [1] W. H. Press, S. A. Teukolsky, W. T. Vetterling and B. P. Flannery, "Numerical
       Recipes", 3rd ed., Cambridge University Press, 2007, sections 3.2 (Newton's form of
       the interpolating polynomial) and 5.6 (the quadratic's roots without cancellation);
       from memory.
    """
    (x0, x1, x2), (f0, f1, f2) = x, f
    shape = np.shape(f0)
    lo = np.array(np.broadcast_to(low, shape), dtype=float)
    hi = np.array(np.broadcast_to(high, shape), dtype=float)
    f_lo = np.array(np.broadcast_to(f_low, shape), dtype=float)
    f_hi = np.array(np.broadcast_to(f_high, shape), dtype=float)
    for xk, fk in ((x2, f2), (x1, f1), (x0, f0)):  # the lowest probe at or above the root
        up = fk >= 0.0
        hi, f_hi = np.where(up, xk, hi), np.where(up, fk, f_hi)
    for xk, fk in ((x0, f0), (x1, f1), (x2, f2)):  # the highest probe below it
        down = ~(fk >= 0.0) & (xk < hi)
        lo = np.where(down, xk, lo)
        f_lo = np.where(down, np.where(np.isnan(fk), f_lo, fk), f_lo)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        d01 = (f1 - f0) / (x1 - x0)
        c = ((f2 - f1) / (x2 - x1) - d01) / (x2 - x0)
        # f(x0 + t) = f0 + b t + c t^2 with b = d01 - c (x1 - x0)
        b = d01 - c * (x1 - x0)
        root_disc = np.sqrt(b * b - 4.0 * c * f0)
        q = -0.5 * (b + np.copysign(root_disc, b))
        t_a, t_b = q / c, f0 / q
        guess, slope = np.nan, np.nan
        for t in (t_a, t_b):
            inside = (x0 + t > lo) & (x0 + t < hi)
            guess = np.where(inside, x0 + t, guess)
            slope = np.where(inside, b + 2.0 * c * t, slope)
        fp = lo - f_lo * (hi - lo) / (f_hi - f_lo)
    quadratic = ~np.isnan(guess)
    guess = np.where(quadratic, guess,
                     np.where((fp > lo) & (fp < hi), fp, 0.5 * (lo + hi)))
    return guess, np.where(quadratic, slope, np.nan), lo, hi, f_lo, f_hi


def root_after_prediction(f, prediction, low, high, f_low, f_high, solve, xtol):
    """Root of a falling function near a predicted root, by two probes and regula falsi.

    Two evaluations ``0.8 xtol`` apart around the prediction narrow the bracket (to within
    the tolerance when the prediction holds); :func:`falling_root` then finishes the rest.

    Parameters
    ----------
    f : callable
        ``f(x, ix)`` for the elements ``ix`` (an index array); ``f >= 0`` below the root.
    prediction : ndarray, shape (n,)
        Predicted root, inside ``[low, high]``. [x]
    low, high : ndarray, shape (n,)
        Bracket ends. [x]
    f_low, f_high : ndarray, shape (n,)
        Function values at the ends (``f_low >= 0 > f_high`` where ``solve``). [f]
    solve : ndarray of bool, shape (n,)
        Elements to solve; the others come back as some point of their bracket, for the
        caller to replace.
    xtol : float
        Bracket width at which an element stops. [x]

    Returns
    -------
    ndarray, shape (n,)
        The root (the midpoint of the narrowed bracket where the probes closed it). [x]

    References
    ----------
    .. [1] M. Dowell and P. Jarratt, "A modified regula falsi method for computing the root
       of an equation", BIT 11, 1971, pp. 168-174 (via :func:`falling_root`).
    """
    n = prediction.size
    two = np.concatenate([np.arange(n)] * 2)
    p_lo = np.maximum(prediction - 0.4 * xtol, low)
    p_hi = np.minimum(p_lo + 0.8 * xtol, high)
    f_two = f(np.concatenate([p_lo, p_hi]), two)
    f_plo = np.where(solve, f_two[:n], -1.0)
    f_phi = np.where(solve, f_two[n:], -1.0)
    past_lo, past_hi = f_plo >= 0.0, f_phi >= 0.0
    a_v = np.where(past_lo, np.where(past_hi, p_hi, p_lo), low)
    fa_v = np.where(past_lo, np.where(past_hi, f_phi, f_plo), f_low)
    b_v = np.where(past_lo, np.where(past_hi, high, p_hi), p_lo)
    fb_v = np.where(past_lo, np.where(past_hi, f_high, f_phi), f_plo)
    root = falling_root(f, a_v, b_v, fa_v, fb_v, xtol=xtol)
    narrowed = (b_v - a_v <= xtol) & solve
    return np.where(narrowed, 0.5 * (a_v + b_v), root)


def newton_falling_root(f, f_and_slope, low, high, f_low, f_high, solve, xtol,
                        newton_steps=2):
    """Root of a smooth falling function in a bracket: Newton steps from the bracket's
    false-position point, regula falsi (:func:`falling_root`) for what they leave open.

    Each Newton step evaluates the function and its slope at the point in one call, narrows
    the bracket with the value and moves to x - f / f'; a step that leaves the bracket (a
    NaN, a flat or rising stretch) is replaced by the false-position point. An element is
    done when its last step is at most ``xtol / 2``, or when the steps shrink fast enough
    that the error left, estimated from quadratic convergence as d2^3 / d1^2 (d1, d2 the last
    two steps), is below ``xtol / 10``. On a nearly linear function (the climb rate over
    altitude) two steps settle nearly every element; the rest are solved by regula falsi on
    the bracket the steps leave.

    Parameters
    ----------
    f : callable
        ``f(x, ix)`` for the elements ``ix`` (an index array); ``f >= 0`` below the root, a
        NaN counts as past it (regula falsi's function).
    f_and_slope : callable
        ``f_and_slope(x, ix)`` -> (f, df/dx) at ``x`` for the elements ``ix`` (an index
        array, or ``slice(None)`` for every element). [f], [f]/[x]
    low, high, f_low, f_high : ndarray, shape (n,)
        Bracket and the values at its ends (``f_low >= 0 > f_high`` where ``solve``). [x], [f]
    solve : ndarray of bool, shape (n,)
        Elements to solve; the others come back as their bracket's midpoint, for the caller
        to replace.
    xtol : float
        Accuracy of the root. [x]
    newton_steps : int, default 2
        Newton steps before regula falsi takes the rest. [-]

    Returns
    -------
    ndarray, shape (n,)
        The root. [x]

    References
    ----------
    .. [1] J. E. Dennis and R. B. Schnabel, "Numerical Methods for Unconstrained
       Optimization and Nonlinear Equations", Prentice-Hall, 1983, ch. 2 (Newton's method
       safeguarded in a bracket, and stopping on the step; from memory).
    """
    lo = np.asarray(low, dtype=float)
    hi = np.asarray(high, dtype=float)
    root = 0.5 * (lo + hi)
    ix = np.flatnonzero(solve)
    a, b = lo[ix], hi[ix]
    fa, fb = np.asarray(f_low, dtype=float)[ix], np.asarray(f_high, dtype=float)[ix]

    def false_position(a, b, fa, fb):
        return a + fa * (b - a) / (fa - fb)  # fa >= 0 > fb: inside the bracket

    x = false_position(a, b, fa, fb)
    last_step = np.full(ix.size, np.nan)  # no step before the first: no estimate
    for _ in range(newton_steps):
        if ix.size == 0:
            break
        fx, slope = f_and_slope(x, whole_or(ix, lo.size))
        below = fx >= 0.0  # NaN: past the root
        a, fa = np.where(below, x, a), np.where(below, fx, fa)
        # a NaN moves the high end but keeps its old value as the false position's weight
        b, fb = np.where(below, b, x), np.where(below | np.isnan(fx), fb, fx)
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            newton = x - fx / slope
            inside = (newton > a) & (newton < b)  # False for NaN
            step = np.abs(newton - x)
            left = step ** 3 / last_step ** 2  # the error left after this step, estimated
        done = inside & ((step <= 0.5 * xtol) | (left <= 0.1 * xtol))
        root[ix[done]] = newton[done]
        keep = ~done
        x = np.where(inside, newton, false_position(a, b, fa, fb))[keep]
        last_step = np.where(inside, step, np.nan)[keep]  # after a fallback: none
        ix, a, b, fa, fb = ix[keep], a[keep], b[keep], fa[keep], fb[keep]
    if ix.size:
        rest = ix
        root[rest] = falling_root(lambda x_, j: f(x_, rest[j]), a, b, fa, fb, xtol=xtol)
    return root
