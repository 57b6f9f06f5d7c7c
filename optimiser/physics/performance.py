"""Point performance: stall, takeoff, landing, climb, level speed and ceiling.

All functions are vectorised over designs. Where thrust varies with speed (propellers,
turbofan Mach lapse) the caller passes ``thrust_at(speed) -> thrust [N]``, a callable that
broadcasts over an array of speeds shaped like ``speed`` (designs along axis 0).
"""

from __future__ import annotations

import numpy as np

from . import G0
from . import atmosphere

SERVICE_CEILING_CLIMB_RATE = 0.508
"""Rate of climb that defines the service ceiling, 100 ft/min [m s^-1] (common definition)."""

# --- regulatory numbers -------------------------------------------------------------------

PART25_OEI_SECOND_SEGMENT = {2: 0.024, 3: 0.027, 4: 0.030}
"""14 CFR 25.121(b): one-engine-inoperative climb gradient, gear up, takeoff flaps, V2."""
PART23_AEO_GRADIENT_RECIPROCATING = 0.083
"""14 CFR 23.65(a) (Amdt 23-62): all-engines gradient at sea level, landplanes <= 6000 lb."""
PART23_AEO_GRADIENT_TURBINE = 0.04
"""14 CFR 23.65(b) (Amdt 23-62): turbine-engined or over 6000 lb."""
PART23_OEI_GRADIENT = 0.015
"""14 CFR 23.67(a)(1) / 23.2120(b)(1): one engine out, 1.5 % at 5000 ft, cruise configuration."""
PART23_OEI_ALTITUDE = 1524.0
"""5000 ft pressure altitude of 14 CFR 23.67(a)(1) [m]."""
OBSTACLE_HEIGHT = {"part23": 15.24, "part25": 10.668}
"""Screen height: 50 ft (Part 23 singles and low-speed twins), 35 ft (Part 25) [m]."""
PART23_MASS_LIMIT_NORMAL = 12500 * 0.45359237
"""14 CFR 23.3(a) (before Amdt 23-64): normal, utility and acrobatic categories, maximum
takeoff weight 12 500 lb (5 670 kg) (from memory)."""
PART23_MASS_LIMIT_COMMUTER = 19000 * 0.45359237
"""14 CFR 23.3(d) (before Amdt 23-64): commuter category, propeller-driven multi-engine
airplanes up to 19 000 lb (8 618 kg) (from memory)."""
PART25_FIELD_FACTOR = 1.15
"""14 CFR 25.113: takeoff distance at least 115 % of the all-engines distance to 35 ft."""


def certification_numbers(basis, family, engine_count):
    """Regulatory minima for a certification basis, family and engine count.

    Returns a dict with ``aeo_climb_gradient_min``, ``max_takeoff_mass_kg`` (inf: no limit),
    ``oei_climb_gradient_min`` (0 for one
    engine), ``oei_climb_altitude_m`` (NaN: at the departure airfield), ``oei_flaps_takeoff``,
    ``balanced_field``, ``field_length_factor`` and ``obstacle_height_m``.

    Raises ValueError for a combination the rules do not cover.
    """
    n = int(engine_count)
    if basis == "part23":
        aeo = PART23_AEO_GRADIENT_RECIPROCATING if family == "piston" else PART23_AEO_GRADIENT_TURBINE
        mass_limit = PART23_MASS_LIMIT_COMMUTER if (n > 1 and family != "turbofan") \
            else PART23_MASS_LIMIT_NORMAL
        return dict(aeo_climb_gradient_min=aeo, max_takeoff_mass_kg=mass_limit,
                    oei_climb_gradient_min=PART23_OEI_GRADIENT if n > 1 else 0.0,
                    oei_climb_altitude_m=PART23_OEI_ALTITUDE, oei_flaps_takeoff=False,
                    balanced_field=False, field_length_factor=1.0,
                    obstacle_height_m=OBSTACLE_HEIGHT["part23"])
    if basis == "part25":
        if n not in PART25_OEI_SECOND_SEGMENT:
            raise ValueError(f"part25 needs 2 to 4 engines, got {n}")
        return dict(aeo_climb_gradient_min=0.0, max_takeoff_mass_kg=float("inf"),
                    oei_climb_gradient_min=PART25_OEI_SECOND_SEGMENT[n],
                    oei_climb_altitude_m=float("nan"), oei_flaps_takeoff=True,
                    balanced_field=True, field_length_factor=PART25_FIELD_FACTOR,
                    obstacle_height_m=OBSTACLE_HEIGHT["part25"])
    raise ValueError(f"unknown certification basis {basis!r}; choose one of: 'part23', 'part25'")


# --- stall --------------------------------------------------------------------------------

def stall_speed(wing_loading, density, cl_max):
    """Stall speed [m s^-1]: V_s = sqrt(2 (W/S) / (rho CLmax)).

    Parameters
    ----------
    wing_loading : array_like
        W/S [N m^-2].
    density : array_like
        Air density [kg m^-3].
    cl_max : array_like
        Maximum lift coefficient of the configuration [-].
    """
    return np.sqrt(2.0 * np.asarray(wing_loading, float) / (density * np.asarray(cl_max, float)))


# --- takeoff ------------------------------------------------------------------------------

_GL_X, _GL_W = np.polynomial.legendre.leggauss(12)
_GL_X = 0.5 * (_GL_X + 1.0)
_GL_W = 0.5 * _GL_W


