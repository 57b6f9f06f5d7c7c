"""Tests of optimiser.physics.aerodynamics: polar, Oswald factor, ground effect, wave drag.

Most check values of METHODS sec. 2 are computed from the published formulas ([D]); they are
regression pins here, each recomputed by us independently before being frozen. The one
printed value (McCormick, h/b = 0.06) is a published check.
"""

import numpy as np
import pytest
from numpy.testing import assert_allclose
from hypothesis import given, settings, strategies as st

from optimiser.physics import aerodynamics as aero

# --- published checks -----------------------------------------------------------------------


def test_mccormick_ground_effect_published():
    # McCormick, "Aerodynamics, Aeronautics and Flight Mechanics", 2nd ed. 1995, ground-effect
    # factor phi = (16 h/b)^2 / (1 + (16 h/b)^2); h/b = 0.06 -> 0.47960 (METHODS sec. 2.4,
    # value checked in a public copy [V]); 5 decimals printed.
    assert aero.ground_effect_mccormick(0.06) == pytest.approx(0.47960, abs=5e-6)
    assert aero.ground_effect_factor("mccormick", 0.06) == pytest.approx(0.47960, abs=5e-6)


def test_mccormick_limits():
    # phi -> 0 on the ground, -> 1 far from it (McCormick 1995, form of the factor)
    assert aero.ground_effect_mccormick(0.0) == 0.0
    assert aero.ground_effect_mccormick(10.0) == pytest.approx(1.0, abs=1e-4)


# --- regression pins (computed from the formulas; METHODS sec. 2 [D]) ----------------------

@pytest.mark.parametrize("k_ed0, expected", [
    (0.804, 0.7694),  # regression pin: N&S 2012 formula, METHODS sec. 2.2 [D]; ours 0.769361
    (0.873, 0.8354),  # regression pin: N&S 2012 formula, METHODS sec. 2.2 [D]; ours 0.835388
])
def test_regression_pin_nita_scholz_unswept(k_ed0, expected):
    # A 8, taper 0.45, sweep 0, d_F/b 0.12, M 0.2; e_theo = 0.98529 (ours 0.9852928)
    e = aero.oswald_nita_scholz2012(8.0, 0.45, 0.0, 0.12, 0.2, k_ed0)
    assert e == pytest.approx(expected, abs=5e-5)
    e_theo = aero.oswald_nita_scholz2012(8.0, 0.45, 0.0, 0.0, 0.2, 1.0)  # k_eF = k_eD0 = 1
    assert e_theo == pytest.approx(0.98529, abs=5e-6)


def test_regression_pin_nita_scholz_untapered():
    # regression pin: lambda = 1 -> e_theo = 0.94067 (METHODS sec. 2.2 [D]; ours 0.9406726)
    assert aero.oswald_nita_scholz2012(8.0, 1.0, 0.0, 0.0, 0.2, 1.0) == pytest.approx(
        0.94067, abs=5e-6)


def test_regression_pin_nita_scholz_swept_transonic():
    # regression pin: A 9.5, taper 0.25, sweep 25 deg, d_F/b 0.11, M 0.78, k_eD0 0.873
    # -> 0.6299 (METHODS sec. 2.2 [D]; ours 0.629935). Exercises Mach and sweep terms.
    e = aero.oswald_nita_scholz2012(9.5, 0.25, np.radians(25.0), 0.11, 0.78, 0.873)
    assert e == pytest.approx(0.6299, abs=5e-5)


def test_nita_scholz_mach_factor_is_one_below_03():
    # Nita & Scholz 2012: k_eM = 1 for M <= 0.3 (from memory)
    e1 = aero.oswald_nita_scholz2012(8.0, 0.45, 0.0, 0.12, 0.1, 0.873)
    e3 = aero.oswald_nita_scholz2012(8.0, 0.45, 0.0, 0.12, 0.3, 0.873)
    assert e1 == e3
    assert aero.oswald_nita_scholz2012(8.0, 0.45, 0.0, 0.12, 0.5, 0.873) < e3


