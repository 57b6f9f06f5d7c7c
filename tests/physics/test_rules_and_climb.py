"""Tests of the rule numbers, climb gradient, speed limit and best rate of climb
(optimiser.physics.performance, second wave).

Published checks: 14 CFR rule text (numbers as recalled, from memory, and agreeing with
METHODS.md sec. 4 where it marks them checked against the text), unit definitions, the
closed forms of Anderson (APD 1999, ch. 5) and an independent dense-grid maximisation.
"""

import numpy as np
import pytest
from numpy.testing import assert_allclose

from optimiser.physics import G0
from optimiser.physics import atmosphere as atm
from optimiser.physics import performance as perf
from optimiser.physics import propulsion as prop

LB = 0.45359237  # international pound, exact by definition [kg]
KT = 1852.0 / 3600.0  # international knot, exact [m/s]
FT = 0.3048  # international foot, exact [m]


# --- landing field length -------------------------------------------------------------------

@pytest.mark.parametrize("rule, wet, operator, expected", [
    ("transport", False, False, 600.0 / 0.6),  # 14 CFR 121.195(b): within 60 % of the runway
    ("transport", True, False, 600.0 / 0.6 * 1.15),  # 121.195(d): 115 % of the dry figure
    ("commuter", False, False, 600.0 / 0.6),  # 14 CFR 135.385(b): 60 %
    ("commuter", True, False, 600.0 / 0.6 * 1.15),  # 135.385(d) (from memory): 115 %
    ("part23", False, False, 600.0),  # Part 23 itself: no factor
    ("part23", True, False, 600.0),  # no dispatch rule, no wet factor (use wet braking)
    ("part23", False, True, 600.0 / 0.6),  # an operator applying the 60 % rule
    ("part23", True, True, 600.0 / 0.6 * 1.15),
])
def test_landing_field_length_required(rule, wet, operator, expected):
    got = perf.landing_field_length_required(600.0, rule, wet, operator)
    assert float(got) == pytest.approx(expected, rel=1e-12)


def test_landing_field_length_is_vectorised_per_design_runway_state():
    d = np.array([500.0, 500.0, 800.0])
    got = perf.landing_field_length_required(d, "transport", wet=np.array([False, True, True]))
    assert_allclose(got, [833.333333, 958.333333, 1533.333333], rtol=1e-9)  # d/0.6 (x1.15)


def test_landing_field_length_unknown_rule():
    with pytest.raises(ValueError, match="unknown landing rule 'part121'; choose one of"):
        perf.landing_field_length_required(600.0, "part121")


# --- Part 23 all-engines gradient by mass and engine type ---------------------------------

def test_part23_aeo_gradient_by_mass_and_family():
    m = np.array([1000.0, 6000 * LB, 6000 * LB + 0.01, 4000.0])
    # 14 CFR 23.65(a): 8.3 % for reciprocating airplanes of 6000 lb or less;
    # 23.65(b): 4 % over 6000 lb
    assert_allclose(perf.part23_aeo_climb_gradient_min(m, "piston"), [0.083, 0.083, 0.04, 0.04],
                    atol=1e-12)
    # 23.65(b): 4 % for turbine airplanes at any mass
    for family in ("turboprop", "turbofan"):
        assert_allclose(perf.part23_aeo_climb_gradient_min(m, family), 0.04, atol=1e-12)
    assert perf.PART23_RECIPROCATING_MASS_LIMIT == pytest.approx(2721.554, abs=1e-3)


def test_part23_aeo_gradient_unknown_family():
    with pytest.raises(ValueError, match="unknown engine family 'diesel'"):
        perf.part23_aeo_climb_gradient_min(1000.0, "diesel")


# --- Part 25 climb segments -------------------------------------------------------------------

@pytest.mark.parametrize("segment, gradients", [
    ("first_segment", (0.0, 0.003, 0.005)),  # 25.121(a): positive, 0.3 %, 0.5 %
    ("second_segment", (0.024, 0.027, 0.030)),  # 25.121(b): 2.4, 2.7, 3.0 %
    ("final_takeoff", (0.012, 0.015, 0.017)),  # 25.121(c): 1.2, 1.5, 1.7 %
    ("approach", (0.021, 0.024, 0.027)),  # 25.121(d): 2.1, 2.4, 2.7 %
    ("landing", (0.032, 0.032, 0.032)),  # 25.119: 3.2 %, all engines
])
def test_part25_climb_segments(segment, gradients):
    got = [perf.part25_climb_gradient_min(segment, n) for n in (2, 3, 4)]
    assert_allclose(got, gradients, atol=1e-12)


def test_part25_second_segment_agrees_with_certification_numbers():
    for n in (2, 3, 4):
        assert perf.part25_climb_gradient_min("second_segment", n) == \
            perf.certification_numbers("part25", "turbofan", n)["oei_climb_gradient_min"]


@pytest.mark.parametrize("segment, n, message", [
    ("go_around", 2, "unknown climb segment 'go_around'"),
    ("approach", 1, "need 2 to 4 engines, got 1"),
])
def test_part25_climb_segment_errors(segment, n, message):
    with pytest.raises(ValueError, match=message):
        perf.part25_climb_gradient_min(segment, n)