def ground_roll(weight, wing_area, v_liftoff, thrust_at, density, cd0, k, ground_effect,
                cl_ground, rolling_friction, min_acceleration=0.01, headwind=None):
    """Ground-roll distance [m] by integrating the equation of motion from rest to lift-off.

    m dV/dt = T(V) - D(V) - mu (W - L(V)), integrated in the speed domain,
    s = integral_0^V_LO V / a(V) dV, by 12-point Gauss-Legendre quadrature (within 1e-4 of
    a 64-point rule over the demo studies; for constant thrust it matches the closed form, see
    the tests). With a headwind component V_w (negative: tailwind) the airplane starts at
    airspeed V_w and covers ground at V - V_w: s = integral_{V_w}^{V_LO} (V - V_w) / a(V) dV
    (kinematics; the thrust is taken at max(V, 0), and the aerodynamic forces with V^2, which
    slightly overstates the roll while a tailwind makes the airspeed negative).

    Parameters
    ----------
    weight : array_like
        Takeoff weight [N].
    wing_area : array_like
        Reference area [m^2].
    v_liftoff : array_like
        Lift-off true airspeed [m s^-1].
    thrust_at : callable
        ``thrust_at(V)`` total thrust [N] for an array of speeds shaped (n, nodes).
    density : array_like
        Runway air density [kg m^-3].
    cd0, k : array_like
        Zero-lift drag in takeoff configuration and induced-drag factor [-].
    ground_effect : array_like
        Induced-drag factor phi in ground effect [-].
    cl_ground : array_like
        Lift coefficient during the roll [-].
    rolling_friction : array_like
        Rolling friction coefficient [-].
    min_acceleration : float
        Acceleration floor [m s^-2]; a design whose acceleration falls below it anywhere in
        the roll cannot lift off and is flagged (the distance stays finite).
    headwind : array_like, optional
        Wind component against the takeoff direction [m s^-1] (negative: tailwind), below
        the lift-off speed; None: still air (the same numbers as 0, bit for bit).

    Returns
    -------
    distance : ndarray
        Ground roll [m] (with the acceleration floored where it cannot lift off).
    min_accel : ndarray
        Smallest acceleration during the roll [m s^-2].
    thrust_liftoff : ndarray
        Thrust at lift-off [N].
    """
    w = np.asarray(weight, float)[:, None]
    s_ref = np.asarray(wing_area, float)[:, None]
    vlo = np.asarray(v_liftoff, float)
    if headwind is not None:
        return _ground_roll_in_wind(w, s_ref, vlo, thrust_at, density, cd0, k, ground_effect,
                                    cl_ground, rolling_friction, min_acceleration, headwind)
    v = vlo[:, None] * _GL_X[None, :]
    q_s = 0.5 * np.asarray(density, float).reshape(-1, 1) * v * v * s_ref
    clg = np.asarray(cl_ground, float).reshape(-1, 1) * np.ones_like(w)
    cd = np.asarray(cd0, float).reshape(-1, 1) + np.asarray(ground_effect, float).reshape(-1, 1) \
        * np.asarray(k, float).reshape(-1, 1) * clg**2
    mu = np.asarray(rolling_friction, float).reshape(-1, 1)
    normal = np.maximum(w - q_s * clg, 0.0)
    accel = G0 / w * (thrust_at(v) - q_s * cd - mu * normal)
    min_accel = accel.min(axis=1)
    a_eff = np.maximum(accel, min_acceleration)
    # a row sum, not a matrix product: BLAS sums a row in an order that depends on its
    # position in the batch, and a design must size the same in any batch (bit for bit)
    distance = vlo * ((v / a_eff) * _GL_W).sum(axis=1)
    thrust_lo = thrust_at(vlo[:, None])[:, 0]
    return distance, min_accel, thrust_lo


def _ground_roll_in_wind(w, s_ref, vlo, thrust_at, density, cd0, k, ground_effect, cl_ground,
                         rolling_friction, min_acceleration, headwind):
    """:func:`ground_roll` with a headwind component (its parameters; ``w``, ``s_ref`` as
    columns)."""
    vw = np.broadcast_to(np.asarray(headwind, float), vlo.shape)
    v = vw[:, None] + (vlo - vw)[:, None] * _GL_X[None, :]
    q_s = 0.5 * np.asarray(density, float).reshape(-1, 1) * v * v * s_ref
    clg = np.asarray(cl_ground, float).reshape(-1, 1) * np.ones_like(w)
    cd = np.asarray(cd0, float).reshape(-1, 1) + np.asarray(ground_effect, float).reshape(-1, 1) \
        * np.asarray(k, float).reshape(-1, 1) * clg**2
    mu = np.asarray(rolling_friction, float).reshape(-1, 1)
    normal = np.maximum(w - q_s * clg, 0.0)
    accel = G0 / w * (thrust_at(np.maximum(v, 0.0)) - q_s * cd - mu * normal)
    min_accel = accel.min(axis=1)
    a_eff = np.maximum(accel, min_acceleration)
    distance = (vlo - vw) * (((v - vw[:, None]) / a_eff) * _GL_W).sum(axis=1)
    thrust_lo = thrust_at(vlo[:, None])[:, 0]
    return distance, min_accel, thrust_lo


HEADWIND_CREDIT = 0.5
"""Share of a headwind component the takeoff and landing distances may count [-]: not more than
50 % (14 CFR 25.105(d)(1) for takeoff, 25.125(f) for landing; from memory)."""
TAILWIND_PENALTY = 1.5
"""Factor on a tailwind component the takeoff and landing distances must count [-]: not less
than 150 % (the same paragraphs; from memory)."""


