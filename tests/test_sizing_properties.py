"""Properties and sanity of the sizing model over the three demo studies.

Physical monotonicities (power, CLmax, aspect ratio), robustness over and far beyond the
bounds (never a NaN or inf), and the "facts of the trade": where the feasible designs of each
demo land compared with the usual ranges of their class.
"""

from __future__ import annotations

import math
import warnings
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import optimiser
from optimiser.physics import aerodynamics, performance, propulsion, weights
from optimiser.sizing import high_lift, size_designs
from optimiser.study import load_study

PROBLEMS = Path(__file__).resolve().parents[1] / "problems"
NAMES = ("high_strip_utility", "twin_turboprop_commuter", "light_twin_jet")
G0 = 9.80665                    # m/s^2, standard gravity, exact
LB_PER_HP = 4.4482216152605 / 0.74569987158227  # N/kW in 1 lbf/hp = 5.9656 (exact definitions)

STUDIES = {n: load_study(PROBLEMS / f"{n}.toml") for n in NAMES}
SETTINGS = dict(deadline=None, max_examples=40, derandomize=True)


# --- more power never lengthens the ground roll ---------------------------------------------

def _prop_thrust(power, density, diameter, efficiency=0.75, figure_of_merit=0.70):
    """Installed propeller thrust T(V) for shaft power ``power`` [W] (one engine)."""
    disc = 0.25 * math.pi * diameter**2
    static = propulsion.static_thrust_momentum(power, density, disc, figure_of_merit)
    return lambda v: propulsion.propeller_thrust(v, power, efficiency, static)


@settings(**SETTINGS)
@given(weight=st.floats(5e3, 2e5), wing_loading=st.floats(400.0, 5000.0),
       density=st.floats(0.9, 1.25), cl_to=st.floats(1.3, 2.8), cd0=st.floats(0.02, 0.12),
       k=st.floats(0.03, 0.08), phi=st.floats(0.2, 1.0), mu=st.floats(0.02, 0.2),
       power_to_weight=st.floats(3.0, 40.0), more=st.floats(0.01, 1.0),
       prop_scales=st.booleans())
def test_more_power_never_lengthens_the_ground_roll_at_fixed_mass(
        weight, wing_loading, density, cl_to, cd0, k, phi, mu, power_to_weight, more,
        prop_scales):
    """Physics level, everything held but the power: weight, wing area, lift-off speed, drag
    polar, ground effect, friction. The propeller either stays the same or grows with the
    power (D proportional to P^0.25, a disc loading held: a test case, no source needed).
    Thrust at every speed rises
    with power (momentum theory T0 = (FM P)^(2/3) (2 rho A)^(1/3), McCormick; eta P / V above
    the blend), so the acceleration rises everywhere and s = integral V / a dV falls."""
    area = weight / wing_loading
    v_lo = 1.2 * performance.stall_speed(wing_loading, density, cl_to)  # V_LO = 1.2 V_s,TO
    p1 = power_to_weight * weight
    p2 = p1 * (1.0 + more)
    d1 = 0.56 * (p1 / 1e3) ** 0.25
    d2 = 0.56 * (p2 / 1e3) ** 0.25 if prop_scales else d1
    args = (np.array([weight]), np.array([area]), np.array([v_lo]))
    tail = (density, cd0, k, phi, 0.5, mu)
    s1, a1, t1 = performance.ground_roll(*args, _prop_thrust(p1, density, d1), *tail)
    s2, a2, t2 = performance.ground_roll(*args, _prop_thrust(p2, density, d2), *tail)
    assert s2[0] <= s1[0] * (1 + 1e-12)
    assert a2[0] >= a1[0] - 1e-12
    assert t2[0] > t1[0]
    if a1[0] > 0.01:  # it can accelerate: a real gain, not only the acceleration floor
        assert s2[0] < s1[0]


