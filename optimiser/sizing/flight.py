"""Climb and cruise of an airplane: climb rate and gradients, service ceiling, highest level
speed at cruise altitude."""

from __future__ import annotations

import functools
from dataclasses import dataclass

import numpy as np

from ..physics import aerodynamics as aero
from ..physics import atmosphere as atm
from ..physics import performance, propulsion
from ..solvers import newton_falling_root, root_after_prediction
from ..spec import AircraftSpec
from .aero import AirStates, isa_state
from .airplane import Airplane
from .engines import engines_at
from .inputs import at


def oei_climb_gradient(spec: AircraftSpec, ap: Airplane, air: AirStates) -> np.ndarray:
    """One-engine-inoperative climb gradient at the certification basis' condition.

    Parameters
    ----------
    spec : AircraftSpec
        Resolved study: engine count, basis (Part 25 second segment: departure airfield,
        takeoff flaps, V2; Part 23: cruise configuration at the stated altitude [m],
        max-continuous power [-]), climb speed factor [-], engine-out drag [-].
    ap : Airplane
        The airplane at takeoff mass.
    air : AirStates
        Departure density [kg m^-3], temperature [K], pressure [Pa].

    Returns
    -------
    ndarray
        Climb gradient sin(gamma) [-]; 0 for a single-engine airplane.

    References
    ----------
    .. [1] 14 CFR 25.121 and 23.2120 (the climb conditions; via
       :func:`optimiser.physics.performance.certification_numbers`).
    """
    pr, ad, cert, sp = spec.propulsion, spec.aerodynamics, spec.certification, spec.speeds
    ws_c = ap.wing_loading_N_m2
    if pr.engine_count <= 1:
        return np.zeros_like(ws_c)
    if cert.oei_flaps_takeoff:
        rho, t, p = air.density_takeoff_kg_m3, air.temperature_takeoff_K, air.pressure_takeoff_Pa
        cl_max, cd0_oei, setting = ap.high_lift.cl_max_takeoff, ap.polar.cd0_takeoff_flaps, 1.0
    else:
        rho, t, p, _ = isa_state(cert.oei_climb_altitude_m)
        cl_max = np.full_like(ws_c, ad.cl_max_clean)
        cd0_oei = np.full_like(ws_c, ap.drag.cd0)
        setting = pr.climb_power_fraction
    eng = engines_at(spec, ap.engines, rho, t, p, setting, pr.engine_count - 1)
    v2 = sp.climb_speed_factor * performance.stall_speed(ws_c, rho, cl_max)
    return eng.thrust(v2, ap.engines.propeller_efficiency_climb) / ap.weight_N \
        - performance.drag_to_weight(v2, ws_c, rho, cd0_oei + ad.engine_out_drag_increment,
                                     ap.polar.induced_drag_factor)