def factored_wind(headwind):
    """The wind component the field lengths use [m s^-1]: 50 % of a headwind, 150 % of a
    tailwind (:data:`HEADWIND_CREDIT`, :data:`TAILWIND_PENALTY`). ``headwind`` [m s^-1],
    positive against the direction of takeoff or landing."""
    w = np.asarray(headwind, dtype=float)
    return np.where(w >= 0.0, HEADWIND_CREDIT * w, TAILWIND_PENALTY * w)


def ground_run_in_wind_ratio(ground_speed_air_m_s, headwind):
    """(1 - V_w / V)^2 [-]: the ratio of a ground run at constant acceleration in a wind to the
    still-air run, the run ending (or starting) at airspeed V (uniform acceleration:
    s = V_g^2 / (2 a), V_g = V - V_w; derived). Used where the model has no speed integral
    (the balanced field length)."""
    v = np.asarray(ground_speed_air_m_s, dtype=float)
    return (1.0 - np.asarray(headwind, dtype=float) / v) ** 2


def ground_roll_constant_thrust(thrust_to_weight, wing_loading, density, cd0, k, ground_effect,
                                cl_ground, rolling_friction, v_liftoff):
    """Closed-form ground roll [m] for constant thrust (Anderson, APD 1999, sec. 6.7).

    a = A - B V^2, A = g (T/W - mu), B = g rho / (2 W/S) (C_D0 + phi K C_L^2 - mu C_L),
    s_G = ln[A / (A - B V_LO^2)] / (2 B).
    """
    a = G0 * (thrust_to_weight - rolling_friction)
    b = G0 * density / (2.0 * wing_loading) * (cd0 + ground_effect * k * cl_ground**2
                                               - rolling_friction * cl_ground)
    return np.log(a / (a - b * v_liftoff**2)) / (2.0 * b)


def takeoff_air_distance(stall_speed_takeoff, climb_sine, obstacle_height,
                         transition_speed_factor=1.15, load_factor=1.19):
    """Air distance [m] from lift-off to the obstacle height, transition arc then climb.

    R = V_TR^2 / (g (n - 1)) (= 6.96 V_s^2 / g for V_TR = 1.15 V_s, n = 1.19);
    theta_OB = arccos(1 - h_OB / R); if theta_OB <= climb angle, s_A = R sin(theta_OB);
    otherwise s_A = R sin(gamma) + (h_OB - R (1 - cos gamma)) / tan(gamma).

    References
    ----------
    .. [1] J. D. Anderson, "Aircraft Performance and Design", McGraw-Hill, 1999, sec. 6.7
       (from memory).

    Parameters
    ----------
    stall_speed_takeoff : array_like
        Stall speed in takeoff configuration [m s^-1].
    climb_sine : array_like
        sin(gamma) of the steady climb after the arc, (T - D) / W [-]; floored at 1e-3.
    obstacle_height : array_like
        Screen height [m].
    """
    vtr = transition_speed_factor * np.asarray(stall_speed_takeoff, float)
    radius = vtr**2 / (G0 * (load_factor - 1.0))
    h = np.asarray(obstacle_height, float)
    theta_ob = np.arccos(np.clip(1.0 - h / radius, -1.0, 1.0))
    gamma = np.arcsin(np.clip(climb_sine, 1e-3, 0.5))
    arc_only = radius * np.sin(theta_ob)
    h_tr = radius * (1.0 - np.cos(gamma))
    with_climb = radius * np.sin(gamma) + (h - h_tr) / np.tan(gamma)
    return np.where(theta_ob <= gamma, arc_only, with_climb)


def balanced_field_length_torenbeek(wing_loading, density, cl_climb, mean_thrust_to_weight,
                                    cl_max_takeoff, oei_gradient, oei_gradient_min,
                                    obstacle_height=10.668):
    """Balanced field length [m] of a multi-engine transport, Torenbeek's estimate.

    BFL = 0.863 / (1 + 2.3 dgamma2) [(W/S) / (rho g C_L2) + h_TO] [1 / (T_bar/W - mu') + 2.7]
    + 655 ft / sqrt(sigma), with dgamma2 = gamma2 - gamma2,min, mu' = 0.01 CLmax,TO + 0.02 and
    T_bar the mean thrust of the takeoff run.

    References
    ----------
    .. [1] E. Torenbeek, "Synthesis of Subsonic Airplane Design", Delft University Press /
       Kluwer, 1982, sec. 5.4.5 and Appendix K (from memory; constants to be checked against
       the book).
    """
    sigma = np.asarray(density, float) / 1.225
    dgamma = np.maximum(np.asarray(oei_gradient, float) - oei_gradient_min, 0.0)
    mu_eff = 0.01 * np.asarray(cl_max_takeoff, float) + 0.02
    excess = np.maximum(np.asarray(mean_thrust_to_weight, float) - mu_eff, 1e-3)
    return (0.863 / (1.0 + 2.3 * dgamma)
            * (wing_loading / (density * G0 * cl_climb) + obstacle_height)
            * (1.0 / excess + 2.7) + 655.0 * 0.3048 / np.sqrt(sigma))


# --- landing ------------------------------------------------------------------------------