@pytest.mark.parametrize("name", NAMES)
@settings(**SETTINGS)
@given(u=st.tuples(st.floats(0, 1), st.floats(0, 1)), flap_pick=st.integers(0, 10**6))
def test_more_power_never_lengthens_the_sized_ground_roll(name, u, flap_pick):
    """Sized level. Held: W/S, A, flap, the departure air state, and (since W/P and T/W are
    ratios to the takeoff weight) power or thrust PER UNIT WEIGHT except for the change under
    test. The takeoff mass is NOT held: more power means a heavier engine and a heavier,
    larger airplane. Per unit weight that changes only (a) the span, which grows, lowering the
    ground-effect induced drag and K (both help), and (b) the propeller: its diameter is set
    by the tip limits at the study's rpm (not by the power), so the static thrust per weight
    (FM P)^(2/3) (2 rho A)^(1/3) / W (McCormick) goes as (P/W)^(2/3) W^(-1/3): for a
    power-per-weight ratio r and a mass ratio q it is not lower when q <= r^2. Under that condition (checked below) the
    property is physically guaranteed; outside it a mass spiral could overturn it."""
    study = STUDIES[name]
    ws_v, ld_v, ar_v = study.variables
    n = 10
    ws = np.full(n, ws_v.lower + u[0] * (ws_v.upper - ws_v.lower))
    ar = np.full(n, ar_v.lower + u[1] * (ar_v.upper - ar_v.lower))
    flap = study.spec.high_lift_names.index(study.flaps[flap_pick % len(study.flaps)])
    idx = np.full(n, flap)
    if study.spec.uses_power_loading:
        loading = np.linspace(ld_v.upper, ld_v.lower, n)   # W/P falling: more power
        per_weight = 1.0 / loading
    else:
        loading = np.linspace(ld_v.lower, ld_v.upper, n)   # T/W rising: more thrust
        per_weight = loading
    out = size_designs(study.spec, ws, loading, ar, idx)
    roll = out["takeoff_ground_roll_m"]
    mass = out["takeoff_mass_kg"]
    ok = (out["margin_mass_closure"] >= 0) & (out["margin_runway_acceleration"] > 0)
    for i in range(n - 1):
        if not (ok[i] and ok[i + 1]):
            continue
        r, q = per_weight[i + 1] / per_weight[i], mass[i + 1] / mass[i]
        if study.spec.uses_power_loading and q > r**2:
            continue
        assert roll[i + 1] <= roll[i] * (1 + 1e-9), (i, roll, mass)


def test_more_power_shortens_the_sized_roll_on_a_grid():
    """The same property over a dense seeded grid of the default study: 2000 (W/S, A, flap)
    points x 12 power loadings; neighbours that both close and accelerate are compared, under
    the same mass-ratio condition q <= r^2 as above (it removes under 5 % of the pairs)."""
    study = STUDIES["high_strip_utility"]
    rng = np.random.default_rng(7)
    ws_v, ld_v, ar_v = study.variables
    n, k = 2000, 12
    ws = np.repeat(rng.uniform(ws_v.lower, ws_v.upper, n), k)
    ar = np.repeat(rng.uniform(ar_v.lower, ar_v.upper, n), k)
    idx = np.repeat(rng.integers(0, len(study.spec.high_lift), n), k)
    loading = np.tile(np.linspace(ld_v.upper, ld_v.lower, k), n)
    out = size_designs(study.spec, ws, loading, ar, idx)
    roll = out["takeoff_ground_roll_m"].reshape(n, k)
    ok = ((out["margin_mass_closure"] >= 0) & (out["margin_runway_acceleration"] > 0)
          ).reshape(n, k)
    mass = out["takeoff_mass_kg"].reshape(n, k)
    per_weight = 1.0 / loading.reshape(n, k)
    guaranteed = (mass[:, 1:] / mass[:, :-1]) <= (per_weight[:, 1:] / per_weight[:, :-1]) ** 2
    pair = ok[:, 1:] & ok[:, :-1]
    assert pair.sum() > 0.8 * pair.size
    assert (pair & ~guaranteed).sum() < 0.05 * pair.sum()
    pair &= guaranteed
    assert (np.diff(roll, axis=1)[pair] <= 1e-9 * roll[:, 1:][pair]).all()
    # and the gain is real: halving-ish the power loading shortens the roll a lot
    both = ok[:, 0] & ok[:, -1]
    assert (roll[both, -1] < 0.8 * roll[both, 0]).all()


# --- more CLmax never raises the stall speed ------------------------------------------------

