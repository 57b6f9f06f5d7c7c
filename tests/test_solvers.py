"""The sizing layer's root finders (optimiser/solvers.py) on functions with known roots.

Source: the roots are exact by construction (e.g. x^2 - c has the root sqrt(c)); the
secant and regula falsi methods as in any numerical-analysis text (from memory)."""

from __future__ import annotations

import numpy as np
from numpy.testing import assert_allclose

from optimiser import solvers


def _square_minus(c):
    """f(x) = x^2 - c, increasing for x > 0, root sqrt(c) (exact)."""
    calls = []

    def f(x, ix):
        calls.append(np.asarray(ix).copy())
        return x * x - c[ix]
    return f, calls


def test_secant_in_bracket_finds_square_roots_to_the_relative_tolerance():
    c = np.array([2.0, 9.0, 50.0, 1e4])
    f, calls = _square_minus(c)
    x0 = np.full(4, 1.5)
    x, ok = solvers.secant_in_bracket(f, x0, x0 * x0 - c, np.ones(4, bool), low=1.0,
                                      high=200.0, f_low=1.0 - c, f_high=4e4 - c, x_prev=1.0,
                                      f_prev=1.0 - c, rtol=1e-12, nan_low=-1.0)
    assert ok.all()
    # |x^2 - c| <= 1e-12 x  =>  |x - sqrt(c)| <= 1e-12 x / (2 sqrt(c)) ~ 5e-13
    assert_allclose(x, np.sqrt(c), rtol=1e-12)


def test_secant_in_bracket_leaves_inactive_elements_and_reports_unconverged():
    c = np.array([4.0, 9.0])
    f, calls = _square_minus(c)
    x0 = np.array([1.0, 1.0])
    x, ok = solvers.secant_in_bracket(f, x0, x0 * x0 - c, np.array([False, True]), low=0.5,
                                      high=10.0, f_low=0.25 - c, f_high=100.0 - c, x_prev=0.5,
                                      f_prev=0.25 - c, rtol=1e-12, nan_low=-1.0,
                                      max_iterations=2)
    assert x[0] == 1.0 and ok[0]          # not solved: returned as given, counted converged
    assert not ok[1]                     # two steps are not enough for 1e-12 from x = 1
    assert all(set(ix) <= {1} for ix in calls)  # only the active element was evaluated


def test_secant_in_bracket_treats_nan_as_below_the_root():
    # f is NaN below x = 2 (like a span below the fuselage diameter), root at 3
    def f(x, ix):
        return np.where(x < 2.0, np.nan, x - 3.0)
    x0 = np.array([1.0])
    x, ok = solvers.secant_in_bracket(f, x0, f(x0, None), np.array([True]), low=0.5,
                                      high=10.0, f_low=-1.0, f_high=7.0, x_prev=0.5,
                                      f_prev=-1.0, rtol=1e-12, nan_low=-1.0)
    assert ok[0]
    assert_allclose(x, [3.0], rtol=1e-12)


def test_root_after_prediction_closes_on_an_exact_prediction_and_recovers_from_a_bad_one():
    roots = np.array([40.0, 55.0, 70.0])

    def f(x, ix):
        return roots[ix] ** 3 - x**3   # falling, root at roots (exact)
    low, high = np.full(3, 10.0), np.full(3, 100.0)
    ix = np.arange(3)
    pred = np.array([40.0, 80.0, 12.0])   # exact, too high, too low
    got = solvers.root_after_prediction(f, pred, low, high, f(low, ix), f(high, ix),
                                        np.ones(3, bool), xtol=1e-3)
    assert_allclose(got, roots, atol=1e-3)
    assert abs(got[0] - 40.0) <= 0.5e-3  # the probes around the exact prediction bracket it


def test_falling_root_is_the_physics_one():
    from optimiser.physics import performance
    assert solvers.falling_root is performance.falling_root


def test_quadratic_start_is_exact_on_a_quadratic_and_narrows_the_bracket():
    # f(x) = (x - r)(x + 1), increasing for x > (r - 1) / 2, root r; f'(r) = r + 1 (exact)
    r = np.array([1.3, 2.0, 3.7, 7.5])

    def f(x):
        return (x - r) * (x + 1.0)
    probes = (1.0, 3.0, 8.0)
    guess, slope, lo, hi, f_lo, f_hi = solvers.quadratic_start(
        probes, tuple(f(np.full(4, p)) for p in probes), 0.5, 8.0, -1.0, f(np.full(4, 8.0)))
    assert_allclose(guess, r, rtol=1e-12)
    assert_allclose(slope, r + 1.0, rtol=1e-12)
    # each root's bracket is the pair of probes around it
    assert_allclose(lo, [1.0, 1.0, 3.0, 3.0])
    assert_allclose(hi, [3.0, 3.0, 8.0, 8.0])
    assert_allclose(f_lo, f(lo)) and assert_allclose(f_hi, f(hi))