def best_climb(spec: AircraftSpec, ap: Airplane, h, dt, ix=slice(None), iterations=16,
               bound=False, speed_over_floor=None):
    """Best all-engines rate of climb (clean, gear up, climb power) of designs ``ix``.

    The speed of the best rate maximises V (T(V) - D(V)) / W under the model's own thrust
    (propeller blend of static and eta P / V thrust, turbofan lapse with Mach) and drag, with
    the Oswald factor at the flight Mach of each speed (:func:`_induced_drag_factor_at_mach`).

    Propellers, in closed form where it is exact: above the blend speed V1 the thrust is
    eta P / V, so the rate is eta P / W - V D(V) / W, concave, largest at the minimum-power
    speed v0 (Anderson's closed form); below V1 the blended thrust gives a rate that is
    concave too, with its stationary point from a quadratic (:func:`_best_blend_speed`), and
    the two pieces meet with equal value and slope. So the rate is concave in V: its one
    maximum v* is v0 where v0 >= V1 and the blend's point otherwise, and max(v*, v_floor)
    is the best speed above the floor. This holds at constant K; K with a Mach term only
    grows with Mach, so v* stays the best where its Mach has no term (M <= 0.3 for Nita &
    Scholz). Elsewhere, and for turbofans, golden-section search
    (:func:`optimiser.physics.performance.maximise_on_bracket`, which needs only
    unimodality: the turbofan lapse has a kink in Mach that parabolic steps miss) on a
    bracket around v0 (minimum-power speed for propellers, the constant-thrust best speed
    for jets): [max(v_floor, 0.7 v0), 2 v0], v_floor the climb speed factor times the clean
    stall speed, the top not above the Oswald method's upper Mach. 16 iterations leave
    0.0005 of the bracket (0.15 m/s at v0 = 200 m/s); against a grid of 1500 speeds the rate
    agrees to 0.02 m/s, and to 0.05 m/s with the ceiling search's 10 iterations (tested).
    Where the study applies the airspace speed limit (``[speeds] climb_speed_limit``), the
    speed below 10 000 ft is then held to 250 kn indicated (14 CFR 91.117(a)).

    Parameters
    ----------
    spec : AircraftSpec
        Resolved study: climb power fraction [-], climb speed factor [-], clean CLmax [-],
        Oswald method, speed limit flag.
    ap : Airplane
        The airplane (its weight is the climb weight).
    h, dt : ndarray or float
        Pressure altitude [m] and ISA temperature offset [K], one per element of ``ix``.
    ix : index array or slice, default all
        Designs. [-]
    iterations : int
        Golden-section iterations [-]; the ceiling search takes 10.
    bound : bool, default False
        Propellers only: no search; where the closed form is not exact (the Mach term), the
        rate is the closed form's at K of the reference Mach, an upper bound of the best
        rate (K only grows with Mach). For a bracket's sign where the bound falls short of
        a target. Ignored for turbofans.
    speed_over_floor : ndarray, optional
        No search: the rate at these multiples of the floor speed [-] (one per element, at
        least 1), held to the speed limit as the best speed is. At the best speed's multiple
        found at a nearby altitude this is the best rate to second order in the altitude
        step (the rate is stationary in the speed there, or the speed stays on the floor),
        which the ceiling's slope uses.

    Returns
    -------
    (ndarray, ndarray)
        Rate of climb [m s^-1] and the true airspeed flown [m s^-1] (not below the climb speed
        factor times the clean stall speed; within the speed limit where it applies).
        With ``bound`` for a propeller, a third: True where the rate is only the bound.

    References
    ----------
    .. [1] J. D. Anderson, "Aircraft Performance and Design", McGraw-Hill, 1999, ch. 5
       (closed-form best-climb speeds: the exact answer for constant power, the starting
       guesses elsewhere).
    .. [2] 14 CFR 91.117(a) (250 kn below 10 000 ft MSL).
    """
    pr, sp = spec.propulsion, spec.speeds
    rho, p_h, t_h = atm._density_unchecked(h, dt)
    ws_i, w_i, k_i = ap.wing_loading_N_m2[ix], ap.weight_N[ix], ap.polar.induced_drag_factor[ix]
    cd0_h = at(ap.drag.cd0, ix)
    eta = at(ap.engines.propeller_efficiency_climb, ix)
    eng = engines_at(spec, ap.engines, rho, t_h, p_h, pr.climb_power_fraction, ix=ix)
    v_floor = _climb_speed_floor(spec, ws_i, rho)
    sound = atm.speed_of_sound(t_h) * np.ones_like(ws_i)
    thrust = eng.thrust_at(eta)  # the speed-independent part once, not per golden step
    if speed_over_floor is not None:
        v = np.maximum(speed_over_floor, 1.0) * v_floor
        if sp.climb_speed_limit:
            v = performance.limit_climb_speed(v, h, dt)
        k_m = _induced_drag_factor_at_mach(spec, k_i, v / sound)
        return v * (thrust(v) / w_i - performance.drag_to_weight(v, ws_i, rho, cd0_h, k_m)), v
    if pr.family == "turbofan":
        tw_h = eng.thrust(np.full_like(ws_i, 100.0), 1.0) / w_i
        v0 = performance.best_climb_speed_constant_thrust(tw_h, ws_i, rho, cd0_h, k_i)
        v, searched = np.empty_like(ws_i), None  # every design searched
    else:
        v0 = performance.minimum_power_speed(ws_i, rho, cd0_h, k_i)
        v = np.maximum(np.where(v0 >= thrust.v1, v0, _best_blend_speed(thrust, w_i, ws_i, rho,
                                                                       cd0_h, k_i)), v_floor)
        no_mach_term = (spec.aerodynamics.oswald_method == "obert2009") | (v / sound <= 0.3)
        if bound:
            if sp.climb_speed_limit:
                v = performance.limit_climb_speed(v, h, dt)
            return v * (thrust(v) / w_i - performance.drag_to_weight(v, ws_i, rho, cd0_h,
                                                                      k_i)), v, ~no_mach_term
        searched = np.flatnonzero(~no_mach_term)  # where the closed form does not hold
    if searched is None or searched.size:
        per_design = [np.broadcast_to(x, ws_i.shape)
                      for x in (ws_i, w_i, k_i, cd0_h, rho, sound, v_floor, v0)]
        if searched is None or searched.size == v.size:
            v = _golden_climb_speed(spec, thrust, *per_design, iterations)
        else:
            v[searched] = _golden_climb_speed(spec, thrust.take(searched),
                                              *(x[searched] for x in per_design), iterations)
    if sp.climb_speed_limit:
        v = performance.limit_climb_speed(v, h, dt)
    k_m = _induced_drag_factor_at_mach(spec, k_i, v / sound)
    return v * (thrust(v) / w_i - performance.drag_to_weight(v, ws_i, rho, cd0_h, k_m)), v