@pytest.mark.parametrize("name", NAMES)
@settings(**SETTINGS)
@given(u=st.floats(0, 1), f=st.floats(0, 1), ar=st.floats(0, 1))
def test_more_clmax_never_raises_the_stall_speed(name, u, f, ar):
    study = STUDIES[name]
    ws_v, ld_v, ar_v = study.variables
    names = study.spec.high_lift_names   # every catalogue entry, with and without slats
    n = len(names)
    ws = np.full(n, ws_v.lower + u * (ws_v.upper - ws_v.lower))
    aspect = np.full(n, ar_v.lower + ar * (ar_v.upper - ar_v.lower))
    out = size_designs(study.spec, ws, np.full(n, ld_v.lower + f * (ld_v.upper - ld_v.lower)),
                       aspect, np.arange(n))
    cl = out["cl_max_landing"]
    vs = out["stall_speed_m_s"]
    # catalogue increments scaled by cos of each design's hinge-line (flaps) and leading-edge
    # (slats) sweep, checked against the planform formula in tests/test_best_climb.py
    inc = high_lift(study.spec, np.arange(n), aspect).cl_increment_landing
    np.testing.assert_allclose(cl, study.spec.aerodynamics.cl_max_clean + inc, rtol=1e-12)
    order = np.argsort(cl, kind="stable")
    assert (np.diff(vs[order]) <= 1e-12 * vs[order][1:]).all()
    # V_s ~ CLmax^(-1/2) at equal W/S (V_s = sqrt(2 (W/S) / (rho CLmax)), definition)
    np.testing.assert_allclose(vs * np.sqrt(cl), vs[0] * np.sqrt(cl[0]), rtol=1e-12)
    # the ordering of the catalogue itself (Arnedo Table 3.1 section increments): none <
    # plain = split < single slotted < Fowler and double slotted; slats add
    by = dict(zip(names, cl))
    assert by["none"] < by["plain"] == by["split"] < by["single_slotted"] < by["fowler"]
    assert by["single_slotted"] < by["double_slotted"]
    assert all(by[f"{b}+slats"] > by[b] for b in ("none", "plain", "fowler"))


# --- aspect ratio: lower K, heavier wing ------------------------------------------------------

@settings(**SETTINGS)
@given(a1=st.floats(4.0, 12.0), more=st.floats(0.05, 4.0), area=st.floats(8.0, 60.0),
       mass=st.floats(800.0, 8000.0), fuselage=st.floats(1.0, 2.2),
       taper=st.floats(0.3, 1.0), sweep=st.floats(0.0, 0.4), mach=st.floats(0.1, 0.7))
def test_higher_aspect_ratio_lowers_k_and_raises_wing_mass(a1, more, area, mass, fuselage,
                                                          taper, sweep, mach):
    """At fixed wing area and takeoff mass; the span follows, b = sqrt(A S)."""
    a2 = min(a1 + more, 12.0)
    if a2 <= a1:
        return
    a = np.array([a1, a2])
    span = np.sqrt(a * area)
    # Nita & Scholz 2012 (valid A 4 to 12): pi A e = pi A k / (1 + f A) grows with A, and
    # k_eF = 1 - 2 (d/b)^2 grows with the span, so K = 1 / (pi A e) falls
    e = aerodynamics.oswald_factor("nita_scholz2012", a, taper, sweep, fuselage / span, mach,
                                   0.804)
    k = aerodynamics.induced_drag_factor(a, e)
    assert k[1] < k[0]
    # Obert 2009: K = (1.05 + 0.007 pi A) / (pi A) = 1.05 / (pi A) + 0.007
    e_o = aerodynamics.oswald_factor("obert2009", a, taper, sweep, fuselage / span, mach, 0.804)
    k_o = aerodynamics.induced_drag_factor(a, e_o)
    np.testing.assert_allclose(k_o, 1.05 / (np.pi * a) + 0.007, rtol=1e-12)
    assert k_o[1] < k_o[0]
    # USAF wing-mass equation (Nicolai & Carichner 2010 ch. 20, from memory):
    # W_w ~ [A^0.57 ...]^0.993 at fixed mass, area, taper, t/c, sweep, speed
    mw = weights.wing_mass_usaf(mass, 5.7, a, area, taper, 0.15, sweep, 70.0)
    assert mw[1] > mw[0]
    assert mw[1] / mw[0] == pytest.approx((a2 / a1) ** (0.57 * 0.993), rel=1e-9)


# --- never a NaN or inf, over and far beyond the bounds ------------------------------------

_EXTREME = np.array([1e-9, 1e-6, 1e-3, 0.1, 1.0, 3.0, 50.0, 1e3, 1e5, 1e7, 1e9, 1e12])


