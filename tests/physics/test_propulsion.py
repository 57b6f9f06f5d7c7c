"""Tests of optimiser.physics.propulsion: lapse models, propeller thrust, SFC units.

The lapse and static-thrust check values of METHODS sec. 3 are computed from the formulas
([D]): regression pins here, recomputed by us. Unit conversions follow from the exact unit
definitions and are published checks.
"""

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from optimiser.physics import atmosphere as atm
from optimiser.physics import propulsion as prop

# --- published checks: unit definitions ---------------------------------------------------


def test_sfc_unit_conversions():
    # exact definitions (NIST SP 811, App. B, from memory): 1 lb = 0.45359237 kg,
    # 1 hp (550 ft lbf/s) = 745.69987 W, 1 lbf = 4.4482216 N.
    # 1 lb/(hp h) = 1.68966e-7 kg/J; 1 lb/(lbf h) = 2.83255e-5 kg/(N s) (METHODS sec. 3,
    # 6 significant figures printed)
    assert prop.LB_PER_HP_H == pytest.approx(1.68966e-7, abs=5e-13)
    assert prop.LB_PER_LBF_H == pytest.approx(2.83255e-5, abs=5e-11)
    # and 1 lb/(hp h) = 0.60828 kg/(kW h) (METHODS sec. 3)
    assert prop.LB_PER_HP_H * 3.6e6 == pytest.approx(0.60828, abs=5e-6)


# --- Gagg & Ferrar ------------------------------------------------------------------------
# METHODS sec. 3 prints the check values 0.89525 / 0.79808 / 0.70810 / 0.54823 [D]. They
# reproduce the rounded form 1.132 sigma - 0.132, not sigma - (1 - sigma)/7.55 = 1.13245 sigma
# - 0.13245 that the code (and METHODS's own first form) uses; the two differ by up to
# 0.00045 (1 - sigma). Against the rounded form the tolerance follows from its 3-decimal
# coefficients: 5e-4. Against the code's own form the values are regression pins (ours).
GAGG_FERRAR = [
    # H [m] ISA, METHODS value (1.132 sigma - 0.132) [D], ours with /7.55 (regression pin)
    (1000.0, 0.89525, 0.895207),  # METHODS sec. 3 [D] / regression pin
    (2000.0, 0.79808, 0.797999),  # METHODS sec. 3 [D] / regression pin
    (3000.0, 0.70810, 0.707987),  # METHODS sec. 3 [D] / regression pin
    (5000.0, 0.54823, 0.548051),  # METHODS sec. 3 [D] / regression pin
]


@pytest.mark.parametrize("h, methods_value, ours", GAGG_FERRAR)
def test_gagg_ferrar_methods_values(h, methods_value, ours):
    # Gagg & Ferrar (1934), as in Gudmundsson GAAD ch. 7 (from memory); METHODS sec. 3 [D]
    # values, which use the rounded coefficients 1.132 / 0.132: tolerance 5e-4
    lapse = prop.piston_power_lapse_gagg_ferrar(atm.density_ratio(h))
    assert lapse == pytest.approx(methods_value, abs=5e-4)


@pytest.mark.parametrize("h, methods_value, ours", GAGG_FERRAR)
def test_regression_pin_gagg_ferrar(h, methods_value, ours):
    # regression pin: sigma - (1 - sigma)/7.55 with the ISA sigma, computed by us
    lapse = prop.piston_power_lapse_gagg_ferrar(atm.density_ratio(h))
    assert lapse == pytest.approx(ours, abs=5e-7)


def test_gagg_ferrar_forms_agree():
    # sigma - (1 - sigma)/7.55 == (8.55 sigma - 1)/7.55 exactly; ~= 1.132 sigma - 0.132
    s = np.linspace(0.3, 1.0, 71)
    lapse = prop.piston_power_lapse_gagg_ferrar(s)
    np.testing.assert_allclose(lapse, (8.55 * s - 1.0) / 7.55, rtol=1e-13)
    np.testing.assert_allclose(lapse, 1.132 * s - 0.132, atol=5e-4)
    assert prop.piston_power_lapse_gagg_ferrar(1.0) == pytest.approx(1.0, abs=1e-15)


def test_gagg_ferrar_hot_day_uses_actual_density():
    # sigma from the actual density: hotter air, less power (METHODS sec. 3)
    s_hot = atm.density_ratio(1500.0, 20.0)
    s_isa = atm.density_ratio(1500.0)
    assert prop.piston_power_lapse_gagg_ferrar(s_hot) < prop.piston_power_lapse_gagg_ferrar(s_isa)