def _climb_speed_floor(spec: AircraftSpec, wing_loading_N_m2, density_kg_m3):
    """Least climb speed [m s^-1]: the climb speed factor [-] times the clean stall speed."""
    return spec.speeds.climb_speed_factor * performance.stall_speed(
        wing_loading_N_m2, density_kg_m3, spec.aerodynamics.cl_max_clean)


def _best_blend_speed(thrust, w, ws, rho, cd0, k):
    """Speed [m s^-1] of the largest V (T(V) - D(V)) / W under the propeller's blended thrust
    T = T0 (1 - V^2 / (3 V1^2)) (:class:`~optimiser.physics.propulsion.PropellerThrustCurve`)
    and a parabolic polar at constant K: V D / W = a V^3 + b / V, a = rho C_D0 / (2 W/S),
    b = 2 K (W/S) / rho, so the rate is concave in V and its one stationary point solves
    3 (c + a) u^2 - (T0 / W) u - b = 0 in u = V^2, c = T0 / (3 V1^2 W) (derived; the positive
    root). Meaningful where it is below V1 (where the minimum-power speed is too)."""
    t0_w = thrust.t0 / w
    c_a = 3.0 * (thrust.t0 / (thrust.blend_scale * w) + 0.5 * rho * cd0 / ws)
    b = 2.0 * k * ws / rho
    return np.sqrt((t0_w + np.sqrt(t0_w * t0_w + 4.0 * c_a * b)) / (2.0 * c_a))


def _golden_climb_speed(spec, thrust, ws_i, w_i, k_i, cd0_h, rho, sound, v_floor, v0,
                        iterations):
    """Speed of the best climb [m s^-1] by golden-section search on [max(v_floor, 0.7 v0),
    min(2 v0, upper Mach)] (see :func:`best_climb`); ``thrust(v)`` [N], the rest per design
    (SI)."""
    mach_hi = aero.OSWALD_MACH_RANGE[spec.aerodynamics.oswald_method][1]
    v_low = np.maximum(v_floor, 0.7 * v0)
    v_high = np.maximum(np.minimum(2.0 * v0, mach_hi * sound), v_low)
    if _induced_drag_factor_at_mach(spec, k_i, v_high / sound) is k_i:
        # no speed of the bracket (nor the speed limit's, lower) reaches the Mach term: K is
        # K at the reference Mach throughout, and the drag's speed-independent part is
        # computed once (values bit for bit as below)
        drag = performance.DragToWeightCurve(ws_i, rho, cd0_h, k_i)

        def rate(v):
            """Rate of climb [m s^-1] at true airspeeds ``v`` [m s^-1], one per design."""
            return v * (thrust(v) / w_i - drag(v))
    else:
        def rate(v):
            """Rate of climb [m s^-1] at true airspeeds ``v`` [m s^-1], one per design."""
            k_m = _induced_drag_factor_at_mach(spec, k_i, v / sound)
            return v * (thrust(v) / w_i - performance.drag_to_weight(v, ws_i, rho, cd0_h,
                                                                      k_m))

    return performance.maximise_on_bracket(rate, v_low, v_high, iterations)[0]


def _induced_drag_factor_at_mach(spec: AircraftSpec, k_ref, mach, mach_ref=0.2):
    """Induced-drag factor K [-] at flight Mach ``mach`` [-] from K at ``mach_ref`` [-].

    e(M) = e(M_ref) k_M(M) / k_M(M_ref), k_M of :func:`optimiser.physics.aerodynamics.
    oswald_mach_factor` (Nita & Scholz 2012; 1 for Obert's method), so K(M) = K_ref
    k_M(M_ref) / k_M(M). Above the method's Mach range
    (:data:`optimiser.physics.aerodynamics.OSWALD_MACH_RANGE`) the factor is held at the
    range's upper end, not extrapolated: the searches keep their speeds inside the range and
    the caller flags answers outside it (``oswald_mach_in_range``).
    """
    method = spec.aerodynamics.oswald_method
    if method == "obert2009" or np.max(np.maximum(mach, mach_ref), initial=0.0) <= 0.3:
        return k_ref  # no Mach term (Obert), or below M 0.3 (Nita & Scholz)
    m_hi = aero.OSWALD_MACH_RANGE[method][1]
    mach = np.asarray(mach, dtype=float)
    ref = aero.oswald_mach_factor(method, np.minimum(mach_ref, m_hi))  # per design with
    ref = float(ref) if np.ndim(ref) == 0 else ref  # the cruise altitude as a variable
    k = np.broadcast_to(k_ref * ref, mach.shape).copy()
    high = mach > 0.3  # the factor is 1 at and below M 0.3: evaluate it only above
    k[high] /= aero.oswald_mach_factor(method, np.minimum(mach[high], m_hi))
    return k