@pytest.mark.parametrize("name", NAMES)
def test_100000_random_designs_give_no_nan_or_inf(name):
    study = STUDIES[name]
    rng = np.random.default_rng(2024)
    n = 100_000
    ws_v, ld_v, ar_v = study.variables

    def across(v, n, decades):
        """Half log-uniform over `decades` around the bounds, half uniform in the bounds."""
        lo, hi = math.log10(v.lower) - decades, math.log10(v.upper) + decades
        x = np.where(rng.random(n) < 0.5, 10 ** rng.uniform(lo, hi, n),
                     rng.uniform(v.lower, v.upper, n))
        return x

    d = {"wing_loading_N_m2": across(ws_v, n, 3), study.loading_column: across(ld_v, n, 3),
         "aspect_ratio": across(ar_v, n, 3),
         "flap": rng.choice(study.spec.high_lift_names, n)}
    # the first rows: every combination of extreme values, each flap
    grid = np.array(np.meshgrid(_EXTREME, _EXTREME, _EXTREME)).reshape(3, -1)
    m = grid.shape[1]
    d["wing_loading_N_m2"][:m], d[study.loading_column][:m], d["aspect_ratio"][:m] = grid
    d["flap"][:m] = np.resize(np.asarray(study.spec.high_lift_names, dtype=object), m)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)  # overflow inside, cleaned at the end
        frame = optimiser.evaluate(study, pd.DataFrame(d))
    assert len(frame) == n
    numeric = frame.select_dtypes(include="number")
    assert numeric.shape[1] > 40
    bad = [c for c in numeric.columns if not np.isfinite(numeric[c].to_numpy()).all()]
    assert not bad, bad
    assert frame["feasible"].dtype == bool
    # infeasible is a flag: absurd designs are evaluated and refused, never NaN
    absurd = (frame["wing_loading_N_m2"] > 1e5) | (frame["aspect_ratio"] < 0.1)
    assert absurd.sum() > 1000
    assert not frame.loc[absurd, "feasible"].any()
    assert (frame.loc[frame["wing_loading_N_m2"] > 1e5, "margin_stall_speed"] < 0).all()
    assert (frame.loc[~frame["feasible"], "most_violated"] != "").all()
    assert (~frame.loc[absurd, "within_bounds"]).all()
    # the in-bounds half still gives feasible designs (fewer for the jet, whose small wings
    # cannot hold its fuel: the fuel-volume constraint)
    share = 0.02 if name == "light_twin_jet" else 0.05
    assert frame.loc[frame["within_bounds"], "feasible"].mean() > share


# --- facts of the trade ---------------------------------------------------------------------

@pytest.fixture(scope="module")
def feasible():
    """Feasible designs of 20 000 seeded random in-bounds designs per demo study."""
    rng = np.random.default_rng(11)
    out = {}
    for name, study in STUDIES.items():
        d = {v.column: rng.uniform(v.lower, v.upper, 20_000) for v in study.variables}
        d["flap"] = rng.choice(study.flaps, 20_000)
        frame = optimiser.evaluate(study, pd.DataFrame(d))
        out[name] = frame[frame["feasible"]]
    return out


def _power_loading_lb_hp(frame):
    return frame["power_loading_N_kW"] / LB_PER_HP


# (study, quantity, low, high). Observed on this sample (min - max of the feasible designs),
# with the class II component masses (mass_method = "components"; the class I share before
# gave piston 0.58 - 0.80, turboprop 0.53 - 0.695, jet 0.60 - 0.65):
#   piston (2741 feasible): empty fraction 0.571 - 0.753 (10th to 90th percentile 0.60 -
#     0.68), takeoff mass 1815 - 5405 kg
#   turboprop (2679): empty fraction 0.525 - 0.615, takeoff mass 6280 - 10150 kg
#   jet (1151): empty fraction 0.528 - 0.577, takeoff mass 3920 - 5750 kg
SPIRAL = ("feasible mass-spiral designs: heavy engines at low W/P snowball the takeoff mass "
          "(up to 3 x the lightest feasible design; empty fraction up to 0.75) and no "
          "constraint refuses them; reported, band not widened")
