"""Tests of optimiser.physics.weights: USAF wing equation in SI, engine and high-lift masses.

The wing-mass check values of METHODS sec. 5 are computed from the equation as recalled
([D], constants from memory): regression pins here, recomputed by us in the equation's
native units (lb, ft^2, kt) so that the test also checks the code's SI conversion.
"""

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from optimiser.physics import G0
from optimiser.physics import weights as wts

LB = 0.45359237         # kg, exact by definition
FT2 = 0.3048**2         # m^2, exact by definition
KT = 1852.0 / 3600.0    # m/s, exact by definition


def _wing_si(w_lb, n_ult, a, s_ft2, taper, tc, v_kt, sweep=0.0):
    return wts.wing_mass_usaf(w_lb * LB, n_ult, a, s_ft2 * FT2, taper, tc, sweep, v_kt * KT)


@pytest.mark.parametrize("a, w_lb", [
    (7.5, 252.35),   # regression pin: METHODS sec. 5 [D]; ours 252.3545 lb
    (10.0, 296.98),  # regression pin: METHODS sec. 5 [D]; ours 296.9803 lb
])
def test_regression_pin_usaf_wing(a, w_lb):
    # USAF light-aircraft wing equation, Nicolai & Carichner 2010 ch. 20 / Roskam Part V
    # sec. 5.1 (constants from memory): 2500 lb, n_ult 5.7, sweep 0, S 175 ft^2, taper 0.7,
    # t/c 0.15, V_H 130 KEAS; inputs converted to kg, m^2, m/s, output in kg.
    m = _wing_si(2500.0, 5.7, a, 175.0, 0.7, 0.15, 130.0)
    assert m == pytest.approx(w_lb * LB, abs=0.005 * LB)  # printed to 0.01 lb


def test_usaf_wing_fraction_of_takeoff_mass():
    # METHODS sec. 5 [D]: 252.35 lb is 0.101 W_TO
    m = _wing_si(2500.0, 5.7, 7.5, 175.0, 0.7, 0.15, 130.0)
    assert m / (2500.0 * LB) == pytest.approx(0.101, abs=5e-4)


def test_usaf_wing_independent_native_units():
    # the equation written out again here, native units, for an off-design point with sweep
    w, n, a, s, lam, tc, v, sw = 4000.0, 5.7, 9.0, 200.0, 0.5, 0.12, 160.0, np.radians(10.0)
    native = 96.948 * ((w * n / 1e5) ** 0.65 * (a / np.cos(sw) ** 2) ** 0.57
                       * (s / 100.0) ** 0.61 * ((1 + lam) / (2 * tc)) ** 0.36
                       * (1 + v / 500.0) ** 0.5) ** 0.993
    # code converts knots with 0.514444 m/s, not 1852/3600: about 1e-7 relative
    assert _wing_si(w, n, a, s, lam, tc, v, sw) == pytest.approx(native * LB, rel=1e-6)


def test_usaf_wing_vectorised():
    a = np.array([6.0, 7.5, 9.0, 10.0])
    m = _wing_si(2500.0, 5.7, a, 175.0, 0.7, 0.15, 130.0)
    assert m.shape == a.shape
    assert m[1] == pytest.approx(252.35 * LB, abs=0.005 * LB)  # regression pin as above


@settings(deadline=None, max_examples=100)
@given(a=st.floats(4.0, 14.0), da=st.floats(0.05, 4.0), m_to=st.floats(500.0, 6000.0),
       ws=st.floats(400.0, 2500.0))
def test_wing_mass_grows_with_aspect_ratio(a, da, m_to, ws):
    s = m_to * G0 / ws
    m1 = wts.wing_mass_usaf(m_to, 5.7, a, s, 0.6, 0.14, 0.0, 70.0)
    m2 = wts.wing_mass_usaf(m_to, 5.7, a + da, s, 0.6, 0.14, 0.0, 70.0)
    assert m2 > m1


def test_engine_masses():
    # definitions of the specific-mass forms (common practice, METHODS sec. 5)
    # 150 kW x 1.4 kg/kW = 210 kg
    assert wts.propeller_engine_mass(150e3, 1.4) == pytest.approx(210.0, rel=1e-12)
    # turbofan: T / (g (T/W)_engine) x installation factor; regression pin (computed by
    # us): 50 kN, T/W 5, x1.3 -> 1325.63 kg
    assert wts.turbofan_engine_mass(50e3, 5.0, 1.3) == pytest.approx(
        50e3 / (G0 * 5.0) * 1.3, rel=1e-12)
    assert wts.turbofan_engine_mass(50e3, 5.0, 1.3) == pytest.approx(1325.63, abs=0.005)


def test_high_lift_mass():
    # regression pin (arithmetic by us): rho_A,flap S_flap + rho_A,slat S_slat + actuators;
    # S 16 m^2, flap 0.18 S at 24 kg/m^2, slat 0.12 S at 17 kg/m^2, 12 kg actuators
    # -> 69.12 + 32.64 + 12 = 113.76 kg
    assert wts.high_lift_mass(16.0, 0.18, 24.0, 0.12, 17.0, 12.0) == pytest.approx(113.76,
                                                                                   abs=1e-9)


def test_usaf_wing_at_fixed_wing_loading_is_k_times_a_power_of_mass():
    # with S = m g / (W/S) the USAF equation is K m^((0.65 + 0.61) 0.993); the sizing's mass
    # iteration uses that form, so it must equal the full equation (to rounding)
    rng = np.random.default_rng(4)
    m = rng.uniform(500.0, 20000.0, 200)
    ws = rng.uniform(300.0, 6000.0, 200)
    ar = rng.uniform(5.0, 14.0, 200)
    full = wts.wing_mass_usaf(m, 5.7, ar, m * G0 / ws, 0.5, 0.14, 0.05, 90.0)
    k = wts.wing_mass_usaf_coefficient(ws, 5.7, ar, 0.5, 0.14, 0.05, 90.0)
    assert wts.WING_MASS_USAF_EXPONENT == pytest.approx(1.25118, abs=1e-12)
    np.testing.assert_allclose(k * m ** wts.WING_MASS_USAF_EXPONENT, full, rtol=1e-12)
