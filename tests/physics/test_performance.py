"""Tests of optimiser.physics.performance: stall, takeoff, landing, climb helpers, rules.

Published checks: the regulatory numbers (14 CFR text), unit definitions and elementary
kinematics. The METHODS sec. 4 worked examples are computed from the formulas ([D]) and are
regression pins, recomputed by us; the ground roll is also checked against an independent
time-domain RK4 integration written here.
"""

import numpy as np
import pytest
from hypothesis import assume, given, settings, strategies as st

from optimiser.physics import G0
from optimiser.physics import aerodynamics as aero
from optimiser.physics import atmosphere as atm
from optimiser.physics import performance as perf
from optimiser.physics import propulsion as prop

RHO_SL = float(atm.RHO0)
KT = 1852.0 / 3600.0  # international knot, exact by definition [m/s]
FT = 0.3048           # international foot, exact by definition [m]

# --- published checks: regulatory numbers (14 CFR) ----------------------------------------


@pytest.mark.parametrize("engines, gradient", [
    (2, 0.024),  # 14 CFR 25.121(b): 2.4 % two-engine airplanes
    (3, 0.027),  # 14 CFR 25.121(b): 2.7 % three-engine airplanes
    (4, 0.030),  # 14 CFR 25.121(b): 3.0 % four-engine airplanes
])
def test_part25_second_segment(engines, gradient):
    c = perf.certification_numbers("part25", "turbofan", engines)
    assert c["oei_climb_gradient_min"] == pytest.approx(gradient, abs=5e-5)
    assert c["obstacle_height_m"] == pytest.approx(35 * FT, abs=1e-9)  # 35 ft, 14 CFR 25.113
    assert c["field_length_factor"] == pytest.approx(1.15, abs=1e-12)  # 115 %, 14 CFR 25.113
    assert c["balanced_field"] is True
    assert c["oei_flaps_takeoff"] is True


def test_part23_piston_twin():
    c = perf.certification_numbers("part23", "piston", 2)
    assert c["aeo_climb_gradient_min"] == pytest.approx(0.083, abs=5e-5)  # 14 CFR 23.65(a), 8.3 %
    assert c["oei_climb_gradient_min"] == pytest.approx(0.015, abs=5e-5) # 14 CFR 23.67(a)(1) 1.5 %
    assert c["oei_climb_altitude_m"] == pytest.approx(5000 * FT, abs=1e-9)  # 23.67(a)(1), 5000 ft
    assert c["obstacle_height_m"] == pytest.approx(50 * FT, abs=1e-9)  # 50 ft, 14 CFR 23.2115
    assert c["field_length_factor"] == 1.0
    assert c["balanced_field"] is False


@pytest.mark.parametrize("family", ["turboprop", "turbofan"])
def test_part23_turbine(family):
    c = perf.certification_numbers("part23", family, 2)
    assert c["aeo_climb_gradient_min"] == pytest.approx(0.04, abs=5e-5)  # 14 CFR 23.65(b), 4 %


def test_part23_single_has_no_oei_requirement():
    assert perf.certification_numbers("part23", "piston", 1)["oei_climb_gradient_min"] == 0.0


@pytest.mark.parametrize("engines", [1, 5])
def test_part25_engine_count_outside_rule(engines):
    with pytest.raises(ValueError, match="part25"):
        perf.certification_numbers("part25", "turbofan", engines)


def test_unknown_basis():
    with pytest.raises(ValueError, match="part23"):
        perf.certification_numbers("cs23", "piston", 1)


def test_service_ceiling_rate():
    # service ceiling: 100 ft/min (common definition) = 0.508 m/s exactly
    assert perf.SERVICE_CEILING_CLIMB_RATE == pytest.approx(100 * FT / 60.0, abs=1e-12)


# --- stall --------------------------------------------------------------------------------

