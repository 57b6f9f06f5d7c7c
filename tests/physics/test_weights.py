"""Tests of optimiser.physics.weights: USAF wing equation in SI, engine and high-lift masses,
and the class II component masses (USAF light-airplane and Torenbeek equations).

The wing-mass and fuel-system check values of METHODS sec. 5 are computed from the
equations as recalled ([D], constants from memory): regression pins here, recomputed by us
in the equations' native units (lb, ft^2, ft, kt, US gal) so that the tests also check the
code's SI conversion. No published worked example of the component equations could be
checked against its page in this work (the sources were not reachable): every component
value below is derived by hand from the formula as written in the module, and labelled so.
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


# --- class II component masses -------------------------------------------------------------

FT = 0.3048              # m, exact by definition
USGAL = 3.785411784e-3   # m^3, exact by definition


def test_fuel_system_usaf_methods_check_value():
    # METHODS.md sec. 5 check [D] (computed from the recalled USAF form, not a published
    # value): 50 US gal, f_int 0.5, 2 tanks, 1 engine -> 43.51 lb; ours 43.5091 lb.
    # Printed to 0.01 lb: tolerance 0.005 lb.
    m = wts.fuel_system_mass_usaf(50.0 * USGAL, 0.5, 2, 1)
    assert m == pytest.approx(43.51 * LB, abs=0.005 * LB)
    # the same written out here in native units (hand derivation of the formula)
    native = 2.49 * (50.0**0.6 * (1 / 1.5) ** 0.3 * 2**0.2 * 1**0.13) ** 1.21
    assert m == pytest.approx(native * LB, rel=1e-12)


# Hand-derived values from the formulas as written (computed by us; not published checks).
# A light single: 2500 lb, n_ult 5.7, horizontal tail 35 ft^2 at 15 ft with an 11 ft span and
# a 0.5 ft root; fin 15 ft^2, 5 ft high, 0.5 ft root; fuselage 25 ft long, 4 ft x 4 ft,
# V_C 130 KEAS.
def test_usaf_tails_and_fuselage_hand_derived():
    w = 2500.0 * LB
    ht = wts.horizontal_tail_mass_usaf(w, 5.7, 35.0 * FT2, 15.0 * FT, 11.0 * FT, 0.5 * FT)
    ht_native = 127.0 * ((2500 * 5.7 / 1e5) ** 0.87 * 0.35**1.2 * 1.5**0.483 * 22.0**0.5) \
        ** 0.458
    assert ht == pytest.approx(ht_native * LB, rel=1e-12)
    assert ht / LB == pytest.approx(72.849, abs=5e-4)  # pin: 72.8486 lb
    vt = wts.vertical_tail_mass_usaf(w, 5.7, 15.0 * FT2, 5.0 * FT, 0.5 * FT)
    vt_native = 98.5 * ((2500 * 5.7 / 1e5) ** 0.87 * 0.15**1.2 * 10.0**0.5) ** 0.458
    assert vt == pytest.approx(vt_native * LB, rel=1e-12)
    assert vt / LB == pytest.approx(27.067, abs=5e-4)  # pin: 27.0673 lb
    fus = wts.fuselage_mass_usaf(w, 5.7, 25.0 * FT, 4.0 * FT, 4.0 * FT, 130.0 * KT)
    fus_native = 200.0 * ((2500 * 5.7 / 1e5) ** 0.286 * 2.5**0.857 * 0.8 * 1.3**0.338) ** 1.1
    assert fus == pytest.approx(fus_native * LB, rel=1e-9)
    assert fus / LB == pytest.approx(221.677, abs=5e-4)  # pin: 221.6774 lb
    # shares of takeoff mass of a light single: tails 2.9 + 1.1 %, fuselage 8.9 % (a sanity
    # band, common practice: tails 2-5 %, fuselage 7-12 % of W_TO)
    assert 0.02 < (ht + vt) / w < 0.05 and 0.07 < fus / w < 0.12


def test_usaf_installed_propulsion_hand_derived():
    # 2.575 W_e^0.922 N_e: one 300 lb engine -> 495.089 lb installed (ratio 1.65), two -> x2
    m1 = wts.propulsion_installation_mass_usaf(300.0 * LB, 1)
    assert m1 / LB == pytest.approx(495.0887, abs=5e-4)
    assert wts.propulsion_installation_mass_usaf(300.0 * LB, 2) == pytest.approx(2 * m1,
                                                                                  rel=1e-12)


@pytest.mark.parametrize("kind, w_lb, expected_lb", [
    # W = A + B W^0.75 + C W + D W^1.5, arithmetic by hand from the table as written:
    ("fixed_main", 2500.0, 20.0 + 0.10 * 2500.0**0.75 + 0.019 * 2500.0),  # 102.855 lb
    ("fixed_nose", 2500.0, 25.0 + 0.0024 * 2500.0),                          # 31.0 lb
    ("retractable_main", 15000.0, 569.4212),
    ("retractable_nose", 15000.0, 159.2145),
    ("business_jet_main", 10000.0, 33.0 + 0.04 * 1000.0 + 0.021 * 10000.0),  # 283 lb
    ("business_jet_nose", 10000.0, 12.0 + 0.06 * 1000.0),                    # 72 lb
])
def test_torenbeek_gear_hand_derived(kind, w_lb, expected_lb):
    assert wts.landing_gear_mass_torenbeek(w_lb * LB, kind) / LB == pytest.approx(
        expected_lb, abs=5e-4)
    # high wing: K_g 1.08 multiplies the group
    assert wts.landing_gear_mass_torenbeek(w_lb * LB, kind, 1.08) / LB == pytest.approx(
        1.08 * expected_lb, abs=1e-3)


def test_torenbeek_gear_unknown_kind_lists_the_valid_ones():
    with pytest.raises(ValueError, match="choose one of: 'fixed_main'"):
        wts.landing_gear_mass_torenbeek(1000.0, "skid")


def test_torenbeek_flight_controls_tails_fuselage_fuel_hand_derived():
    # k_sc W^(2/3): 0.23 x 2500^(2/3) = 42.366 lb
    assert wts.flight_controls_mass_torenbeek(2500.0 * LB, 0.23) / LB == pytest.approx(
        42.3664, abs=5e-4)
    # tail: S [3.81 S^0.2 V_D / 1000 - 0.287], 100 ft^2 at 300 KEAS, unswept -> 258.409 lb
    assert wts.tail_mass_torenbeek(100.0 * FT2, 300.0 * KT, 0.0) / LB == pytest.approx(
        258.4086, abs=5e-4)
    # sweep 30 deg divides the first term by sqrt(cos 30 deg)
    swept = 100.0 * (3.81 * 100.0**0.2 * 0.3 / np.sqrt(np.cos(np.radians(30.0))) - 0.287)
    assert wts.tail_mass_torenbeek(100.0 * FT2, 300.0 * KT, np.radians(30.0)) / LB == \
        pytest.approx(swept, rel=1e-9)
    # fuselage: 0.021 K_f sqrt(V_D l_h / (w + h)) S_G^1.2, 300 KEAS, 40 ft, 10 + 10 ft,
    # 2000 ft^2, K_f 1.08 -> 5081.06 lb
    assert wts.fuselage_mass_torenbeek(300.0 * KT, 40.0 * FT, 10.0 * FT, 10.0 * FT,
                                       2000.0 * FT2) / LB == pytest.approx(5081.064, abs=5e-3)
    # fuel system: 80 (N_e + N_t - 1) + 15 sqrt(N_t) V^0.333, 2 engines, 3 tanks, 600 gal
    assert wts.fuel_system_mass_torenbeek(600.0 * USGAL, 3, 2) / LB == pytest.approx(
        538.6635, abs=5e-4)


def test_component_masses_are_vectorised():
    w = np.array([800.0, 1500.0, 4000.0])
    for m in (wts.horizontal_tail_mass_usaf(w, 5.7, 3.0, 4.5, 3.7, 0.12),
              wts.vertical_tail_mass_usaf(w, 5.7, 1.5, 1.5, 0.15),
              wts.fuselage_mass_usaf(w, 5.7, 8.0, 1.3, 1.3, 60.0),
              wts.landing_gear_mass_torenbeek(w, "fixed_main"),
              wts.flight_controls_mass_torenbeek(w, 0.23)):
        assert m.shape == w.shape and np.all(np.diff(m) > 0)


@settings(deadline=None, max_examples=100)
@given(m_to=st.floats(500.0, 20000.0), length=st.floats(4.0, 30.0), more=st.floats(0.01, 5.0),
       d=st.floats(0.8, 3.0), v=st.floats(40.0, 200.0))
def test_a_bigger_fuselage_is_never_lighter(m_to, length, more, d, v):
    # USAF: l^(0.857 x 1.1) (w + h)^1.1; Torenbeek: S_G^1.2 / sqrt(w + h) at a fixed arm
    assert wts.fuselage_mass_usaf(m_to, 5.7, length + more, d, d, v) > \
        wts.fuselage_mass_usaf(m_to, 5.7, length, d, d, v)
    assert wts.fuselage_mass_usaf(m_to, 5.7, length, d + 0.1 * more, d, v) > \
        wts.fuselage_mass_usaf(m_to, 5.7, length, d, d, v)
    s_g = np.pi * d * length
    assert wts.fuselage_mass_torenbeek(1.25 * v, 0.5 * length, d, d, s_g * (1 + more)) > \
        wts.fuselage_mass_torenbeek(1.25 * v, 0.5 * length, d, d, s_g)


@settings(deadline=None, max_examples=100)
@given(m_to=st.floats(500.0, 6000.0), area=st.floats(6.0, 60.0), more=st.floats(0.01, 2.0),
       a=st.floats(5.0, 13.0))
def test_more_wing_area_at_fixed_takeoff_mass_raises_the_wing_mass(m_to, area, more, a):
    # USAF wing: (S/100)^(0.61 x 0.993) at fixed W_TO, A, taper, t/c, sweep, V_H
    m1 = wts.wing_mass_usaf(m_to, 5.7, a, area, 0.6, 0.15, 0.0, 70.0)
    m2 = wts.wing_mass_usaf(m_to, 5.7, a, area * (1 + more), 0.6, 0.15, 0.0, 70.0)
    assert m2 > m1
    assert m2 / m1 == pytest.approx((1 + more) ** (0.61 * 0.993), rel=1e-9)