def test_quadratic_start_falls_back_inside_the_bracket_where_a_probe_is_nan():
    # NaN at the lowest probe (counts as below the root): the quadratic is undefined, the
    # guess is the false-position point of the remaining bracket (exact for a line)
    f_vals = (np.array([np.nan]), np.array([-1.0]), np.array([4.0]))
    guess, slope, lo, hi, f_lo, f_hi = solvers.quadratic_start((1.0, 2.0, 7.0), f_vals,
                                                               0.5, 7.0, -2.0, np.array([4.0]))
    assert np.isnan(slope[0])
    assert (lo[0], hi[0]) == (2.0, 7.0)
    assert_allclose(guess, [2.0 + 1.0 * 5.0 / 5.0], rtol=1e-12)


def test_newton_falling_root_closes_nearly_linear_roots_in_two_newton_steps():
    # f(x) = c - x (1 + x / L), falling on [0, 20000] with a curvature like the climb rate's
    # over altitude; root x = (L / 2) (sqrt(1 + 4 c / L) - 1), slope -(1 + 2 x / L) (exact)
    big_l = 1e5
    c = np.array([500.0, 3000.0, 8000.0, 15000.0, 23000.0])
    calls = {"f": 0, "f_and_slope": 0}

    def f(x, ix):
        calls["f"] += 1
        return c[ix] - x * (1.0 + x / big_l)

    def f_and_slope(x, ix):
        calls["f_and_slope"] += 1
        return c[ix] - x * (1.0 + x / big_l), -(1.0 + 2.0 * x / big_l)
    n = c.size
    f_top = c - 2e4 * (1.0 + 2e4 / big_l)
    root = solvers.newton_falling_root(f, f_and_slope, np.zeros(n), np.full(n, 2e4), c, f_top,
                                       np.ones(n, bool), xtol=1.0)
    exact = 0.5 * big_l * (np.sqrt(1.0 + 4.0 * c / big_l) - 1.0)
    assert_allclose(root, exact, atol=0.1)  # the stop asks for an estimated xtol / 10
    assert calls == {"f": 0, "f_and_slope": 2}  # no regula falsi step left


def test_newton_falling_root_falls_back_to_regula_falsi_on_a_strongly_curved_function():
    # f(x) = c - x^3 on [0, 30]: two Newton steps from the false-position point do not
    # settle it; regula falsi finishes to the tolerance (root c^(1/3), exact)
    c = np.array([2.0, 50.0, 700.0, 9000.0, 20000.0])
    n = c.size
    used = []

    def f(x, ix):
        used.append(np.size(x))
        return c[ix] - x ** 3
    root = solvers.newton_falling_root(
        f, lambda x, ix: (c[ix] - x ** 3, -3.0 * x * x), np.zeros(n), np.full(n, 30.0), c,
        c - 27000.0, np.ones(n, bool), xtol=1e-3)
    assert_allclose(root, np.cbrt(c), atol=1e-3)
    assert used  # regula falsi did take part


def test_newton_falling_root_leaves_unsolved_elements_and_survives_nan_past_the_root():
    # f = 4 - x up to x = 5 and NaN above (NaN counts as past the root): root 4
    def f(x, ix):
        return np.where(x > 5.0, np.nan, 4.0 - x)

    def f_and_slope(x, ix):
        return f(x, ix), np.where(x > 5.0, np.nan, -1.0)
    # the high end's value is a weight (-1): the first point, 8, is NaN, the next ones close
    root = solvers.newton_falling_root(f, f_and_slope, np.array([0.0, 0.0]),
                                       np.array([10.0, 10.0]), np.array([4.0, 4.0]),
                                       np.array([-1.0, -1.0]), np.array([True, False]),
                                       xtol=1e-6)
    assert_allclose(root[0], 4.0, atol=1e-6)
    assert root[1] == 5.0  # not solved: its bracket's midpoint