def test_stall_speed_61_knots():
    # old 14 CFR 23.49(c): V_S0 <= 61 kt; 61 kt = 31.381 m/s (1 kt = 1852/3600 m/s, exact)
    assert 61 * KT == pytest.approx(31.381, abs=5e-4)
    # round trip V -> W/S = rho V^2 CLmax / 2 -> V (definition of the stall speed)
    v = 61 * KT
    ws = 0.5 * RHO_SL * v**2 * 2.0
    assert perf.stall_speed(ws, RHO_SL, 2.0) == pytest.approx(v, rel=1e-12)


def test_regression_pin_stall_wing_loading():
    # regression pin: SL, CLmax 2.0 -> W/S 1206.3 N/m^2; CLmax 1.6 -> 965.08 N/m^2 at 61 kt
    # (METHODS sec. 4 [D]; ours 1206.348, 965.079). W/S printed to 5 digits -> V to ~2e-5.
    assert 0.5 * RHO_SL * (61 * KT) ** 2 * 2.0 == pytest.approx(1206.3, abs=0.05)
    assert perf.stall_speed(1206.3, RHO_SL, 2.0) == pytest.approx(31.381, abs=1e-3)
    assert perf.stall_speed(965.08, RHO_SL, 1.6) == pytest.approx(31.381, abs=1e-3)


@settings(deadline=None, max_examples=150)
@given(ws=st.floats(200.0, 8000.0), cl=st.floats(0.8, 3.5), dcl=st.floats(0.0, 2.0),
       h=st.floats(0.0, 4000.0))
def test_more_clmax_never_raises_stall_speed(ws, cl, dcl, h):
    rho = atm.isa_density(h)
    assert perf.stall_speed(ws, rho, cl + dcl) <= perf.stall_speed(ws, rho, cl)


# --- ground roll ------------------------------------------------------------------------

# METHODS sec. 4 worked example: W/S 1000, CLmax,TO 1.6, T/W 0.25, mu 0.03, CD0 0.045, A 8,
# e 0.75, phi 0.6, CL_g 0.5, V_LO = 1.1 V_s
EX = dict(ws=1000.0, clmax=1.6, tw=0.25, mu=0.03, cd0=0.045, k=1.0 / (np.pi * 8 * 0.75),
          phi=0.6, clg=0.5)


def _constant(thrust):
    thrust = np.asarray(thrust, float)
    return lambda v: thrust[:, None] * np.ones_like(v)


def _example_roll(area=15.0, tw=EX["tw"]):
    w = np.array([EX["ws"] * area])
    vs = perf.stall_speed(EX["ws"], RHO_SL, EX["clmax"])
    vlo = np.array([1.1 * vs])
    out = perf.ground_roll(w, np.array([area]), vlo, _constant(tw * w), RHO_SL, EX["cd0"],
                           EX["k"], EX["phi"], EX["clg"], EX["mu"])
    closed = perf.ground_roll_constant_thrust(tw, EX["ws"], RHO_SL, EX["cd0"], EX["k"],
                                              EX["phi"], EX["clg"], EX["mu"], vlo)
    return out, closed, vlo


def test_ground_roll_matches_closed_form():
    # closed form of Anderson APD 1999 sec. 6.7 (from memory) for constant thrust; METHODS
    # sec. 4 asks 0.1 %
    (dist, min_acc, t_lo), closed, _ = _example_roll()
    assert dist[0] == pytest.approx(closed[0], rel=1e-3)
    assert dist[0] == pytest.approx(closed[0], rel=1e-9)  # quadrature is exact to round-off
    assert t_lo[0] == pytest.approx(0.25 * 15000.0, rel=1e-12)
    assert min_acc[0] > 0.0


def test_regression_pin_ground_roll_worked_example():
    # regression pin: METHODS sec. 4 worked example [D] -> V_s 31.944, V_LO 35.138,
    # B 2.27996e-4, s_G 306.61 m (ours 31.9438, 35.1382, 2.279960e-4, 306.6143)
    (dist, _, _), closed, vlo = _example_roll()
    assert perf.stall_speed(EX["ws"], RHO_SL, EX["clmax"]) == pytest.approx(31.944, abs=5e-4)
    assert vlo[0] == pytest.approx(35.138, abs=5e-4)
    assert dist[0] == pytest.approx(306.61, abs=0.005)
    assert closed[0] == pytest.approx(306.61, abs=0.005)
    # the drag-free approximation 1.21 (W/S)/(g rho CLmax T/W) = 251.81 m reads shorter
    # (regression pin, METHODS sec. 4 [D]; ours 251.807)
    approx = 1.21 * EX["ws"] / (G0 * RHO_SL * EX["clmax"] * EX["tw"])
    assert approx == pytest.approx(251.81, abs=0.005)
    assert dist[0] > approx