BANDS = [
    # cruise L/D roughly 8 to 17 (common practice). Lower edge 7: the single piston's fixed gear, strut-braced wing at a low
    # W/S (cruise CL 0.24) sits well below its best L/D; observed minimum 7.46.
    *[(n, "cruise_lift_to_drag", 7.0, 17.0) for n in NAMES],
    # empty-mass fraction 0.5 to 0.7 (Roskam Pt I Table 2.15, from memory)
    pytest.param("high_strip_utility", "empty_mass_fraction", 0.5, 0.7,
                 marks=pytest.mark.xfail(strict=True, reason="observed up to 0.753; " + SPIRAL)),
    ("twin_turboprop_commuter", "empty_mass_fraction", 0.5, 0.7),  # at the edge: max 0.695
    ("light_twin_jet", "empty_mass_fraction", 0.5, 0.7),
    # Oswald e 0.7 to 0.85 (common practice) at low speed and in cruise
    *[(n, "oswald_e", 0.7, 0.85) for n in NAMES],
    *[(n, "oswald_e_cruise", 0.7, 0.85) for n in NAMES],
    # clean CD0 0.017 to 0.035 (common practice; Roskam Pt I ch. 3, from memory)
    *[(n, "cd0", 0.017, 0.035) for n in NAMES],
    # power loading: single piston about 6 to 20 lb/hp, twin turboprop 4 to 10 lb/hp;
    # jet T/W 0.25 to 0.6 (common practice)
    ("high_strip_utility", "lb_per_hp", 6.0, 20.0),
    pytest.param("twin_turboprop_commuter", "lb_per_hp", 4.0, 10.0,
                 marks=pytest.mark.xfail(strict=True, reason=(
                     "observed up to 12.1 lb/hp (72.4 N/kW) feasible, 6.3 t on 2 x 440 kW: "
                     "A 11 to 13 wings (cruise L/D 15 to 17) need little cruise power and the "
                     "model's Part 23 rules have no one-engine-inoperative takeoff "
                     "(accelerate-go) requirement to size the engines; reported, band not "
                     "widened"))),
    ("light_twin_jet", "thrust_to_weight", 0.25, 0.6),
]


@pytest.mark.parametrize("name, quantity, low, high", BANDS)
def test_feasible_designs_land_in_their_class_ranges(feasible, name, quantity, low, high):
    frame = feasible[name]
    assert len(frame) > 500
    x = _power_loading_lb_hp(frame) if quantity == "lb_per_hp" else frame[quantity]
    assert x.min() >= low, f"{name} {quantity}: min {x.min():.4g} below {low}"
    assert x.max() <= high, f"{name} {quantity}: max {x.max():.4g} above {high}"


@pytest.mark.parametrize("name", NAMES)
def test_typical_feasible_designs_are_in_the_empty_fraction_band(feasible, name):
    """The central 80 % of the feasible designs (10th to 90th percentile) of every demo,
    against the empty-mass fraction band 0.5 to 0.7 (Roskam Pt I Table 2.15, from memory)."""
    p10, p90 = np.percentile(feasible[name]["empty_mass_fraction"], [10, 90])
    assert p10 >= 0.5, p10
    assert p90 <= 0.7, p90


def test_default_study_median_empty_fraction_in_the_general_aviation_range(feasible):
    """The single piston's median feasible design against the general-aviation empty-mass
    fraction 0.55 to 0.65 (METHODS.md sec. 8, from the Roskam Pt I Table 2.15 regressions,
    from memory); observed 0.632 with the class II component masses."""
    assert 0.55 <= np.median(feasible["high_strip_utility"]["empty_mass_fraction"]) <= 0.65


TABLE_2_15 = {  # log10 W_TO = A + B log10 W_E [lb]: (A, B), Roskam Pt I Table 2.15, as in
    # METHODS.md (from memory; check values there: single prop 2500 lb -> W_E / W_TO 0.59604)
    "single_engine_propeller": (-0.1440, 1.1162),
    "twin_engine_propeller": (0.0966, 1.0298),
    "regional_turboprop": (0.3774, 0.9647),
    "business_jet": (0.2678, 0.9979),
}
LB = 0.45359237  # kg, exact (NIST SP 811, 2008, appendix B)


def table_2_15_empty_mass_kg(takeoff_mass_kg, category):
    """Empty mass [kg] the Roskam Pt I Table 2.15 regression gives at a takeoff mass."""
    a, b = TABLE_2_15[category]
    return 10.0 ** ((np.log10(np.asarray(takeoff_mass_kg) / LB) - a) / b) * LB