def test_turbocharged_piston_flat_to_critical_altitude():
    # common practice (METHODS sec. 3): full power down to sigma_crit, then Gagg-Ferrar on
    # sigma / sigma_crit
    s_crit = float(atm.density_ratio(4000.0))
    assert prop.piston_power_lapse(atm.density_ratio(2000.0), s_crit) == 1.0
    s = float(atm.density_ratio(6000.0))
    assert prop.piston_power_lapse(s, s_crit) == pytest.approx(
        prop.piston_power_lapse_gagg_ferrar(s / s_crit), rel=1e-14)


def test_turboprop_flat_rating():
    # common practice: min(1, margin sigma^n); flat-rated at sea level, lapsing at altitude
    assert prop.turboprop_power_lapse(1.0) == 1.0
    s = 0.6
    assert prop.turboprop_power_lapse(s) == pytest.approx(1.15 * s**0.75, rel=1e-14)
    # regression pin: sigma 0.6 -> 1.15 * 0.6^0.75 = 0.783991 (computed by us)
    assert prop.turboprop_power_lapse(0.6) == pytest.approx(0.783991, abs=5e-7)


# --- Mattingly turbofan lapse (regression pins, METHODS sec. 3 [D]) -----------------------

@pytest.mark.parametrize("h, mach, expected", [
    (0.0, 0.25, 0.76617),      # regression pin, METHODS sec. 3 [D]; ours 0.766170 (theta0 > TR)
    (6000.0, 0.5, 0.36097),    # regression pin, METHODS sec. 3 [D]; ours 0.360969
    (10000.0, 0.78, 0.22120),  # regression pin, METHODS sec. 3 [D]; ours 0.221205
    (11000.0, 0.8, 0.19126),   # regression pin, METHODS sec. 3 [D]; ours 0.191257
])
def test_regression_pin_mattingly_lapse(h, mach, expected):
    # Mattingly, Heiser & Pratt, Aircraft Engine Design, 2nd ed. 2002, sec. 2.3.2 (from
    # memory), high bypass, throttle ratio 1
    t = atm.isa_temperature(h)
    p = atm.isa_pressure(h)
    alpha = prop.turbofan_thrust_lapse_mattingly(t, p, mach, throttle_ratio=1.0)
    assert alpha == pytest.approx(expected, abs=5e-6)


def test_mattingly_static_sea_level_is_one():
    # alpha = delta0 (1 - 0.49 sqrt(0)) = 1 at SL static, theta0 = 1 <= TR
    assert prop.turbofan_thrust_lapse_mattingly(288.15, 101325.0, 0.0, 1.0) == 1.0


def test_mattingly_throttle_ratio_branch():
    # regression pin: SL, M 0.25, TR 1.05 (theta0 = 1.0125 <= TR, no hot-day term)
    # -> delta0 (1 - 0.49 sqrt(0.25)) = 0.788551 (computed by us)
    a = prop.turbofan_thrust_lapse_mattingly(288.15, 101325.0, 0.25, 1.05)
    assert a == pytest.approx(0.788551, abs=5e-6)
    # a hot day lowers thrust once theta0 > TR
    hot = prop.turbofan_thrust_lapse_mattingly(288.15 + 30.0, 101325.0, 0.25, 1.05)
    assert hot < a


# --- static thrust and propeller thrust -------------------------------------------------

DISC = np.pi * 1.9**2 / 4.0


@pytest.mark.parametrize("fm, expected", [
    (0.70, 4246.7),  # regression pin, METHODS sec. 3 [D]; ours 4246.66 N
    (0.75, 4446.5),  # regression pin, METHODS sec. 3 [D]; ours 4446.55 N
])
def test_regression_pin_static_thrust(fm, expected):
    # momentum theory with figure of merit, McCormick AAFM ch. 6 (from memory):
    # T0 = (FM P)^(2/3) (2 rho A)^(1/3), P 150 kW, D 1.9 m, SL
    t0 = prop.static_thrust_momentum(150e3, atm.RHO0, DISC, fm)
    assert t0 == pytest.approx(expected, abs=0.05)


def test_static_thrust_momentum_identity():
    # ideal actuator disc (FM = 1): P = T^1.5 / sqrt(2 rho A) (momentum theory, McCormick ch. 6)
    t = prop.static_thrust_momentum(100e3, 1.225, DISC, 1.0)
    assert t**1.5 / np.sqrt(2.0 * 1.225 * DISC) == pytest.approx(100e3, rel=1e-12)


P, ETA = 150e3, 0.8
T0 = float(prop.static_thrust_momentum(P, atm.RHO0, DISC, 0.70))
V1 = 1.5 * ETA * P / T0  # blend speed of the code (docstring)


def _thrust(v):
    return prop.propeller_thrust(v, P, ETA, T0)


def test_propeller_thrust_static_and_cruise():
    assert _thrust(0.0) == pytest.approx(T0, rel=1e-12)
    v = np.array([V1 * 1.001, 60.0, 80.0, 120.0])
    np.testing.assert_allclose(_thrust(v), ETA * P / v, rtol=1e-12)