@dataclass(frozen=True, slots=True)
class Climb:
    """All-engines climb numbers."""

    climb_speed_m_s: np.ndarray  # of the best climb at the departure airfield
    climb_rate_m_s: np.ndarray  # best, at the departure airfield, clean
    climb_gradient: np.ndarray  # regulatory all-engines gradient, takeoff flaps, gear up [-]
    service_ceiling_m: np.ndarray  # best climb rate 100 ft/min, at takeoff mass
    ceiling_mach_in_range: np.ndarray  # the climb speed floor at the ceiling is inside the
    # Oswald method's Mach range (else the ceiling rests on e held at the range's top)


CEILING_SLOPE_STEP_M = -10.0
"""Altitude step of the climb rate's slope in the ceiling's Newton steps [m] (downwards, so
that no step leaves the top of the model's atmosphere)."""


def _ceiling_residual(spec, ap, dt, target, h, ix):
    return best_climb(spec, ap, h, dt, ix, iterations=10)[0] - target


def _ceiling_residual_and_slope(spec, ap, dt, target, h, ix):
    """Best rate minus the target [m s^-1] at altitudes ``h`` [m], and its slope over
    altitude [s^-1]: the rate one step away at the best speed found at ``h`` (the envelope
    theorem: the best rate's altitude derivative is the rate's at a fixed best speed, or on
    the floor where the speed rests on it; the speed is carried as its multiple of the floor
    speed, which covers both), so the slope costs no second search."""
    rate, v = best_climb(spec, ap, h, dt, ix, iterations=10)
    v_floor = _climb_speed_floor(spec, ap.wing_loading_N_m2[ix],
                                 atm._density_unchecked(h, dt)[0])
    dh = CEILING_SLOPE_STEP_M
    rate_step = best_climb(spec, ap, h + dh, dt, ix, speed_over_floor=v / v_floor)[0]
    return rate - target, (rate_step - rate) / dh