def landing_distance(wing_loading, density, cl_max_landing, braking_friction, obstacle_height,
                     approach_angle=np.radians(3.0), flare_speed_factor=1.23, free_roll_time=3.0,
                     flare_load_factor=1.2, ground_factor=1.15, headwind=None,
                     approach_speed_factor=1.3):
    """Landing distance from the obstacle height [m] and its parts (approach, flare, ground).

    Approach at angle theta_a; flare arc R = V_F^2 / (g (n - 1)), V_F = 1.23 V_s, n = 1.2;
    h_F = R (1 - cos theta_a); s_a = (h_OB - h_F) / tan(theta_a); s_F = R sin(theta_a);
    ground s_g = j N V_s + j^2 (W/S) / (g rho CLmax mu_B) with j = 1.15 and free roll N [s].
    The approach speed V_A = 1.3 V_s fixes the approach angle's geometry; the flare speed the
    arc. With a headwind component V_w (negative: tailwind; None: still air), each part covers
    ground at its ground speed: approach x (V_A - V_w) / V_A, flare x (V_F - V_w) / V_F, free
    roll N (V_TD - V_w) and braking (V_TD - V_w)^2 / (2 g mu_B (rho CLmax V_s^2 / (2 W/S)))
    with V_TD = j V_s (the still-air braking term is V_TD^2 / (2 a); kinematics, derived).

    References
    ----------
    .. [1] J. D. Anderson, "Aircraft Performance and Design", McGraw-Hill, 1999, sec. 6.8
       (from memory).

    Returns
    -------
    total, approach, flare, ground : ndarray
        Distances [m].
    """
    vs = stall_speed(wing_loading, density, cl_max_landing)
    vf = flare_speed_factor * vs
    radius = vf**2 / (G0 * (flare_load_factor - 1.0))
    h_f = radius * (1.0 - np.cos(approach_angle))
    s_a = np.maximum(obstacle_height - h_f, 0.0) / np.tan(approach_angle)
    s_f = radius * np.sin(approach_angle)
    if headwind is not None:
        vw = np.asarray(headwind, dtype=float)
        va = approach_speed_factor * vs
        s_a = s_a * (va - vw) / va
        s_f = s_f * (vf - vw) / vf
        v_td = ground_factor * vs
        s_g = free_roll_time * (v_td - vw) + ground_factor**2 * wing_loading / (
            G0 * density * cl_max_landing * braking_friction) * ((v_td - vw) / v_td) ** 2
        return s_a + s_f + s_g, s_a, s_f, s_g
    s_g = ground_factor * free_roll_time * vs + ground_factor**2 * wing_loading / (
        G0 * density * cl_max_landing * braking_friction)
    return s_a + s_f + s_g, s_a, s_f, s_g


# --- climb, level speed, ceiling ----------------------------------------------------------

def drag_to_weight(speed, wing_loading, density, cd0, k, cos_gamma=1.0):
    """D / W [-] in steady flight: q C_D0 / (W/S) + K (W/S) cos^2(gamma) / q."""
    q = 0.5 * density * np.asarray(speed, float) ** 2
    return q * cd0 / wing_loading + k * wing_loading * cos_gamma**2 / q


class DragToWeightCurve:
    """:func:`drag_to_weight` as a function of speed alone, for searches that evaluate it at
    many speeds: the speed-independent factors (rho / 2, K (W/S) cos^2(gamma)) are computed
    once, by the same operations in the same order, so that every value is bit for bit that
    of :func:`drag_to_weight`. Arguments as there (SI)."""

    __slots__ = ("half_density", "cd0", "wing_loading", "induced")

    def __init__(self, wing_loading, density, cd0, k, cos_gamma=1.0):
        self.half_density = 0.5 * density
        self.cd0, self.wing_loading = cd0, wing_loading
        self.induced = k * wing_loading * cos_gamma**2

    def __call__(self, speed):
        """D / W [-] at true airspeed ``speed`` [m s^-1]."""
        q = self.half_density * np.asarray(speed, float) ** 2
        return q * self.cd0 / self.wing_loading + self.induced / q


def largest_root(f, low, high, iterations=36):
    """Largest x in [low, high] with f(x) >= 0, for f >= 0 at ``low`` and < 0 at ``high``.

    Vectorised bisection (``f`` maps an array shaped like ``low`` to one of the same shape).
    Where f(low) < 0 the result is NaN; where f(high) >= 0 it is ``high``.
    """
    lo = np.array(low, dtype=float, copy=True)
    hi = np.array(high, dtype=float, copy=True)
    ok_lo = f(lo) >= 0.0
    ok_hi = f(hi) >= 0.0
    for _ in range(iterations):
        mid = 0.5 * (lo + hi)
        good = f(mid) >= 0.0
        lo = np.where(good, mid, lo)
        hi = np.where(good, hi, mid)
    return np.where(ok_hi, high, np.where(ok_lo, lo, np.nan))


RUNWAY_SURFACES = {
    # name: (rolling friction, braking friction)
    "paved_dry": (0.03, 0.40),
    "paved_wet": (0.03, 0.22),
    "hard_turf": (0.05, 0.30),
    "short_grass": (0.06, 0.25),
    "long_grass": (0.10, 0.20),
    "soft_ground": (0.20, 0.15),
}
"""Rolling and braking friction by surface: rolling 0.02-0.05 dry paved (0.03), hard turf 0.05,
short grass 0.05-0.07, long grass 0.10, soft ground 0.10-0.30; braking dry 0.3-0.5, wet
0.15-0.3 (tables in S. Gudmundsson, "General Aviation Aircraft Design", 2014, ch. 17, and
E. Torenbeek, "Synthesis of Subsonic Airplane Design", 1982, ch. 5; from memory). Braking on
unpaved surfaces is common practice."""