def test_table_2_15_regression_reproduces_its_check_value():
    """METHODS.md's check: single prop 2500 lb -> W_E / W_TO = 0.59604 (to 1e-4)."""
    w_e = table_2_15_empty_mass_kg(2500 * LB, "single_engine_propeller")
    assert w_e / (2500 * LB) == pytest.approx(0.59604, abs=1e-4)


# (study, category, observed median of class II / regression over the feasible sample).
# The regression's error on W_E is 5 to 10 % for a typical airplane of its class (METHODS.md);
# a single design may differ more, so the median is held to +-20 % (two of those errors).
# The high-strip utility single sits at the heavy end (fixed gear, strut-braced wing sized for
# a 5.7 ultimate load factor at a low wing loading, 300 kg of fixed equipment): reported, not
# recalibrated.
CLASS_II_VS_TABLE_2_15 = [
    ("high_strip_utility", "single_engine_propeller"),      # observed median 1.156
    ("twin_turboprop_commuter", "twin_engine_propeller"),   # observed 0.920
    ("twin_turboprop_commuter", "regional_turboprop"),      # observed 0.971
    ("light_twin_jet", "business_jet"),                     # observed 1.009
]


@pytest.mark.parametrize("name, category", CLASS_II_VS_TABLE_2_15)
def test_class_ii_empty_mass_against_the_class_i_regression_at_the_same_takeoff_mass(
        feasible, name, category):
    """The component (class II) empty mass of each demo's feasible designs against the
    statistical (class I) empty mass of its class at the same takeoff mass (Roskam Pt I
    Table 2.15, from memory): an independent, published check of the whole mass build-up.
    Median within +-20 %, and the central 80 % within -25 % to +35 %."""
    frame = feasible[name]
    ratio = frame["empty_mass_kg"] / table_2_15_empty_mass_kg(frame["takeoff_mass_kg"],
                                                              category)
    assert 0.8 <= np.median(ratio) <= 1.2, np.median(ratio)
    p10, p90 = np.percentile(ratio, [10, 90])
    assert p10 >= 0.75 and p90 <= 1.35, (p10, p90)


# --- lift-off speed -------------------------------------------------------------------------

@pytest.mark.parametrize("name", NAMES)
def test_liftoff_speed_is_the_study_factor_times_the_takeoff_stall_speed(name):
    study = STUDIES[name]
    factor = study.spec.speeds.liftoff_speed_factor
    assert factor == 1.2                       # the study default (spec.Speeds)
    assert 1.1 <= factor <= 1.3                # common practice: V_LO = 1.1 to 1.3 V_s,TO
    rng = np.random.default_rng(3)
    d = {v.column: rng.uniform(v.lower, v.upper, 500) for v in study.variables}
    d["flap"] = rng.choice(study.flaps, 500)
    frame = optimiser.evaluate(study, pd.DataFrame(d))
    np.testing.assert_allclose(frame["liftoff_speed_m_s"] / frame["stall_speed_takeoff_m_s"],
                               1.2, rtol=1e-9)
    # V_s,TO = sqrt(2 (W/S) / (rho_TO CLmax,TO)) with rho_TO from the ISA by hand (ICAO Doc
    # 7488): T = 288.15 - 0.0065 h + dT, p = 101325 (1 - 0.0065 h / 288.15)^5.25588
    dep = study.spec.departure
    h = dep.elevation_m
    p = 101325.0 * (1 - 0.0065 * h / 288.15) ** (G0 / (0.0065 * 287.05287))
    rho = p / (287.05287 * (288.15 - 0.0065 * h + dep.temperature_offset_K))
    np.testing.assert_allclose(frame["density_takeoff_kg_m3"], rho, rtol=1e-9)
    np.testing.assert_allclose(
        frame["stall_speed_takeoff_m_s"],
        np.sqrt(2 * frame["wing_loading_N_m2"] / (rho * frame["cl_max_takeoff"])), rtol=1e-9)


def test_default_study_takeoff_density_value():
    # 1900 m, ISA+20: T = 275.80 + 20 = 295.80 K, p = 80 487 Pa -> rho = 0.9479 kg/m^3 (by hand)
    frame = optimiser.evaluate(STUDIES["high_strip_utility"], {
        "wing_loading_N_m2": [1000.0], "power_loading_N_kW": [70.0], "aspect_ratio": [8.0],
        "flap": ["fowler"]})
    assert frame["density_takeoff_kg_m3"].iloc[0] == pytest.approx(0.9479, abs=1e-4)