def test_propeller_thrust_finite_near_zero():
    for v in (0.0, 1e-300, 1e-12, 1e-6, -1.0):
        t = _thrust(v)
        assert np.isfinite(t)
        assert t == pytest.approx(T0, rel=1e-9)


def test_propeller_thrust_continuous_and_c1_at_blend():
    eps = 1e-6 * V1
    below, above = _thrust(V1 - eps), _thrust(V1 + eps)
    assert below == pytest.approx(above, rel=1e-5)
    assert _thrust(V1) == pytest.approx(2.0 / 3.0 * T0, rel=1e-9)
    h = 1e-4 * V1
    slope_below = (_thrust(V1 - h) - _thrust(V1 - 2 * h)) / h
    slope_above = (_thrust(V1 + 2 * h) - _thrust(V1 + h)) / h
    exact = -ETA * P / V1**2
    assert slope_below == pytest.approx(exact, rel=1e-3)
    assert slope_above == pytest.approx(exact, rel=1e-3)


def test_propeller_thrust_monotonic_dense():
    v = np.linspace(0.0, 150.0, 30001)
    t = _thrust(v)
    assert np.all(np.diff(t) <= 1e-9)


@settings(deadline=None, max_examples=150)
@given(power=st.floats(10e3, 2e6), eta=st.floats(0.3, 0.9), fm=st.floats(0.5, 0.8),
       d=st.floats(1.0, 4.5), v=st.floats(0.0, 200.0), dv=st.floats(0.0, 50.0))
def test_propeller_thrust_non_increasing(power, eta, fm, d, v, dv):
    t0 = prop.static_thrust_momentum(power, 1.225, np.pi * d * d / 4.0, fm)
    t_a = prop.propeller_thrust(v, power, eta, t0)
    t_b = prop.propeller_thrust(v + dv, power, eta, t0)
    assert np.isfinite(t_a) and np.isfinite(t_b)
    assert t_b <= t_a * (1.0 + 1e-12)
    assert t_a <= t0 * (1.0 + 1e-12)


# --- propeller diameter from the tip limits ---------------------------------------------------

def test_helical_tip_speed_is_the_vector_sum():
    # 3-4-5 triangle: pi n D = 240 with V = 180 gives 300 (Pythagoras)
    d = 240.0 / (np.pi * 40.0)
    assert float(prop.helical_tip_speed(d, 40.0, 180.0)) == pytest.approx(300.0, rel=1e-12)


def test_propeller_diameter_tip_limits_worked_example():
    # computed by hand from the relation (derived): 2700 rpm (n = 45 /s), cruise 70 m/s at
    # 2500 m ISA (a = 330.56 m/s), M_tip 0.85: D_cr = sqrt(280.98^2 - 70^2) / (pi 45) = 1.9248 m;
    # static tip speed 260 m/s: D_TO = 260 / (pi 45) = 1.8391 m -> D = 1.8391 m
    a = float(atm.speed_of_sound(atm.isa_temperature(2500.0)))
    assert a == pytest.approx(330.56, abs=0.01)  # sqrt(1.4 R 271.90 K), USSA 1976
    d_cr = prop.propeller_diameter_tip_limits(45.0, 70.0, a, tip_speed_max_takeoff=1e9)
    assert float(d_cr) == pytest.approx(np.sqrt((0.85 * a) ** 2 - 70.0**2) / (np.pi * 45.0),
                                        rel=1e-12)
    assert float(d_cr) == pytest.approx(1.9248, abs=1e-4)
    d = prop.propeller_diameter_tip_limits(45.0, 70.0, a)
    assert float(d) == pytest.approx(260.0 / (np.pi * 45.0), rel=1e-12)
    assert float(d) == pytest.approx(1.8391, abs=1e-4)
    # the limits hold at the result
    assert float(prop.helical_tip_speed(d, 45.0, 70.0)) / a <= 0.85 + 1e-12
    assert float(prop.helical_tip_speed(d, 45.0, 0.0)) <= 260.0 + 1e-9


def test_propeller_diameter_tip_limits_geared_turboprop_and_vectorised():
    # a slower-turning takeoff setting, a batch of cruise speeds: D_cr falls with speed
    v = np.array([100.0, 150.0, 400.0])
    d = prop.propeller_diameter_tip_limits(20.0, v, 300.0, rotational_speed_takeoff=19.0)
    d_cr = np.sqrt(np.maximum((0.85 * 300.0) ** 2 - v**2, 0.0)) / (np.pi * 20.0)
    d_to = 260.0 / (np.pi * 19.0)
    np.testing.assert_allclose(d, np.minimum(d_cr, d_to), rtol=1e-12)
    assert d[2] == 0.0  # the flight speed alone is above the tip Mach limit