def falling_root(f, low, high, f_low, f_high, xtol, max_iterations=60):
    """Root of f between ``low`` (f >= 0) and ``high`` (f < 0), vectorised, by the Illinois
    variant of regula falsi (Dowell & Jarratt, BIT 11, 1971) with no step closer than half
    the tolerance to an end (as in Dekker's and Brent's methods: R. P. Brent, "Algorithms for
    Minimization without Derivatives", 1973, ch. 4; from memory), so that a root just past
    the step closes the bracket. Only the elements not yet converged are iterated.

    ``f(x, ix)`` evaluates the function for the elements ``ix`` (an index array) at ``x``.
    ``xtol`` (a number, or one per element) is the bracket width at which an element stops.
    Elements without a sign change (f_low < 0 or f_high >= 0) are not iterated: they are
    returned as the bracket's midpoint, for the caller to replace.
    """
    a = np.asarray(low, dtype=float)
    b = np.asarray(high, dtype=float)
    fa = np.asarray(f_low, dtype=float)
    fb = np.asarray(f_high, dtype=float)
    x = 0.5 * (a + b)
    tol = np.broadcast_to(np.asarray(xtol, dtype=float), x.shape)
    ix = np.flatnonzero(((b - a) > tol) & (fa >= 0.0) & (fb < 0.0))
    # working copies of the elements still iterated (compressed as they converge)
    ai, bi, fai, fbi, half = a[ix], b[ix], fa[ix], fb[ix], 0.5 * tol[ix]
    side = np.zeros(ix.size)  # +1: the last step moved a, -1: it moved b
    for _ in range(max_iterations):
        if ix.size == 0:
            break
        xi = ai + fai * (bi - ai) / (fai - fbi)  # fa >= 0 > fb: the denominator is positive
        xi = np.clip(xi, ai + half, bi - half)  # width > 2 half: never an empty interval
        fx = f(xi, ix)
        pos = fx >= 0.0  # NaN counts as past the root
        # Anderson-Bjorck: when the same end is kept twice, scale its value by
        # m = 1 - f(new) / f(end replaced), or by 1/2 where m <= 0 (the Illinois factor);
        # m is kept >= 0.1, since on a flat stretch m -> 0 throws the next step onto the far
        # end (ours, measured on f = c - x^8)
        with np.errstate(divide="ignore", invalid="ignore"):
            m = 1.0 - fx / np.where(pos, fai, fbi)
        m = np.where(m > 0.0, np.maximum(m, 0.1), 0.5)  # also for NaN
        fai = np.where(pos, fx, np.where(side < 0, m * fai, fai))
        # a NaN moves the high end but keeps the old value there as the step's weight
        fbi = np.where(pos, np.where(side > 0, m * fbi, fbi), np.where(fx == fx, fx, fbi))
        ai = np.where(pos, xi, ai)
        bi = np.where(pos, bi, xi)
        side = np.where(pos, 1.0, -1.0)
        done = (bi - ai <= 2.0 * half) | (np.abs(fx) <= 1e-12)
        if done.all():
            x[ix] = xi
            break
        if done.any():
            x[ix[done]] = xi[done]
            keep = ~done
            ix, xi, ai, bi, fai, fbi, half, side = (
                v[keep] for v in (ix, xi, ai, bi, fai, fbi, half, side))
    else:
        x[ix] = xi  # not converged in max_iterations: the last point tried
    return x


# --- landing field length under the operating rules ---------------------------------------

LANDING_DISTANCE_SHARE = {"transport": 0.6, "commuter": 0.6, "part23": 1.0}
"""Share of the available runway the landing distance from 50 ft may use [-]:
``transport`` 60 %, 14 CFR 121.195(b) (turbine-engined transport-category airplanes);
``commuter`` 60 %, 14 CFR 135.385(b); the European operating rules set the same 60 % for
commercial transport (EU Air Operations, CAT.POL.A.230, from memory); ``part23`` 100 %: no
factor in the Part 23 airworthiness rules themselves (an operator who applies the 60 % rule
passes ``operator_applies_dispatch_factor=True``)."""
WET_RUNWAY_FACTOR = 1.15
"""14 CFR 121.195(d): on a wet or slippery runway the effective runway must be at least 115 %
of the dry requirement of 121.195(b) (the same 115 % in 135.385(d) and, from memory, in
CAT.POL.A.235 of the European rules) [-]."""

WET_RUNWAY_DRY_SURFACE = {"paved_wet": "paved_dry"}
"""Wet runway surfaces (keys of :data:`RUNWAY_SURFACES`) and the dry surface whose braking
gives the dry landing distance that the 115 % of 14 CFR 121.195(d) multiplies."""