@pytest.mark.parametrize("a, expected", [
    (8.0, 0.81571),   # regression pin: Obert 2009 p. 542 formula, METHODS 2.2 [D]; ours 0.815708
    (10.0, 0.78746),  # regression pin: Obert 2009 p. 542 formula, METHODS 2.2 [D]; ours 0.787456
])
def test_regression_pin_obert(a, expected):
    assert aero.oswald_obert2009(a) == pytest.approx(expected, abs=5e-6)
    via_registry = aero.oswald_factor("obert2009", a, 0.45, 0.0, 0.12, 0.2, 0.873)
    assert via_registry == pytest.approx(expected, abs=5e-6)


def test_registry_dispatch_nita_scholz():
    direct = aero.oswald_nita_scholz2012(8.0, 0.45, 0.0, 0.12, 0.2, 0.804)
    assert aero.oswald_factor("nita_scholz2012", 8.0, 0.45, 0.0, 0.12, 0.2, 0.804) == direct


@pytest.mark.parametrize("hb, mcc, wie", [
    (0.06, 0.47960, 0.38367),  # regression pins: METHODS sec. 2.4 [D]; ours 0.479600, 0.383668
    (0.10, 0.71910, 0.51508),  # regression pins: METHODS sec. 2.4 [D]; ours 0.719101, 0.515084
    (0.25, 0.94118, 0.76897),  # regression pins: METHODS sec. 2.4 [D]; ours 0.941176, 0.768966
])
def test_regression_pin_ground_effect(hb, mcc, wie):
    assert aero.ground_effect_factor("mccormick", hb) == pytest.approx(mcc, abs=5e-6)
    assert aero.ground_effect_factor("wieselsberger", hb) == pytest.approx(wie, abs=5e-6)


def test_wieselsberger_clipped_to_validity_range():
    # Nicolai & Carichner 2010 pp. 259-260: valid 0.033 < h/b < 0.25; the code clips.
    assert aero.ground_effect_wieselsberger(0.5) == aero.ground_effect_wieselsberger(0.25)
    assert aero.ground_effect_wieselsberger(0.0) == aero.ground_effect_wieselsberger(0.033)


def test_regression_pin_polar_and_ld_max():
    # regression pin: C_D0 0.025, A 8, e 0.75 -> K 0.053052, (L/D)max 13.729 at C_L 0.6865
    # (METHODS sec. 2.1 [D]; ours 0.0530516, 13.72937, 0.686468)
    k = aero.induced_drag_factor(8.0, 0.75)
    assert k == pytest.approx(0.053052, abs=5e-7)
    cl_star = np.sqrt(0.025 / k)
    assert cl_star == pytest.approx(0.6865, abs=5e-5)
    assert aero.lift_to_drag(cl_star, 0.025, k) == pytest.approx(13.729, abs=5e-4)
    # the maximum really is at C_L* on the code's polar
    cls = np.linspace(0.2, 1.4, 2401)
    ld = aero.lift_to_drag(cls, 0.025, k)
    assert cls[np.argmax(ld)] == pytest.approx(0.6865, abs=1e-3)
    assert ld.max() == pytest.approx(13.729, abs=5e-4)
    # C_D at C_L*: twice C_D0 (parabolic polar)
    assert aero.drag_coefficient(cl_star, 0.025, k) == pytest.approx(0.050, rel=1e-12)


@pytest.mark.parametrize("dispatcher", [
    lambda m: aero.oswald_factor(m, 8.0, 0.45, 0.0, 0.12, 0.2, 0.873),
    lambda m: aero.ground_effect_factor(m, 0.1),
])
def test_unknown_method_lists_valid_keys(dispatcher):
    with pytest.raises(ValueError) as err:
        dispatcher("no_such_method")
    msg = str(err.value)
    assert "no_such_method" in msg
    keys = list(aero.OSWALD_METHODS) + list(aero.GROUND_EFFECT_METHODS)
    assert sum(repr(k) in msg for k in keys) >= 2