def climb_and_ceiling(spec: AircraftSpec, ap: Airplane, air: AirStates | None = None) -> Climb:
    """Best climb rate at the departure airfield, the regulatory gradient and the ceiling.

    The best climb at the departure airfield and the rate at the required ceiling are
    found in one call; the service ceiling is bracketed by that rate and, in a second call,
    the rate at sea level where it is short of the target or at the model's top altitude
    where it is not (for propellers first as an upper bound without a search, see
    :func:`best_climb`), and solved in that half of the range to 1 m by Newton steps
    whose slope is the rate 10 m lower at the best speed found (no second search), regula
    falsi taking what two steps leave (:func:`optimiser.solvers.newton_falling_root`). A
    design short of the target at sea level has ceiling 0, one above it at the top
    altitude the top.

    Parameters
    ----------
    spec : AircraftSpec
        Resolved study: departure elevation [m] and offset [K], cruise offset [K] (used for
        the ceiling), required ceiling [m], basis' all-engines climb altitude [m].
    ap : Airplane
        The airplane at takeoff mass.
    air : AirStates, optional
        The departure's temperature offset [K], one per design where sampled (default the
        study's).

    Returns
    -------
    Climb
        Climb speed [m s^-1], climb rate [m s^-1], gradient [-], service ceiling [m].

    References
    ----------
    .. [1] 14 CFR 23.2120 (all-engines gradient) and the 100 ft/min service ceiling
       (common definition); root by :func:`optimiser.solvers.newton_falling_root`.
    """
    dep, ad, sp, pr = spec.departure, spec.aerodynamics, spec.speeds, spec.propulsion
    dt_cr = spec.mission.cruise_temperature_offset_K
    ws_c = ap.wing_loading_N_m2
    n = ws_c.size
    h_req = min(max(spec.requirements.service_ceiling_m, 1.0), atm.H_MAX - 1.0)
    target = performance.SERVICE_CEILING_CLIMB_RATE
    # one call for the departure's best climb and the rate at the required ceiling (the
    # ceiling's first bracket end); then the rate at sea level where that rate is short of
    # the target (the ceiling lies below) and at the model's top altitude where it is not
    dt_dep = np.broadcast_to(dep.temperature_offset_K if air is None
                             else air.departure_temperature_offset_K, (n,))
    rate2, speed2 = best_climb(spec, ap, np.repeat([dep.elevation_m, h_req], n),
                               np.concatenate([dt_dep, np.full(n, dt_cr)]),
                               np.tile(np.arange(n), 2))
    roc_dep, v_dep, f_req = rate2[:n], speed2[:n], rate2[n:] - target
    above = f_req >= 0.0
    h_end = np.where(above, atm.H_MAX, 0.0)
    if pr.family == "turbofan":
        f_end = best_climb(spec, ap, h_end, np.full(n, dt_cr), iterations=10)[0] - target
        exact = np.arange(0)
    else:
        # a propeller's end value where the closed form is not exact is first an upper
        # bound (no search): where it is short of the target it gives the bracket's sign and
        # serves as the regula falsi's weight; the rate is searched where it reaches it
        roc_end, _, only_bound = best_climb(spec, ap, h_end, np.full(n, dt_cr), bound=True)
        f_end = roc_end - target
        exact = np.flatnonzero(only_bound & (f_end >= 0.0))
    if exact.size:
        f_end[exact] = best_climb(spec, ap, h_end[exact], np.full(exact.size, dt_cr), exact,
                                  iterations=10)[0] - target

    rho_aeo, t_aeo, p_aeo, _ = isa_state(spec.certification.aeo_climb_altitude_m)
    eng_aeo = engines_at(spec, ap.engines, rho_aeo, t_aeo, p_aeo, pr.climb_power_fraction)
    v_aeo = sp.climb_speed_factor * performance.stall_speed(ws_c, rho_aeo,
                                                            ap.high_lift.cl_max_takeoff)
    climb_gradient = eng_aeo.thrust(v_aeo, ap.engines.propeller_efficiency_climb) \
        / ap.weight_N - performance.drag_to_weight(v_aeo, ws_c, rho_aeo,
                                                   ap.polar.cd0_takeoff_flaps,
                                                   ap.polar.induced_drag_factor)

    f_low, f_high = np.where(above, f_req, f_end), np.where(above, f_end, f_req)
    ceiling = newton_falling_root(
        functools.partial(_ceiling_residual, spec, ap, dt_cr, target),
        functools.partial(_ceiling_residual_and_slope, spec, ap, dt_cr, target),
        np.where(above, h_req, 0.0), np.where(above, atm.H_MAX, h_req), f_low, f_high,
        (f_low >= 0.0) & (f_high < 0.0), xtol=1.0)
    ceiling = np.where(above, np.where(f_end >= 0.0, atm.H_MAX, ceiling),
                       np.where(f_end < 0.0, 0.0, ceiling))
    rho_c, _, t_c = atm._density_unchecked(ceiling, dt_cr)
    v_floor_c = _climb_speed_floor(spec, ws_c, rho_c)
    in_range = aero.oswald_mach_valid(ad.oswald_method, v_floor_c / atm.speed_of_sound(t_c))
    return Climb(v_dep, roc_dep, climb_gradient, ceiling, in_range)


@dataclass(frozen=True, slots=True)
class CruiseSpeed:
    """Highest level speed at cruise altitude and cruise setting."""

    speed_m_s: np.ndarray  # 0 where the airplane cannot fly level there
    mach: np.ndarray  # [-]
    at_mach_cap: np.ndarray  # the speed is the cap (0.98 or the Oswald method's top Mach)


class _LevelFlight:
    """Thrust minus drag over weight in level flight at cruise altitude, for designs ``ix``."""

    __slots__ = ("spec", "air", "engines", "weight", "wing_loading", "k", "cd0", "eta")

    def __init__(self, spec, air, engines, weight, wing_loading, k, cd0, eta):
        self.spec, self.air, self.engines = spec, air, engines
        self.weight, self.wing_loading, self.k, self.cd0, self.eta = (weight, wing_loading, k,
                                                                      cd0, eta)

    def excess(self, v, ix=slice(None)):
        """(T - D) / W [-] at true airspeed ``v`` [m s^-1], Lock's wave drag included, the
        Oswald factor at the Mach of ``v`` (``k`` is K at the cruise Mach)."""
        pr, ad, eng = self.spec.propulsion, self.spec.aerodynamics, self.engines
        air = self.air.take(ix)  # per-design cruise states with the cruise altitude
        mach = v / air.sound_speed_cruise_m_s
        k_m = _induced_drag_factor_at_mach(self.spec, self.k[ix], mach, air.cruise_mach)
        d_w = performance.drag_to_weight(
            v, self.wing_loading[ix], air.density_cruise_kg_m3,
            at(self.cd0, ix) + aero.wave_drag_lock(mach, ad.drag_divergence_mach), k_m)
        if pr.family == "turbofan":
            thrust = eng.thrust_sl[ix] * propulsion.turbofan_thrust_lapse_mattingly(
                air.temperature_cruise_K, air.pressure_cruise_Pa, mach,
                pr.turbofan_throttle_ratio)
        else:
            thrust = propulsion.propeller_thrust(v, eng.power[ix], at(self.eta, ix),
                                                 eng.static[ix])
        return thrust / self.weight[ix] - d_w