def test_ground_roll_independent_of_area_at_fixed_loadings():
    (d1, _, _), _, _ = _example_roll(area=10.0)
    (d2, _, _), _, _ = _example_roll(area=40.0)
    assert d1[0] == pytest.approx(d2[0], rel=1e-12)


def test_ground_roll_average_acceleration():
    # common practice / elementary kinematics: no drag and no friction, constant thrust:
    # s = V^2 / (2 a); lifting off at 30 m/s within 300 m needs a = 1.5 m/s^2,
    # T/W = 1.5 / 9.80665 = 0.153
    tw = 1.5 / G0
    assert tw == pytest.approx(0.153, abs=5e-4)
    w = np.array([10000.0, 20000.0])
    dist, min_acc, _ = perf.ground_roll(w, np.array([10.0, 25.0]), np.array([30.0, 30.0]),
                                        _constant(tw * w), RHO_SL, 0.0, 0.0, 1.0, 0.5, 0.0)
    np.testing.assert_allclose(dist, 300.0, rtol=1e-12)
    np.testing.assert_allclose(min_acc, 1.5, rtol=1e-12)


def test_ground_roll_flags_no_liftoff():
    # T/W below the rolling friction: the aircraft never accelerates; flagged, finite
    w = np.array([10000.0])
    dist, min_acc, _ = perf.ground_roll(w, np.array([10.0]), np.array([30.0]),
                                        _constant(0.02 * w), RHO_SL, 0.03, 0.05, 0.6, 0.5, 0.03)
    assert min_acc[0] < 0.0
    assert np.isfinite(dist[0])


def _rk4_ground_roll(weight, area, vlo, thrust_of_v, rho, cd0, k, phi, clg, mu, dt=0.01):
    """Independent time-domain RK4 of m dV/dt = T - D - mu (W - L), ds/dt = V."""
    def accel(v):
        q_s = 0.5 * rho * v * v * area
        drag = q_s * (cd0 + phi * k * clg**2)
        normal = max(weight - q_s * clg, 0.0)
        return G0 / weight * (thrust_of_v(v) - drag - mu * normal)

    def deriv(y):
        return np.array([accel(y[0]), y[0]])

    y = np.array([0.0, 0.0])
    while True:
        k1 = deriv(y)
        k2 = deriv(y + 0.5 * dt * k1)
        k3 = deriv(y + 0.5 * dt * k2)
        k4 = deriv(y + dt * k3)
        y_new = y + dt / 6.0 * (k1 + 2 * k2 + 2 * k3 + k4)
        if y_new[0] >= vlo:
            frac = (vlo - y[0]) / (y_new[0] - y[0])
            return y[1] + frac * (y_new[1] - y[1])
        y = y_new


def test_ground_roll_propeller_vs_independent_rk4():
    # METHODS sec. 4: propeller thrust law, RK4 with dt <= 0.05 s; here dt 0.01 s, 0.5 %
    power, eta = 150e3, 0.6
    t0 = float(prop.static_thrust_momentum(power, RHO_SL, np.pi * 1.9**2 / 4.0, 0.70))
    mass, area, clmax = 1200.0, 12.0, 1.6
    weight = mass * G0
    vs = float(perf.stall_speed(weight / area, RHO_SL, clmax))
    vlo = 1.1 * vs
    v1 = 1.5 * eta * power / t0
    assert v1 < vlo  # the roll crosses the blend speed: both branches of the thrust law used
    cd0, k, phi, clg, mu = 0.035, aero.induced_drag_factor(8.0, 0.75), 0.6, 0.5, 0.03

    def thrust_at(v):
        return prop.propeller_thrust(v, power, eta, t0)

    dist, min_acc, t_lo = perf.ground_roll(np.array([weight]), np.array([area]),
                                           np.array([vlo]), thrust_at, RHO_SL, cd0, k, phi,
                                           clg, mu)
    ref = _rk4_ground_roll(weight, area, vlo, lambda v: float(thrust_at(v)), RHO_SL, cd0, k,
                           phi, clg, mu)
    assert dist[0] == pytest.approx(ref, rel=5e-3)
    assert t_lo[0] == pytest.approx(float(thrust_at(vlo)), rel=1e-12)
    assert min_acc[0] > 0.0