def test_climb_gradient_available_twin_second_segment():
    # METHODS.md sec. 4 check [D]: C_D0 0.035, K 0.06, V2 = 1.2 V_s, CLmax,TO 2.0 -> C_L 1.3889,
    # L/D 9.2138; a thrust of exactly D + 2.4 % W gives 2.4 %
    ws, rho, w = 3000.0, atm.RHO0, 200e3
    v2 = 1.2 * np.sqrt(2.0 * ws / (rho * 2.0))
    cl = 2.0 / 1.44
    ld = cl / (0.035 + 0.06 * cl**2)
    assert ld == pytest.approx(9.2138, abs=1e-4)
    thrust = w * (1.0 / ld + 0.024)
    got = perf.climb_gradient_available(thrust, w, v2, w / ws, rho, 0.030, 0.06, 0.005)
    assert float(got) == pytest.approx(0.024, abs=1e-12)


def test_climb_gradient_available_gear_increment_costs_q_dcd0_over_ws():
    # an extra dC_D0 lowers the gradient by q dC_D0 / (W/S) (definition of drag coefficient)
    v, rho, ws = 60.0, 1.1, 1500.0
    args = (9000.0, 40e3, v, 40e3 / ws, rho, 0.03, 0.05)
    base = perf.climb_gradient_available(*args)
    gear = perf.climb_gradient_available(*args, cd0_increment=0.015)
    assert float(base - gear) == pytest.approx(0.5 * rho * v**2 * 0.015 / ws, rel=1e-12)


# --- speed limit -----------------------------------------------------------------------------

def test_speed_limit_constants():
    assert perf.SPEED_LIMIT_BELOW_10000FT == pytest.approx(128.6111, abs=1e-4)  # 250 kn, 91.117(a)
    assert perf.SPEED_LIMIT_ALTITUDE == pytest.approx(3048.0, abs=1e-9)  # 10 000 ft


def test_calibrated_equals_true_at_sea_level_standard():
    # definition of calibrated airspeed: equal to true airspeed at sea-level standard
    v = np.array([30.0, 128.6111, 250.0])
    assert_allclose(atm.calibrated_to_true_airspeed(v, atm.P0, atm.RHO0), v, rtol=1e-12)


def test_calibrated_to_true_at_10000_ft_against_pitot_relation():
    # independent route: from the true airspeed, the impact pressure q_c = p[(1 + 0.2 M^2)^3.5 - 1]
    # (isentropic pitot relation) gives back the calibrated airspeed by its definition
    h = 3048.0
    p, rho, t = atm.isa_pressure(h), atm.isa_density(h), atm.isa_temperature(h)
    vt = atm.calibrated_to_true_airspeed(250 * KT, p, rho)
    mach = vt / atm.speed_of_sound(t)
    qc = p * ((1.0 + 0.2 * mach**2) ** 3.5 - 1.0)
    vc = atm.A0 * np.sqrt(5.0 * ((qc / atm.P0 + 1.0) ** (2.0 / 7.0) - 1.0))
    assert float(vc) == pytest.approx(250 * KT, rel=1e-12)
    # regression pin [D], computed here by the relation above: 250 kn CAS = 288.70 kn TAS
    assert float(vt) / KT == pytest.approx(288.70, abs=0.01)
    # equivalent-airspeed approximation V_c / sqrt(sigma): 0.8 % high here
    v_eas = atm.equivalent_to_true_airspeed(250 * KT, rho)
    assert float(v_eas / vt) - 1.0 == pytest.approx(0.0077, abs=2e-4)


def test_limit_climb_speed_clips_below_10000_ft_only():
    h = np.array([0.0, 2000.0, 3047.0, 3048.0, 6000.0])
    v = np.full(5, 200.0)
    got = perf.limit_climb_speed(v, h)
    assert got[0] == pytest.approx(128.6111, abs=1e-4)  # CAS = TAS at sea level standard
    assert 128.62 < got[1] < got[2] < 200.0  # the TAS of 250 kn rises with altitude
    assert float(got[2]) / KT == pytest.approx(288.7, abs=0.1)
    assert_allclose(got[3:], 200.0)  # at and above 10 000 ft: no limit
    slow = perf.limit_climb_speed(np.full(5, 60.0), h)
    assert_allclose(slow, 60.0)  # a slower climb is unchanged


# --- best rate of climb -------------------------------------------------------------------------

def _dense_grid_best(rate, v_low, v_high, points=400001):
    """Independent check: the largest rate on a dense grid of speeds."""
    v = np.linspace(v_low, v_high, points)
    r = rate(v)
    i = np.argmax(r)
    return r[i], v[i], v[1] - v[0]