def cruise_speed(spec: AircraftSpec, ap: Airplane, air: AirStates, propeller_efficiency,
                 cruise_weight_N, induced_drag_factor) -> CruiseSpeed:
    """Highest level speed at cruise altitude and the cruise power or thrust setting.

    A prediction of the root (Newton, below), then two evaluations 0.8 of the tolerance
    apart around it narrow the bracket (to within the tolerance when the prediction holds,
    as it does without wave drag and above the propeller's blend speed): the root solve then
    has little or nothing left to do.

    Parameters
    ----------
    spec : AircraftSpec
        Resolved study: cruise power fraction [-], clean CLmax [-], drag-divergence Mach [-].
    ap : Airplane
        The airplane (engines, clean CD0).
    air : AirStates
        Cruise density [kg m^-3], temperature [K], pressure [Pa], speed of sound [m s^-1].
    propeller_efficiency : ndarray or float
        Cruise propeller efficiency (1 for a turbofan). [-]
    cruise_weight_N : ndarray
        Weight at which the speed is checked (start of cruise). [N]
    induced_drag_factor : ndarray
        Cruise K = 1 / (pi A e). [-]

    Returns
    -------
    CruiseSpeed
        Highest level speed [m s^-1] (0 where thrust is short of drag at every speed), its
        Mach number [-], and where it is held at the search's top Mach (0.98, or the Oswald
        method's upper Mach: thrust still exceeds drag there, the method cannot say more).

    References
    ----------
    .. [1] J. D. Anderson, "Aircraft Performance and Design", McGraw-Hill, 1999, ch. 5
       (maximum level speed); root by :func:`optimiser.solvers.root_after_prediction`.
    """
    rho_cr, a_cr = air.density_cruise_kg_m3, air.sound_speed_cruise_m_s
    cd0, k_cr, w_cr = ap.drag.cd0, induced_drag_factor, cruise_weight_N
    eng_cr = engines_at(spec, ap.engines, rho_cr, air.temperature_cruise_K,
                        air.pressure_cruise_Pa, spec.propulsion.cruise_power_fraction)
    ws_cr = w_cr / ap.wing_area_m2
    flight = _LevelFlight(spec, air, eng_cr, w_cr, ws_cr, k_cr, cd0, propeller_efficiency)
    n = ws_cr.size
    v_md = np.sqrt(2.0 * ws_cr / (rho_cr * np.sqrt(cd0 / k_cr)))
    v_low_alt = 1.1 * performance.stall_speed(ws_cr, rho_cr, spec.aerodynamics.cl_max_clean)
    f_two = flight.excess(np.concatenate([v_md, v_low_alt]), np.concatenate([np.arange(n)] * 2))
    f_md, f_low_alt = f_two[:n], f_two[n:]
    can_fly = (f_md >= 0.0) | (f_low_alt >= 0.0)
    v_start = np.where(f_md >= 0.0, v_md, v_low_alt)
    f_start = np.where(f_md >= 0.0, f_md, f_low_alt)
    # drag without wave drag: D/W = a_d V^2 + b_d / V^2
    a_d = 0.5 * rho_cr * cd0 / ws_cr
    b_d = 2.0 * k_cr * ws_cr / rho_cr
    if spec.propulsion.family == "turbofan":
        t_max = eng_cr.thrust(np.full_like(ap.wing_loading_N_m2, 1.0), 1.0) / w_cr
        v_free = np.sqrt(t_max / a_d)  # the speed with thrust = zero-lift drag
    else:
        t_max = propeller_efficiency * eng_cr.power / w_cr  # [W/N]: thrust x speed per weight
        v_free = (t_max / a_d) ** (1.0 / 3.0)
    mach_top = min(0.98, aero.OSWALD_MACH_RANGE[spec.aerodynamics.oswald_method][1])
    v_hi = np.maximum(np.minimum(v_free * 1.05, mach_top * a_cr), v_start * 1.0001)
    f_hi = flight.excess(v_hi)
    v_pred = _level_speed_prediction(flight, v_free, v_start, v_hi, a_d, b_d, t_max)
    solve = can_fly & (f_hi < 0.0)
    v_max = root_after_prediction(flight.excess, v_pred, v_start, v_hi, f_start, f_hi, solve,
                                  xtol=1e-3)
    v_max = np.where(can_fly, np.where(f_hi >= 0.0, v_hi, v_max), 0.0)
    capped = can_fly & (f_hi >= 0.0) & (v_hi >= mach_top * a_cr * (1.0 - 1e-12))
    return CruiseSpeed(v_max, v_max / a_cr, capped)