def test_rk4_reference_reproduces_closed_form():
    # the reference integrator itself against the closed form (constant thrust), 0.1 %
    area = 15.0
    weight = EX["ws"] * area
    vlo = 1.1 * float(perf.stall_speed(EX["ws"], RHO_SL, EX["clmax"]))
    ref = _rk4_ground_roll(weight, area, vlo, lambda v: EX["tw"] * weight, RHO_SL, EX["cd0"],
                           EX["k"], EX["phi"], EX["clg"], EX["mu"])
    assert ref == pytest.approx(306.61, rel=1e-3)


@settings(deadline=None, max_examples=100)
@given(tw=st.floats(0.12, 0.6), dtw=st.floats(0.0, 0.3), ws=st.floats(300.0, 6000.0),
       clmax=st.floats(1.2, 2.8), mu=st.floats(0.0, 0.1))
def test_more_thrust_never_lengthens_ground_roll(tw, dtw, ws, clmax, mu):
    area = 20.0
    w = np.array([ws * area, ws * area])
    vlo = np.full(2, 1.1 * float(perf.stall_speed(ws, RHO_SL, clmax)))
    thrust = np.array([tw, tw + dtw]) * w
    dist, min_acc, _ = perf.ground_roll(w, np.full(2, area), vlo, _constant(thrust), RHO_SL,
                                        0.04, 0.05, 0.6, 0.5, mu)
    assume(min_acc[0] > 0.01)
    assert dist[1] <= dist[0] * (1.0 + 1e-12)


# --- airborne distance -------------------------------------------------------------------

VS_TO = 31.944


AIR_CASES = [
    (15.24, 147.79, 147.7954),   # 50 ft; METHODS sec. 4 [D] / regression pin (ours)
    (10.668, 123.85, 123.8515),  # 35 ft; METHODS sec. 4 [D] / regression pin (ours)
]
STEEP = 0.3  # sin(gamma) of the climb: gamma 17.5 deg > theta_OB (11.8 deg), the arc governs


@pytest.mark.parametrize("h, s_methods, s_ours", AIR_CASES)
def test_takeoff_air_distance_arc(h, s_methods, s_ours):
    # Anderson APD 1999 sec. 6.7 (from memory): R = 6.96 V_s^2 / g, theta_OB = arccos(1 - h/R),
    # s_A = R sin(theta_OB). METHODS sec. 4 [D] used the printed 6.96 (R = 724.21 m); the code
    # uses the unrounded 1.15^2 / 0.19 = 6.9605 (R = 724.27 m). 6.96 has 3 significant digits
    # (7e-4 relative on R, about half that on s_A): tolerances 1e-3 on R, 5e-4 on s_A.
    s = float(perf.takeoff_air_distance(VS_TO, STEEP, h))
    assert s == pytest.approx(s_methods, rel=5e-4)
    radius = (s**2 + h**2) / (2.0 * h)  # from s = R sin(theta), h = R (1 - cos(theta))
    assert radius == pytest.approx(724.21, rel=1e-3)


@pytest.mark.parametrize("h, s_methods, s_ours", AIR_CASES)
def test_regression_pin_takeoff_air_distance(h, s_methods, s_ours):
    # regression pin with the unrounded constant 1.15^2 / 0.19 (computed by us)
    s = float(perf.takeoff_air_distance(VS_TO, STEEP, h))
    assert s == pytest.approx(s_ours, abs=5e-4)
    radius = (s**2 + h**2) / (2.0 * h)
    assert radius == pytest.approx(1.15**2 / 0.19 * VS_TO**2 / G0, rel=1e-9)