def test_best_rate_of_climb_jet_constant_thrust_closed_form():
    # Anderson APD 1999 ch. 5 closed form; METHODS.md sec. 4 check [D]: SL, T/W 0.3, W/S 5000,
    # C_D0 0.02, K 0.045 -> V 204.95 m/s, ROC_max 38.60 m/s
    ws, cd0, k, tw = 5000.0, 0.02, 0.045, 0.3
    w = np.array([1e5, 3e5])
    v_cf = perf.best_climb_speed_constant_thrust(tw, ws, atm.RHO0, cd0, k)
    assert float(v_cf) == pytest.approx(204.95, abs=0.01)
    roc, v = perf.best_rate_of_climb(lambda s: tw * w * np.ones_like(s), w, ws, atm.RHO0, cd0,
                                     k, 50.0, 400.0)
    assert_allclose(v, v_cf, rtol=1e-6)
    assert_allclose(roc, 38.60, atol=0.005)
    assert_allclose(roc, v_cf * (tw - perf.drag_to_weight(v_cf, ws, atm.RHO0, cd0, k)), rtol=1e-12)


def test_best_rate_of_climb_constant_power_is_minimum_power_speed():
    # thrust eta P / V: the best climb is at the minimum-power speed, C_L = sqrt(3 C_D0 / K)
    # (Anderson APD 1999 ch. 5); ROC = eta P / W - V D / W
    ws, cd0, k, rho = 600.0, 0.030, 0.055, 1.1
    w, ep = 10e3, 0.75 * 200e3
    roc, v = perf.best_rate_of_climb(lambda s: ep / s, w, ws, rho, cd0, k, 15.0, 120.0)
    v_mp = perf.minimum_power_speed(ws, rho, cd0, k)
    cl = 2 * ws / (rho * v_mp**2)
    assert cl == pytest.approx(np.sqrt(3 * cd0 / k), rel=1e-12)
    assert float(v) == pytest.approx(float(v_mp), rel=1e-6)
    expected = ep / w - v_mp * perf.drag_to_weight(v_mp, ws, rho, cd0, k)
    assert float(roc) == pytest.approx(float(expected), rel=1e-12)


def test_best_rate_of_climb_propeller_blend_against_dense_grid():
    # the tool's propeller model (static thrust blended to eta P / V) has no closed form:
    # compare with an independent dense-grid maximisation of the same functions, for a batch of
    # invented light airplanes around W/S 600 N/m^2, W/P 46 N/kW, A 7
    m = np.array([1100.0, 1100.0, 1500.0])
    w = m * G0
    ws = np.array([600.0, 900.0, 600.0])
    power = w / 46.0 * 1e3  # W/P 46 N/kW
    eta = 0.75
    cd0 = np.array([0.032, 0.032, 0.045])  # takeoff-ish with split flaps in the last
    k = 1.0 / (np.pi * 7.0 * 0.78)
    rho = 1.225
    static = prop.static_thrust_momentum(power, rho, 0.25 * np.pi * 1.9**2)
    v_low = 1.2 * np.sqrt(2 * ws / (rho * 1.5))

    def thrust_at(v):
        return prop.propeller_thrust(v, power, eta, static)

    roc, v = perf.best_rate_of_climb(thrust_at, w, ws, rho, cd0, k, v_low, 90.0)
    for i in range(3):
        def rate(s, i=i):
            t = prop.propeller_thrust(s, power[i], eta, static[i])
            return s * (t / w[i] - perf.drag_to_weight(s, ws[i], rho, cd0[i], k))
        r_grid, v_grid, dv = _dense_grid_best(rate, v_low[i], 90.0)
        assert roc[i] >= r_grid - 1e-12  # never below the grid's best
        assert roc[i] == pytest.approx(r_grid, abs=1e-9)
        assert v[i] == pytest.approx(v_grid, abs=1e-3)
    # the blend matters: the best speed lies above the minimum-power speed
    assert np.all(v > perf.minimum_power_speed(ws, rho, cd0, k))


def test_best_rate_of_climb_at_the_floor_speed():
    # a maximum below the bracket: the result is the lower end (constant power, bracket above
    # the minimum-power speed)
    ws, cd0, k, rho, w, ep = 600.0, 0.03, 0.055, 1.1, 10e3, 1.5e5
    v_mp = float(perf.minimum_power_speed(ws, rho, cd0, k))
    roc, v = perf.best_rate_of_climb(lambda s: ep / s, w, ws, rho, cd0, k, 1.5 * v_mp, 3 * v_mp)
    assert float(v) == pytest.approx(1.5 * v_mp, rel=1e-9)
    # one weight, a batch of brackets: the result has the brackets' shape
    roc2, v2 = perf.best_rate_of_climb(lambda s: ep / s, w, ws, rho, cd0, k,
                                       np.array([0.5, 1.5]) * v_mp, np.array([3.0, 3.0]) * v_mp)
    assert_allclose(v2, [v_mp, 1.5 * v_mp], rtol=1e-6)


def test_maximise_on_bracket_parabola():
    # f = -(x - c)^2: maximum at c exactly (elementary)
    c = np.array([0.3, 2.0, -1.5])
    x, fx = perf.maximise_on_bracket(lambda x: -(x - c) ** 2, np.full(3, -3.0), np.full(3, 3.0))
    assert_allclose(x, c, atol=1e-7)
    assert_allclose(fx, 0.0, atol=1e-13)