def _level_speed_prediction(flight, v_free, v_start, v_hi, a_d, b_d, t_max):
    """Predicted highest level speed [m s^-1], inside ``[v_start, v_hi]``.

    Propellers: largest root of a_d V^4 - (eta P / W) V + b_d by Newton from ``v_free``
    (convex, so it falls monotonically onto it). Jets: Newton on drag - thrust with Lock's
    wave drag, derivatives analytic for the drag and by a difference for the thrust, from the
    lower of ``v_free`` and the drag-divergence speed (above it the fourth power slows Newton).
    """
    spec, air, eng_cr = flight.spec, flight.air, flight.engines
    rho_cr, a_cr = air.density_cruise_kg_m3, air.sound_speed_cruise_m_s
    cd0, ws_cr, k_cr, w_cr = flight.cd0, flight.wing_loading, flight.k, flight.weight
    m_dd = spec.aerodynamics.drag_divergence_mach
    v = v_free
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        if spec.propulsion.family == "turbofan":
            v = np.clip(np.minimum(v, m_dd * a_cr), v_start, v_hi)
            for _ in range(5):
                cdw, dcdw_dm = aero.wave_drag_lock_and_slope(v / a_cr, m_dd)
                cd = cd0 + cdw
                q = 0.5 * rho_cr * v * v
                t_w = eng_cr.thrust(v, 1.0) / w_cr
                g = performance.drag_to_weight(v, ws_cr, rho_cr, cd, k_cr) - t_w
                dg = (rho_cr * v * cd / ws_cr + q * dcdw_dm / (a_cr * ws_cr)
                      - 2.0 * k_cr * ws_cr / (q * v)
                      - (eng_cr.thrust(v * (1.0 + 1e-6), 1.0) / w_cr - t_w) / (1e-6 * v))
                v = np.clip(v - g / dg, v_start, v_hi)
        else:
            for _ in range(6):
                v = v - (a_d * v**4 - t_max * v + b_d) / (4.0 * a_d * v**3 - t_max)
    return np.clip(np.nan_to_num(v, nan=0.0), v_start, v_hi)


def aeo_climb_gradient_required(spec: AircraftSpec, ap: Airplane) -> np.ndarray:
    """All-engines climb gradient the basis requires of each design, from its own mass.

    Parameters
    ----------
    spec : AircraftSpec
        Resolved study: basis, engine family.
    ap : Airplane
        The airplane at takeoff mass [kg].

    Returns
    -------
    ndarray
        Minimum gradient [-]: Part 23 8.3 % (reciprocating, 6000 lb or less) or 4 % (heavier
        or turbine); 0 under Part 25 (its segments are separate constraints).

    References
    ----------
    .. [1] 14 CFR 23.65(a), (b) before Amdt 23-64, via
       :func:`optimiser.physics.performance.part23_aeo_climb_gradient_min`.
    """
    if spec.certification.basis != "part23":
        return np.zeros_like(ap.mass_kg)
    return performance.part23_aeo_climb_gradient_min(ap.mass_kg, spec.propulsion.family)


APPROACH_CLIMB_SPEED_FACTOR = 1.5
"""Approach climb speed over the stall speed in the approach configuration [-]: 1.5 V_S, the
upper limit of 14 CFR 25.121(d) before Amdt 25-108 (1.4 V_SR after it; from memory)."""
LANDING_CLIMB_SPEED_FACTOR = 1.3
"""Landing climb speed over the landing stall speed, V_REF = 1.3 V_S [-] (14 CFR 25.119(b)
before Amdt 25-108; 1.23 V_SR0 after it; from memory)."""
FINAL_TAKEOFF_HEIGHT_M = 1500 * 0.3048
"""Height above the departure airfield where the final takeoff segment is checked: the end of
the takeoff path, 1500 ft, 14 CFR 25.111(a) (from memory) [m]."""


@dataclass(frozen=True, slots=True)
class TransportClimb:
    """Part 25 climb gradients other than the second segment [-] (sin gamma)."""

    first_segment: np.ndarray  # 25.121(a)
    final_takeoff: np.ndarray  # 25.121(c)
    approach: np.ndarray  # 25.121(d)
    landing: np.ndarray  # 25.119