def test_takeoff_air_distance_with_straight_climb():
    # shallow climb: the climb angle is reached below the obstacle; arc to gamma then a
    # straight climb (geometry written out independently here)
    h, sin_g = 15.24, 0.05
    radius = 1.15**2 * VS_TO**2 / (G0 * 0.19)
    gam = np.arcsin(sin_g)
    h_arc = radius * (1.0 - np.cos(gam))
    expected = radius * np.sin(gam) + (h - h_arc) / np.tan(gam)
    got = float(perf.takeoff_air_distance(VS_TO, sin_g, h))
    assert got == pytest.approx(expected, rel=1e-12)
    assert got > float(perf.takeoff_air_distance(VS_TO, 0.3, h))


def test_takeoff_air_distance_continuous_at_switch():
    h = 15.24
    radius = 1.15**2 * VS_TO**2 / (G0 * 0.19)
    theta = np.arccos(1.0 - h / radius)
    below = perf.takeoff_air_distance(VS_TO, np.sin(theta) * (1 - 1e-9), h)
    above = perf.takeoff_air_distance(VS_TO, np.sin(theta) * (1 + 1e-9), h)
    assert float(below) == pytest.approx(float(above), rel=1e-6)


# --- landing --------------------------------------------------------------------------------

def test_regression_pin_landing_distance():
    # regression pin: Anderson APD 1999 sec. 6.8 form (from memory), METHODS sec. 4 [D]:
    # W/S 1000, CLmax 2.0, mu_B 0.4, SL, 50 ft -> total 543.47 m, approach 274.33, flare
    # 32.955, ground 236.18 (ours 543.4665, 274.3302, 32.95518, 236.1811)
    total, s_a, s_f, s_g = perf.landing_distance(1000.0, RHO_SL, 2.0, 0.4, 15.24)
    assert total == pytest.approx(543.47, abs=0.005)
    assert s_a == pytest.approx(274.33, abs=0.005)
    assert s_f == pytest.approx(32.955, abs=5e-4)
    assert s_g == pytest.approx(236.18, abs=0.005)
    assert total == pytest.approx(s_a + s_f + s_g, rel=1e-14)


def test_landing_ground_roll_kinematics():
    # with no free roll the ground part is j^2 (W/S) / (g rho CLmax mu_B): braking from
    # V_TD = j V_s at constant deceleration mu_B g covers (j V_s)^2 / (2 mu_B g)
    # (elementary kinematics, with V_s^2 = 2 (W/S) / (rho CLmax))
    _, _, _, s_g = perf.landing_distance(1500.0, 1.1, 2.2, 0.35, 15.24, free_roll_time=0.0)
    vs = np.sqrt(2 * 1500.0 / (1.1 * 2.2))
    assert s_g == pytest.approx((1.15 * vs) ** 2 / (2 * 0.35 * G0), rel=1e-12)


# --- climb / level-flight helpers ----------------------------------------------------------

def test_regression_pin_cruise_thrust_to_weight():
    # regression pin: METHODS sec. 4 [D]: 11 km, V 230 m/s (q 9625.6 Pa), W/S 5000, CD0 0.02,
    # K 0.045 -> T/W 0.061878 (ours 0.0618776)
    rho = atm.isa_density(11000.0)
    assert 0.5 * rho * 230.0**2 == pytest.approx(9625.6, abs=0.05)
    assert perf.drag_to_weight(230.0, 5000.0, rho, 0.02, 0.045) == pytest.approx(0.061878,
                                                                                 abs=5e-7)


def test_regression_pin_prop_cruise():
    # regression pin: METHODS sec. 4 [D]: 3000 m, V 75, W/S 1000, CD0 0.028, A 8, e 0.78,
    # eta 0.82 -> T/W 0.091544, P/W 8.3729 W/N (ours 0.0915437, 8.37290)
    rho = atm.isa_density(3000.0)
    tw = perf.drag_to_weight(75.0, 1000.0, rho, 0.028, aero.induced_drag_factor(8.0, 0.78))
    assert tw == pytest.approx(0.091544, abs=5e-7)
    assert tw * 75.0 / 0.82 == pytest.approx(8.3729, abs=5e-5)