def test_unknown_oswald_method_lists_all_oswald_keys():
    with pytest.raises(ValueError) as err:
        aero.oswald_factor("howe", 8.0, 0.45, 0.0, 0.12, 0.2, 0.873)
    for key in aero.OSWALD_METHODS:
        assert repr(key) in str(err.value)


def test_unknown_ground_effect_method_lists_all_keys():
    with pytest.raises(ValueError) as err:
        aero.ground_effect_factor("nicolai", 0.1)
    for key in aero.GROUND_EFFECT_METHODS:
        assert repr(key) in str(err.value)


def test_wave_drag_lock():
    # Lock's law dC_D = 20 (M - M_crit)^4 (Mason, Configuration Aerodynamics ch. 7, from
    # memory); M_DD defined by dC_D/dM = 0.1 (from memory).
    mdd = np.array([0.70, 0.78, 0.85])
    m_crit = mdd - (0.1 / 80.0) ** (1.0 / 3.0)
    assert np.all(aero.wave_drag_lock(m_crit - 0.01, mdd) == 0.0)
    assert np.all(aero.wave_drag_lock(m_crit, mdd) == 0.0)
    assert np.all(aero.wave_drag_lock(0.3, mdd) == 0.0)
    h = 1e-6
    slope = (aero.wave_drag_lock(mdd + h, mdd) - aero.wave_drag_lock(mdd - h, mdd)) / (2 * h)
    np.testing.assert_allclose(slope, 0.1, rtol=1e-6)
    # regression pin: dC_D(M_DD) = 20 (0.1/80)^(4/3) = 0.0026930 (computed by us)
    np.testing.assert_allclose(aero.wave_drag_lock(mdd, mdd), 0.0026930, atol=5e-8)


def test_vectorised_shapes():
    a = np.array([6.0, 8.0, 10.0, 12.0])
    e = aero.oswald_factor("nita_scholz2012", a, 0.45, 0.0, 0.12, 0.2, 0.873)
    assert e.shape == a.shape
    e2 = aero.oswald_factor("obert2009", a, 0.45, 0.0, np.full(4, 0.12), 0.2, 0.873)
    assert e2.shape == a.shape
    for i, ai in enumerate(a):
        assert e[i] == aero.oswald_nita_scholz2012(ai, 0.45, 0.0, 0.12, 0.2, 0.873)


@settings(deadline=None, max_examples=100)
@given(a=st.floats(4.0, 14.0), da=st.floats(0.01, 5.0), e=st.floats(0.5, 1.0))
def test_higher_aspect_ratio_lowers_k(a, da, e):
    assert aero.induced_drag_factor(a + da, e) < aero.induced_drag_factor(a, e)


@settings(deadline=None, max_examples=100)
@given(a=st.floats(4.0, 12.0), lam=st.floats(0.1, 1.0), sweep=st.floats(0.0, 35.0),
       dfb=st.floats(0.0, 0.2), m=st.floats(0.0, 0.80))
def test_nita_scholz_stays_physical(a, lam, sweep, dfb, m):
    # in its validity range the Oswald factor is between 0 and 1 (definition of e)
    e = aero.oswald_nita_scholz2012(a, lam, np.radians(sweep), dfb, m, 0.873)
    assert 0.0 < e < 1.0


@pytest.mark.parametrize("method", sorted(aero.OSWALD_METHODS))
def test_oswald_factor_is_the_wing_value_times_the_fuselage_factor(method):
    # the sizing computes e = e(d_F/b = 0) x k_eF(d_F/b) (the wing part once per design);
    # Nita & Scholz's k_eF = 1 - 2 (d_F/b)^2, Obert's e has no fuselage term
    ratio = np.array([0.0, 0.05, 0.12, 0.3, 0.7])
    full = aero.oswald_factor(method, 9.0, 0.45, 0.1, ratio, 0.5, 0.804)
    wing = aero.oswald_factor(method, 9.0, 0.45, 0.1, 0.0, 0.5, 0.804)
    k_ef = aero.oswald_fuselage_factor(method, ratio)
    np.testing.assert_allclose(wing * k_ef, full, rtol=1e-14)
    expected = (1.0 - 2.0 * np.minimum(ratio, 0.5) ** 2 if method == "nita_scholz2012"
                else np.ones(5))
    np.testing.assert_allclose(k_ef, expected, rtol=0, atol=1e-15)