def transport_climb_segments(spec: AircraftSpec, ap: Airplane, air: AirStates,
                             liftoff_speed_m_s) -> TransportClimb:
    """Climb gradients of the Part 25 segments checked beside the second segment.

    Configurations (the thrust of the working engines from :func:`engines_at`; drag from
    :func:`optimiser.physics.performance.climb_gradient_available`, out of ground effect):

    - first segment, 25.121(a): departure airfield, V_LOF, takeoff flaps, gear down, one
      engine out (engine-out drag), takeoff rating, takeoff mass;
    - final takeoff, 25.121(c): departure elevation + 1500 ft (departure offset), clean (en-
      route configuration), climb (max-continuous) setting, one engine out, at the study's
      ``climb_speed_factor`` x the clean stall speed there, takeoff mass;
    - approach climb, 25.121(d): destination airfield, the takeoff flap increments as the
      approach setting (the catalogue has takeoff and landing settings only), gear up, one
      engine out, takeoff (go-around) rating, 1.5 V_S of that configuration, landing mass;
    - landing climb, 25.119: destination airfield, all engines, landing flaps and gear down,
      1.3 V_S landing (V_REF), landing mass; the thrust 8 s after advancing the throttles from
      flight idle is taken as the takeoff rating (a simplification: it overstates the
      thrust of engines that spool up slowly).

    Parameters
    ----------
    spec : AircraftSpec
        Resolved study: engine count, climb power fraction [-], climb speed factor [-],
        engine-out drag [-], landing mass ratio [-], departure and destination airfields.
    ap : Airplane
        The airplane at takeoff mass.
    air : AirStates
        Departure and destination density [kg m^-3], temperature [K], pressure [Pa].
    liftoff_speed_m_s : ndarray
        V_LOF of the all-engines takeoff (TAS). [m s^-1]

    Returns
    -------
    TransportClimb
        The four gradients [-]; zeros for a single-engine airplane.

    References
    ----------
    .. [1] 14 CFR 25.111(a), 25.119, 25.121(a), (c), (d) (conditions from memory; gradients in
       :data:`optimiser.physics.performance.PART25_CLIMB_SEGMENTS`).
    """
    pr, ad, sp, dep = spec.propulsion, spec.aerodynamics, spec.speeds, spec.departure
    ws_c, w, s_ref = ap.wing_loading_N_m2, ap.weight_N, ap.wing_area_m2
    k, eta, hl, polar = (ap.polar.induced_drag_factor, ap.engines.propeller_efficiency_climb,
                         ap.high_lift, ap.polar)
    if pr.engine_count <= 1:
        zero = np.zeros_like(ws_c)
        return TransportClimb(zero, zero, zero, zero)
    n_out = pr.engine_count - 1
    d_oei = ad.engine_out_drag_increment

    def gradient(rho, t, p, setting, working, v, weight, cd0):
        eng = engines_at(spec, ap.engines, rho, t, p, setting, working)
        return performance.climb_gradient_available(eng.thrust(v, eta), weight, v, s_ref, rho,
                                                    cd0, k)

    rho_to, t_to, p_to = (air.density_takeoff_kg_m3, air.temperature_takeoff_K,
                          air.pressure_takeoff_Pa)
    first = gradient(rho_to, t_to, p_to, 1.0, n_out, liftoff_speed_m_s, w,
                     polar.cd0_takeoff + d_oei)
    if np.ndim(air.departure_temperature_offset_K) == 0:
        rho_f, t_f, p_f, _ = isa_state(dep.elevation_m + FINAL_TAKEOFF_HEIGHT_M,
                                       air.departure_temperature_offset_K)
    else:  # one temperature offset per design (sampled operating conditions)
        rho_f, p_f, t_f = atm._density_unchecked(
            np.full(ws_c.shape, dep.elevation_m + FINAL_TAKEOFF_HEIGHT_M),
            air.departure_temperature_offset_K)
    v_fto = sp.climb_speed_factor * performance.stall_speed(ws_c, rho_f, ad.cl_max_clean)
    final = gradient(rho_f, t_f, p_f, pr.climb_power_fraction, n_out, v_fto, w,
                     ap.drag.cd0 + d_oei)
    rho_l, t_l, p_l = air.density_landing_kg_m3, air.temperature_landing_K, air.pressure_landing_Pa
    w_land = w * spec.mission.landing_mass_ratio
    ws_land = ws_c * spec.mission.landing_mass_ratio
    v_app = APPROACH_CLIMB_SPEED_FACTOR * performance.stall_speed(ws_land, rho_l,
                                                                  hl.cl_max_takeoff)
    approach = gradient(rho_l, t_l, p_l, 1.0, n_out, v_app, w_land,
                        polar.cd0_takeoff_flaps + d_oei)
    v_ref = LANDING_CLIMB_SPEED_FACTOR * performance.stall_speed(ws_land, rho_l,
                                                                 hl.cl_max_landing)
    landing_climb = gradient(rho_l, t_l, p_l, 1.0, None, v_ref, w_land, polar.cd0_landing)
    return TransportClimb(first, final, approach, landing_climb)