def test_drag_to_weight_is_inverse_lift_to_drag():
    rho, v, ws, cd0, k = 0.9, 70.0, 1200.0, 0.03, 0.05
    cl = ws / (0.5 * rho * v * v)
    assert perf.drag_to_weight(v, ws, rho, cd0, k) == pytest.approx(
        1.0 / aero.lift_to_drag(cl, cd0, k), rel=1e-12)


def test_largest_root_simple():
    # f(x) = 4 - x^2 on [0, 10]: root 2; vectorised over lows/highs
    f = lambda x: 4.0 - x * x  # noqa: E731
    got = perf.largest_root(f, np.array([0.0, 1.0, 1.9]), np.array([10.0, 3.0, 2.1]))
    np.testing.assert_allclose(got, 2.0, atol=1e-9)
    # f(low) < 0 -> NaN; f(high) >= 0 -> high
    out = perf.largest_root(f, np.array([3.0, 0.0]), np.array([5.0, 1.5]))
    assert np.isnan(out[0])
    assert out[1] == 1.5


def test_largest_root_linear_per_design():
    roots = np.array([0.3, 1.7, 4.2, 9.9])
    got = perf.largest_root(lambda x: roots - x, np.zeros(4), np.full(4, 10.0), iterations=50)
    np.testing.assert_allclose(got, roots, atol=1e-12)


def test_regression_pin_balanced_field_length():
    # regression pin: Torenbeek 1982 sec. 5.4.5 form (from memory; last term 655 ft), computed
    # by us: W/S 5000, SL, C_L2 1.4, T_bar/W 0.25, CLmax,TO 2.0, gamma2 0.03 vs 0.024, 35 ft
    # -> 2155.80 m; at rho 0.9 -> 2871.00 m
    bfl = perf.balanced_field_length_torenbeek(5000.0, 1.225, 1.4, 0.25, 2.0, 0.03, 0.024)
    assert bfl == pytest.approx(2155.80, abs=0.005)
    bfl_hot = perf.balanced_field_length_torenbeek(5000.0, 0.9, 1.4, 0.25, 2.0, 0.03, 0.024)
    assert bfl_hot == pytest.approx(2871.00, abs=0.005)


def test_falling_root_linear_and_nonlinear():
    roots = np.array([0.3, 1.7, 4.2, 9.9])

    def f_lin(x, ix):
        return roots[ix] - x

    low, high = np.zeros(4), np.full(4, 10.0)
    got = perf.falling_root(f_lin, low, high, f_lin(low, np.arange(4)),
                            f_lin(high, np.arange(4)), xtol=1e-10)
    np.testing.assert_allclose(got, roots, atol=1e-9)

    # f = c - x^3 (convex decreasing): Illinois regula falsi still closes the bracket
    c = np.array([8.0, 27.0, 1000.0])

    def f_cub(x, ix):
        return c[ix] - x**3

    low, high = np.zeros(3), np.full(3, 12.0)
    ix = np.arange(3)
    got = perf.falling_root(f_cub, low, high, f_cub(low, ix), f_cub(high, ix), xtol=1e-9)
    np.testing.assert_allclose(got, [2.0, 3.0, 10.0], atol=1e-8)


def test_falling_root_evaluates_only_unconverged():
    calls = []
    roots = np.array([2.0, 5.0])

    def f(x, ix):
        calls.append(np.array(ix))
        return roots[ix] - x**2 / roots[ix]  # root at x = roots

    # the first bracket is already narrower than xtol: that element is never iterated
    low, high = np.array([2.0 - 1e-10, 0.0]), np.array([2.0 + 1e-10, 10.0])
    out = perf.falling_root(f, low, high, f(low, np.arange(2)), f(high, np.arange(2)),
                            xtol=1e-9)
    assert out[1] == pytest.approx(5.0, abs=1e-8)
    assert out[0] == pytest.approx(2.0, abs=1e-9)
    assert len(calls) > 3
    assert all(0 not in ix for ix in calls[2:])