# --- the cruise speed is the level-flight root, checked outside the model's solver ----------

def test_piston_cruise_speed_is_where_thrust_equals_drag():
    # Rebuilt from the physics functions alone: at the reported highest level speed the
    # cruise thrust (Gagg-Ferrar lapse, propeller blend) equals the drag (parabolic polar +
    # Lock wave drag) at the cruise weight, within the solver's 1e-3 m/s, and it is the top
    # of the level-flight speed range (thrust below drag just above it).
    from optimiser.physics import atmosphere
    study = STUDIES["high_strip_utility"]
    spec = study.spec
    rng = np.random.default_rng(8)
    n = 400
    cols = [rng.uniform(v.lower, v.upper, n) for v in study.variables]
    flap = rng.integers(0, len(spec.high_lift), n)
    out = size_designs(spec, *cols, flap)
    pr, ad, ms = spec.propulsion, spec.aerodynamics, spec.mission
    h, dt = ms.cruise_altitude_m, ms.cruise_temperature_offset_K
    rho = float(atmosphere.isa_density(h, dt))
    sound = float(atmosphere.speed_of_sound(atmosphere.isa_temperature(h, dt)))
    sigma = rho / atmosphere.RHO0
    sigma_crit = atmosphere.density_ratio(pr.turbocharged_critical_altitude_m)
    power = (out["engine_power_kW"] * 1e3 * pr.cruise_power_fraction
             * propulsion.piston_power_lapse(sigma, sigma_crit))
    disc = 0.25 * math.pi * out["propeller_diameter_m"] ** 2
    static = propulsion.static_thrust_momentum(power / pr.engine_count, rho, disc,
                                               pr.propeller_figure_of_merit) * pr.engine_count
    f_pre = ms.fraction_startup * ms.fraction_taxi * ms.fraction_takeoff * ms.fraction_climb
    weight = out["takeoff_mass_kg"] * G0 * f_pre
    ws = weight / out["wing_area_m2"]
    k = 1.0 / (math.pi * np.asarray(cols[2]) * out["oswald_e_cruise"])

    v = out["cruise_speed_m_s"]
    sel = v > 0
    assert sel.sum() > 0.7 * n  # the small wings' built-up CD0 leaves some unable to cruise

    def excess(speed):
        cd0 = out["cd0"][sel] + aerodynamics.wave_drag_lock(speed / sound,
                                                            ad.drag_divergence_mach)
        thrust = propulsion.propeller_thrust(speed, power[sel], pr.propeller_efficiency_cruise,
                                             static[sel])
        return thrust / weight[sel] - performance.drag_to_weight(speed, ws[sel], rho, cd0,
                                                                 k[sel])

    assert np.all(excess(v[sel] - 1e-3) >= 0.0)
    assert np.all(excess(v[sel] + 1e-3) < 0.0)


# --- class II masses: a bigger fuselage, and never a NaN inside the mass groups -------------

@pytest.mark.parametrize("name", NAMES)
@settings(**SETTINGS)
@given(u=st.tuples(st.floats(0, 1), st.floats(0, 1), st.floats(0, 1)),
       wider=st.floats(1.01, 1.4), flap_pick=st.integers(0, 10**6))