def test_lock_wave_drag_slope_is_its_derivative():
    # 20 (M - M_crit)^4 with dC_D/dM = 0.1 at M_DD (Lock's definition of M_DD, Mason, from
    # memory); the solver's pair gives the same increment and its derivative
    mach = np.array([0.5, 0.70, 0.78, 0.80, 0.85])
    cdw, slope = aero.wave_drag_lock_and_slope(mach, 0.78)
    np.testing.assert_allclose(cdw, aero.wave_drag_lock(mach, 0.78), rtol=1e-14, atol=0)
    h = 1e-6
    numeric = (aero.wave_drag_lock(mach + h, 0.78) - aero.wave_drag_lock(mach - h, 0.78)) / (2 * h)
    np.testing.assert_allclose(slope, numeric, rtol=1e-6, atol=1e-12)
    assert slope[2] == pytest.approx(0.1, rel=1e-12)


# --- Oswald factor at each point's Mach, and the methods' Mach ranges --------------------------

def test_oswald_mach_factor_reproduces_nita_scholz_at_each_mach():
    # e(M) = e(M <= 0.3) k_eM(M) with k_eM = 1 - 0.001521 (M/0.3 - 1)^10.82 (Nita & Scholz 2012,
    # k-factors from memory); at M 0.78: (0.78/0.3 - 1)^10.82 = 1.6^10.82
    mach = np.array([0.1, 0.3, 0.5, 0.78])
    k_em = aero.oswald_mach_factor("nita_scholz2012", mach)
    assert k_em[2] == pytest.approx(1.0 - 0.001521 * (0.5 / 0.3 - 1.0) ** 10.82, rel=1e-12)
    assert k_em[3] == pytest.approx(1.0 - 0.001521 * 1.6**10.82, rel=1e-12)
    assert k_em[3] == pytest.approx(0.754129, abs=1e-6)
    assert_allclose(k_em[:2], 1.0)
    low = aero.oswald_nita_scholz2012(8.0, 0.45, 0.0, 0.12, 0.2, 0.804)
    at_m = aero.oswald_nita_scholz2012(8.0, 0.45, 0.0, 0.12, mach, 0.804)
    assert_allclose(at_m, low * k_em, rtol=1e-14)
    assert float(low) == pytest.approx(0.7694, abs=1e-3)  # METHODS.md sec. 2.2 check [D]


def test_oswald_mach_factor_obert_has_no_mach_term():
    assert_allclose(aero.oswald_mach_factor("obert2009", [0.2, 0.7]), 1.0)


def test_oswald_mach_validity_flags_points_beyond_the_fit():
    # k_eM reaches zero at M = 0.3 (1 + (1/0.001521)^(1/10.82)) = 0.8465 (from the formula)
    m_zero = 0.3 * (1.0 + (1.0 / 0.001521) ** (1.0 / 10.82))
    assert m_zero == pytest.approx(0.8465, abs=1e-4)
    assert float(aero.oswald_mach_factor("nita_scholz2012", m_zero)) == pytest.approx(0.0, abs=1e-12)
    valid = aero.oswald_mach_valid("nita_scholz2012", [0.2, 0.8, 0.81, m_zero])
    assert valid.tolist() == [True, True, False, False]
    assert aero.oswald_mach_valid("obert2009", [0.6, 0.75]).tolist() == [True, False]
    assert set(aero.OSWALD_MACH_RANGE) == set(aero.OSWALD_METHODS)


def test_oswald_mach_unknown_method():
    with pytest.raises(ValueError, match="unknown Oswald method 'howe2000'"):
        aero.oswald_mach_factor("howe2000", 0.5)
    with pytest.raises(ValueError, match="unknown Oswald method 'howe2000'"):
        aero.oswald_mach_valid("howe2000", 0.5)