def landing_field_length_required(landing_distance, rule="transport", wet=False,
                                  operator_applies_dispatch_factor=False):
    """Runway length [m] needed for a landing distance under an operating rule.

    L_req = d_land / share x (1.15 where wet), share of :data:`LANDING_DISTANCE_SHARE`.

    Parameters
    ----------
    landing_distance : array_like
        Landing distance from the screen height to a stop on a dry runway [m].
    rule : {"transport", "commuter", "part23"}
        Operating and certification basis (see :data:`LANDING_DISTANCE_SHARE`).
    wet : array_like of bool, default False
        Wet or slippery runway at the destination, per design or one for all.
    operator_applies_dispatch_factor : bool, default False
        Part 23 only: the operator applies the 60 % rule (and then the wet 115 %).

    Returns
    -------
    ndarray
        Required landing field length [m].

    Notes
    -----
    The 115 % wet factor belongs to the dispatch rules (121.195(d), 135.385(d)); under Part 23
    without the dispatch factor it is not applied: compute the landing distance itself with
    wet-runway braking (:data:`RUNWAY_SURFACES` ``paved_wet``) instead.

    References
    ----------
    .. [1] 14 CFR 121.195(b) and (d); 14 CFR 135.385(b) and (d) (from memory for 135.385(d)).
    """
    if rule not in LANDING_DISTANCE_SHARE:
        raise ValueError(f"unknown landing rule {rule!r}; choose one of: "
                         + ", ".join(repr(k) for k in LANDING_DISTANCE_SHARE))
    dispatch = rule != "part23" or operator_applies_dispatch_factor
    share = LANDING_DISTANCE_SHARE["transport"] if dispatch else 1.0
    wet_factor = np.where(np.asarray(wet, dtype=bool) & dispatch, WET_RUNWAY_FACTOR, 1.0)
    return np.asarray(landing_distance, dtype=float) / share * wet_factor


# --- climb gradients by rule ----------------------------------------------------------------

PART23_RECIPROCATING_MASS_LIMIT = 6000 * 0.45359237
"""6000 lb (2721.554 kg) of 14 CFR 23.65(a)/(b) (before Amdt 23-64) [kg]."""


def part23_aeo_climb_gradient_min(takeoff_mass, family):
    """All-engines climb gradient required by 14 CFR 23.65 [-], per design.

    8.3 % (23.65(a), landplanes) for reciprocating-engine airplanes of 6000 lb or less;
    4 % (23.65(b)) for reciprocating-engine airplanes over 6000 lb and for turbine airplanes.

    Parameters
    ----------
    takeoff_mass : array_like
        Maximum takeoff mass [kg].
    family : {"piston", "turboprop", "turbofan"}
        Engine family; ``piston`` is reciprocating, the others turbine.

    Returns
    -------
    ndarray
        Minimum gradient of climb [-].

    Notes
    -----
    These are the prescriptive numbers of Part 23 before amendment 23-64 (text of Amdt 23-62);
    the performance-based 14 CFR 23.2120 that replaced them leaves the numbers to means of
    compliance, and the consensus means of compliance carry them forward. The applicable
    authority decides which numbers apply. Seaplanes (6.7 %, 23.65(a)) are not covered.
    Conditions (rule text from memory): (a) at sea level, at most maximum continuous power on
    each engine, gear retracted, takeoff flaps, at least 1.2 V_S1 (and 1.1 V_MC for twins);
    (b) takeoff power on each engine, gear extended unless it retracts in 7 s or less, takeoff
    flaps, the same speed. Commuter-category airplanes have their own takeoff climb rules
    (23.67(c)), not covered here.

    References
    ----------
    .. [1] 14 CFR 23.65(a) and (b), Amdt 23-62 (METHODS.md sec. 4, checked in the rule text).
    """
    if family not in ("piston", "turboprop", "turbofan"):
        raise ValueError(f"unknown engine family {family!r}; choose one of: 'piston', "
                         "'turboprop', 'turbofan'")
    m = np.asarray(takeoff_mass, dtype=float)
    light = (m <= PART23_RECIPROCATING_MASS_LIMIT) & (family == "piston")
    return np.where(light, PART23_AEO_GRADIENT_RECIPROCATING, PART23_AEO_GRADIENT_TURBINE)


PART25_CLIMB_SEGMENTS = {
    "first_segment": {2: 0.0, 3: 0.003, 4: 0.005},
    "second_segment": PART25_OEI_SECOND_SEGMENT,
    "final_takeoff": {2: 0.012, 3: 0.015, 4: 0.017},
    "approach": {2: 0.021, 3: 0.024, 4: 0.027},
    "landing": {2: 0.032, 3: 0.032, 4: 0.032},
}
"""Part 25 climb gradients by segment and engine count [-] (rule text from memory, agreeing
with METHODS.md sec. 4 where it is marked checked against the text):

``first_segment``  25.121(a): one engine out, gear down, takeoff flaps, V_LOF, takeoff thrust;
                   twins "positive" (0.0 here: the gradient must exceed it), 0.3 %, 0.5 %.
``second_segment`` 25.121(b): gear up, takeoff flaps, V2; 2.4, 2.7, 3.0 %.
``final_takeoff``  25.121(c): en-route configuration, V_FTO, maximum continuous; 1.2, 1.5, 1.7 %.
``approach``       25.121(d): one engine out, approach flaps, gear up, at most 1.4 V_SR,
                   go-around thrust; 2.1, 2.4, 2.7 %.
``landing``        25.119: all engines, landing configuration, V_REF, the thrust 8 s after
                   advancing the throttles from flight idle; 3.2 % for any engine count."""