def test_a_bigger_fuselage_has_more_fuselage_mass_and_drag(name, u, wider, flap_pick):
    """Same design variables, a bigger fuselage (diameter and length scaled together, the
    nose and tail cones keeping their fineness): the fuselage's own mass (USAF (w + h)^1.1
    l^0.3...; Torenbeek S_G^1.2 / sqrt(w + h), S_G about pi d l) and its drag area (wetted
    area x friction x Hoerner's form factor) grow. The airplane's totals need not: the longer
    tail arm shrinks both tails (fixed volume coefficients), which can outweigh the fuselage
    (seen by hypothesis: a few kg of empty mass, a few per cent of drag area), and at a fixed
    length a wider fuselage with cones of fixed fineness can even lose wetted area near
    l = 5 d, where the cones take over the cylinder."""
    import dataclasses
    spec = STUDIES[name].spec
    ad, g = spec.aerodynamics, spec.geometry
    length = g.fuselage_length_m if g.fuselage_length_m is not None else None
    bigger = dataclasses.replace(
        spec, aerodynamics=dataclasses.replace(ad, fuselage_diameter_m=ad.fuselage_diameter_m
                                               * wider),
        geometry=dataclasses.replace(g, fuselage_length_m=None if length is None
                                     else length * wider))
    x = [np.array([v.lower + ui * (v.upper - v.lower)]) for v, ui in
         zip(STUDIES[name].variables, u)]
    flap = np.array([flap_pick % len(spec.high_lift_names)])
    base, big = size_designs(spec, *x, flap), size_designs(bigger, *x, flap)
    if base["margin_mass_closure"][0] < 0 or big["margin_mass_closure"][0] < 0:
        return  # no closure: the mass is the search limit, not an empty mass
    assert big["fuselage_mass_kg"][0] > base["fuselage_mass_kg"][0]
    assert big["fuselage_drag_area_m2"][0] > base["fuselage_drag_area_m2"][0]
    assert big["fuselage_wetted_area_m2"][0] > base["fuselage_wetted_area_m2"][0]


@pytest.mark.parametrize("name", NAMES)
@settings(**SETTINGS)
@given(u=st.tuples(st.floats(0, 1), st.floats(0, 1), st.floats(0, 1)),
       longer=st.floats(1.01, 1.6), flap_pick=st.integers(0, 10**6))
def test_a_longer_fuselage_is_heavier_and_its_longer_arm_shrinks_the_tails(name, u, longer,
                                                                           flap_pick):
    """A longer fuselage at the same takeoff mass is heavier, and the tail arm (half its
    length) grows, so the tails sized by their volume coefficients shrink. The empty mass
    is NOT monotone in the length: where the wing is huge (W/S at its lower bound, a
    mass-spiral design) the tails outweigh the fuselage and a longer fuselage lightens the
    airplane (found by this test's first version: 5691 -> 5691 - 0.7 kg); so only the
    groups are checked here, at the first closure state's mass."""
    import dataclasses
    from optimiser.physics import weights as w
    spec = STUDIES[name].spec
    g = spec.geometry
    length = g.fuselage_length_m
    longer_spec = dataclasses.replace(spec, geometry=dataclasses.replace(
        g, fuselage_length_m=length * longer))
    x = [np.array([v.lower + ui * (v.upper - v.lower)]) for v, ui in
         zip(STUDIES[name].variables, u)]
    flap = np.array([flap_pick % len(spec.high_lift_names)])
    base, big = size_designs(spec, *x, flap), size_designs(longer_spec, *x, flap)
    if base["margin_mass_closure"][0] < 0 or big["margin_mass_closure"][0] < 0:
        return
    if big["takeoff_mass_kg"][0] >= base["takeoff_mass_kg"][0]:
        assert big["fuselage_mass_kg"][0] > base["fuselage_mass_kg"][0]
    # at one mass and wing: the tails fall with the arm (S_t ~ 1 / l_t)
    m, s = base["takeoff_mass_kg"][0], base["wing_area_m2"][0]
    arm = g.tail_arm_fraction * length
    t1 = w.horizontal_tail_mass_usaf(m, 5.7, 0.2 * s, arm, 3.0, 0.1)
    t2 = w.horizontal_tail_mass_usaf(m, 5.7, 0.2 * s / longer, arm * longer, 3.0 / longer**0.5,
                                     0.1 / longer**0.5)
    assert t2 < t1


@pytest.mark.parametrize("name", NAMES)
def test_mass_groups_of_100000_random_designs_are_finite_before_any_cleaning(name):
    """The raw groups of the closure (before the output's NaN safety net), for designs in
    and around the bounds: finite and not negative."""
    from optimiser.sizing import size_batch
    study = STUDIES[name]
    rng = np.random.default_rng(7)
    n = 100_000
    x = [10 ** rng.uniform(np.log10(v.lower) - 0.5, np.log10(v.upper) + 0.5, n)
         for v in study.variables]
    flaps = rng.integers(0, len(study.spec.high_lift_names), n)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        masses = size_batch(study.spec, *x, flaps).closure.state.masses
    import dataclasses
    for f in dataclasses.fields(masses):
        a = getattr(masses, f.name)
        assert np.isfinite(a).all() and (a >= 0).all(), f.name
