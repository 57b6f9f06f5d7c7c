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