def part25_climb_gradient_min(segment, engine_count):
    """Minimum climb gradient [-] of a Part 25 segment (:data:`PART25_CLIMB_SEGMENTS`).

    Raises ValueError for an unknown segment or an engine count other than 2, 3 or 4.
    """
    if segment not in PART25_CLIMB_SEGMENTS:
        raise ValueError(f"unknown climb segment {segment!r}; choose one of: "
                         + ", ".join(repr(k) for k in PART25_CLIMB_SEGMENTS))
    n = int(engine_count)
    if n not in PART25_CLIMB_SEGMENTS[segment]:
        raise ValueError(f"part25 climb segments need 2 to 4 engines, got {n}")
    return PART25_CLIMB_SEGMENTS[segment][n]


def climb_gradient_available(thrust, weight, speed, wing_area, density, cd0, k,
                             cd0_increment=0.0):
    """Steady climb gradient [-]: sin(gamma) = (T - D) / W.

    D = q S (C_D0 + dC_D0) + K W^2 / (q S), the parabolic polar with the configuration's
    increments (flaps, gear, windmilling or feathered engine, trim) summed in ``cd0_increment``.

    Parameters
    ----------
    thrust : array_like
        Thrust of the working engines at ``speed`` [N].
    weight : array_like
        Weight [N].
    speed : array_like
        True airspeed [m s^-1].
    wing_area : array_like
        Reference area [m^2].
    density : array_like
        Air density [kg m^-3].
    cd0, k : array_like
        Clean zero-lift drag coefficient and induced-drag factor [-].
    cd0_increment : array_like, default 0.0
        Sum of the configuration's zero-lift drag increments [-].

    Returns
    -------
    ndarray
        sin(gamma) [-]; negative where the airplane cannot hold altitude.

    Notes
    -----
    Small-angle lift (L = W, cos(gamma) = 1): the induced drag is overstated by the factor
    1/cos^2(gamma), 0.3 % of the induced drag at a 5 % gradient. The rules' gradient is height
    over horizontal distance, tan(gamma) = sin(gamma) (1 + 0.1 %) below 5 %.

    References
    ----------
    .. [1] J. D. Anderson, "Aircraft Performance and Design", McGraw-Hill, 1999, ch. 5,
       steady climb (from memory).
    """
    w = np.asarray(weight, dtype=float)
    wing_loading = w / np.asarray(wing_area, dtype=float)
    return np.asarray(thrust, dtype=float) / w - drag_to_weight(
        speed, wing_loading, density, np.asarray(cd0, dtype=float) + cd0_increment, k)


# --- speed limit in climb -------------------------------------------------------------------

SPEED_LIMIT_BELOW_10000FT = 250.0 * 1852.0 / 3600.0
"""14 CFR 91.117(a): 250 kn indicated airspeed below 10 000 ft MSL [m s^-1] (128.61 m/s)."""
SPEED_LIMIT_ALTITUDE = 10000 * 0.3048
"""10 000 ft of 14 CFR 91.117(a) [m]."""


def limit_climb_speed(true_airspeed, pressure_altitude, delta_isa=0.0,
                      limit_calibrated_airspeed=SPEED_LIMIT_BELOW_10000FT,
                      limit_altitude=SPEED_LIMIT_ALTITUDE):
    """Climb speed [m s^-1] clipped to the speed limit below 10 000 ft (14 CFR 91.117(a)).

    Below ``limit_altitude`` the true airspeed is at most the true airspeed of
    ``limit_calibrated_airspeed`` at that altitude (:func:`atmosphere.calibrated_to_true_airspeed`,
    compressible); at and above it the speed is returned unchanged.

    Parameters
    ----------
    true_airspeed : array_like
        Climb speed wanted [m s^-1].
    pressure_altitude : array_like
        Geopotential pressure altitude, -5 to 20 km [m]; the rule's MSL altitude is taken as the
        pressure altitude (they agree on a standard day).
    delta_isa : array_like, default 0.0
        Temperature offset [K].
    limit_calibrated_airspeed : float
        Indicated airspeed limit, taken as calibrated (no instrument or position error)
        [m s^-1].
    limit_altitude : float
        Altitude below which the limit applies [m].

    Returns
    -------
    ndarray
        Clipped true airspeed [m s^-1].
    """
    h = np.asarray(pressure_altitude, dtype=float)
    v_limit = atmosphere.calibrated_to_true_airspeed(
        limit_calibrated_airspeed, atmosphere.isa_pressure(h), atmosphere.isa_density(h, delta_isa))
    v = np.asarray(true_airspeed, dtype=float)
    return np.where(h < limit_altitude, np.minimum(v, v_limit), v)


# --- best rate of climb ---------------------------------------------------------------------

_GOLDEN = 0.5 * (np.sqrt(5.0) - 1.0)


def maximise_on_bracket(f, low, high, iterations=60):
    """Maximum of a unimodal function on [low, high], by golden-section search on a batch.

    A fixed number of iterations for every element (no Python loop over elements); the
    bracket shrinks by 0.618 per iteration (60: 3e-13 of its width). ``f`` maps an array
    shaped like ``low`` to one of the same shape. A maximum at an end is approached to within
    the final bracket.

    Returns
    -------
    x_best, f_best : ndarray
        Argument of the largest value found and that value.

    References
    ----------
    .. [1] J. Kiefer, "Sequential minimax search for a maximum", Proc. Amer. Math. Soc. 4,
       1953, 502-506.
    """
    a = np.array(low, dtype=float, copy=True)
    b = np.array(high, dtype=float, copy=True)
    c = b - _GOLDEN * (b - a)
    d = a + _GOLDEN * (b - a)
    fc, fd = f(c), f(d)
    for _ in range(iterations):
        left = fc >= fd  # the maximum lies in [a, d]: new point left of d, old c becomes d
        b = np.where(left, d, b)
        a = np.where(left, a, c)
        step = _GOLDEN * (b - a)
        new = np.where(left, b - step, a + step)
        c, d = np.where(left, new, d), np.where(left, c, new)
        f_new = f(new)
        fc, fd = np.where(left, f_new, fd), np.where(left, fc, f_new)
    best = fc >= fd
    return np.where(best, c, d), np.where(best, fc, fd)