@pytest.mark.parametrize("surface, lo, hi", [
    ("paved_dry", 0.02, 0.05),     # rolling mu, dry concrete/asphalt 0.02-0.05 (METHODS sec. 4,
                                   # Gudmundsson ch. 17 / Torenbeek ch. 5, from memory)
    ("hard_turf", 0.05, 0.05),     # hard turf 0.05 (same sources, from memory)
    ("short_grass", 0.05, 0.07),   # short grass 0.05-0.07 (same sources, from memory)
    ("long_grass", 0.10, 0.10),    # long grass 0.10 (same sources, from memory)
    ("soft_ground", 0.10, 0.30),   # soft ground 0.10-0.30 (same sources, from memory)
])
def test_runway_rolling_friction(surface, lo, hi):
    roll, _ = perf.RUNWAY_SURFACES[surface]
    assert lo - 5e-3 <= roll <= hi + 5e-3  # sources print 2 decimals


@pytest.mark.parametrize("surface, lo, hi", [
    ("paved_dry", 0.3, 0.5),    # braking mu dry 0.3-0.5 (METHODS sec. 4, from memory)
    ("paved_wet", 0.15, 0.3),   # braking mu wet 0.15-0.3 (METHODS sec. 4, from memory)
])
def test_runway_braking_friction(surface, lo, hi):
    _, brake = perf.RUNWAY_SURFACES[surface]
    assert lo <= brake <= hi


def test_unpaved_brakes_worse_than_dry_paved():
    # common practice: braking on unpaved surfaces below dry pavement
    dry = perf.RUNWAY_SURFACES["paved_dry"][1]
    for name in ("hard_turf", "short_grass", "long_grass", "soft_ground"):
        assert perf.RUNWAY_SURFACES[name][1] < dry


def test_falling_root_flat_then_steep_and_per_element_tolerance():
    # f = c - x^8 on [0, 3]: nearly flat near the low end, steep near the high end (the shape
    # of a jet's excess thrust against the wave-drag rise), where plain regula falsi creeps;
    # roots c^(1/8) exactly, each element to its own tolerance
    c = np.array([1e-6, 0.5, 40.0])
    tol = np.array([1e-10, 1e-6, 1e-3])
    calls = []

    def f(x, ix):
        calls.append(len(ix))
        return c[ix] - x**8

    low, high = np.zeros(3), np.full(3, 3.0)
    ix = np.arange(3)
    got = perf.falling_root(f, low, high, f(low, ix), f(high, ix), xtol=tol)
    assert np.all(np.abs(got - c ** 0.125) <= tol)
    # 39 iterations measured (the Anderson-Bjorck factor unbounded below never converged
    # here: its m -> 0 on the flat stretch; hence the floor of 0.1)
    assert len(calls) - 2 <= 45


def test_falling_root_takes_nan_as_past_the_root_and_keeps_a_finite_weight():
    # f = 4 - x up to x = 5, NaN above (a state the model cannot evaluate); the high end's
    # value is only a weight (-1): the first points land in the NaN stretch, the bracket
    # still closes on the root 4 (exact)
    def f(x, ix):
        return np.where(x > 5.0, np.nan, 4.0 - x)
    got = perf.falling_root(f, np.zeros(1), np.full(1, 10.0), np.full(1, 4.0),
                            np.full(1, -1.0), xtol=1e-9)
    assert abs(got[0] - 4.0) <= 1e-9


def test_falling_root_leaves_elements_without_a_sign_change():
    seen = []

    def f(x, ix):
        seen.extend(ix.tolist())
        return 1.0 - x

    low = np.array([0.0, 2.0, 0.0])   # element 1: f < 0 at both ends
    high = np.array([3.0, 3.0, 0.5])  # element 2: f > 0 at both ends
    out = perf.falling_root(f, low, high, 1.0 - low, 1.0 - high, xtol=1e-9)
    assert out[0] == pytest.approx(1.0, abs=1e-9)
    assert out[1] == 2.5 and out[2] == 0.25  # the midpoints, for the caller to replace
    assert set(seen) == {0}