def best_rate_of_climb(thrust_at, weight, wing_loading, density, cd0, k, v_low, v_high,
                       iterations=60):
    """Best steady rate of climb [m s^-1] and its speed, maximising the specific excess power.

    ROC(V) = V (T(V) - D(V)) / W, D/W of :func:`drag_to_weight` (small angle), maximised over
    [v_low, v_high] by :func:`maximise_on_bracket` under the caller's thrust model (propeller
    blend of :func:`propulsion.propeller_thrust`, turbofan lapse, one engine out: pass the
    working engines' thrust).

    Parameters
    ----------
    thrust_at : callable
        ``thrust_at(V)`` total thrust [N] for an array of speeds shaped like ``v_low``.
    weight : array_like
        Weight [N].
    wing_loading : array_like
        W/S [N m^-2].
    density : array_like
        Air density [kg m^-3].
    cd0, k : array_like
        Zero-lift drag (with the configuration's increments) and induced-drag factor [-].
    v_low, v_high : array_like
        Speed bracket [m s^-1]: e.g. the minimum climb speed (1.2 V_s) and a speed beyond
        the best, e.g. the highest level speed or 3 V_md.
    iterations : int
        Golden-section iterations.

    Returns
    -------
    rate : ndarray
        Best rate of climb [m s^-1] (negative above the absolute ceiling).
    speed : ndarray
        True airspeed of the best rate [m s^-1].

    Notes
    -----
    The excess power of a parabolic polar with a thrust that does not rise with speed is
    unimodal on the bracket, as golden-section search needs. For constant thrust the result
    is Anderson's closed form (:func:`best_climb_speed_constant_thrust`); for constant power
    (thrust eta P / V) the minimum-power speed (:func:`minimum_power_speed`).
    """
    w = np.asarray(weight, dtype=float)

    def rate(v):
        return v * (thrust_at(v) / w - drag_to_weight(v, wing_loading, density, cd0, k))

    low, high, _ = np.broadcast_arrays(np.asarray(v_low, dtype=float),
                                       np.asarray(v_high, dtype=float), w)
    v_best, roc = maximise_on_bracket(rate, low, high, iterations)
    return roc, v_best


def best_climb_speed_constant_thrust(thrust_to_weight, wing_loading, density, cd0, k):
    """Speed of the best rate of climb [m s^-1] under constant thrust (jets).

    V = {(W/S) / (3 rho C_D0) [T/W + sqrt((T/W)^2 + 12 C_D0 K)]}^(1/2).

    References
    ----------
    .. [1] J. D. Anderson, "Aircraft Performance and Design", McGraw-Hill, 1999, ch. 5,
       maximum rate of climb of a jet (from memory).
    """
    tw = np.asarray(thrust_to_weight, dtype=float)
    return np.sqrt(wing_loading / (3.0 * density * cd0) * (tw + np.sqrt(tw**2 + 12.0 * cd0 * k)))


def minimum_power_speed(wing_loading, density, cd0, k):
    """Speed of minimum power required [m s^-1], C_L = sqrt(3 C_D0 / K): the best-climb speed
    under constant power (thrust eta P / V).

    V = sqrt(2 (W/S) / (rho sqrt(3 C_D0 / K))) (Anderson, APD 1999, ch. 5, from memory).
    """
    return np.sqrt(2.0 * np.asarray(wing_loading, dtype=float) / (density * np.sqrt(3.0 * cd0 / k)))


AERODROME_CODE_SPANS_M = (15.0, 24.0, 36.0, 52.0, 65.0, 80.0)
"""Upper span limits [m] ("up to but not including") of the aerodrome reference code
letters A to F, ICAO Annex 14, Vol. I, Table 1-1 (code element 2, wingspan)."""

AERODROME_CODE_LETTERS = ("A", "B", "C", "D", "E", "F")
"""The code letters of :data:`AERODROME_CODE_SPANS_M`, in the same order."""


def aerodrome_code_letter(span_m):
    """Aerodrome reference code letter of a wing span (ICAO Annex 14, Vol. I, Table 1-1).

    Parameters
    ----------
    span_m : array_like
        Wing span [m], >= 0.

    Returns
    -------
    ndarray of str
        ``"A"`` for a span below 15 m, ``"B"`` from 15 m up to but not including 24 m, and so
        on to ``"F"`` below 80 m; a span of 80 m or more (or not a number) falls in no code
        letter of the table and gets ``""`` (this tool's convention: the table stops at F).
        Exactly 15 m is code B: each row reads "up to but not including".
    """
    span = np.asarray(span_m, dtype=float)
    index = np.searchsorted(np.asarray(AERODROME_CODE_SPANS_M), span, side="right")
    letters = np.asarray(AERODROME_CODE_LETTERS + ("",), dtype=object)
    index = np.where(np.isfinite(span), index, len(AERODROME_CODE_LETTERS))
    return letters[index]
