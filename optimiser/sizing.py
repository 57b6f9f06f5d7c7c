"""Size a batch of designs completely: closed takeoff mass, mission fuel, every margin.

:func:`size_designs` composes the physics over arrays (one element per design, no Python loop
over designs). Inputs are the four decision variables; everything else comes from a resolved
:class:`~optimiser.spec.AircraftSpec` (SI, no ``None`` left).

Margins are positive when a constraint is met, as a fraction of its limit:
``1 - value / limit`` for upper limits and ``value / limit - 1`` for lower limits.
"""

from __future__ import annotations

import functools

import numpy as np

from .physics import G0
from .physics import aerodynamics as aero
from .physics import atmosphere as atm
from .physics import highlift, mission, performance, propulsion, weights
from .spec import AircraftSpec

from .columns import CONSTRAINT_LABELS  # noqa: F401  (re-exported from the results schema)

_MIN_ACCEL = 0.01  # [m s^-2] acceleration floor of the ground roll

OVERRIDE_KEYS = {
    "cd0_clean": "clean zero-lift drag coefficient [-] (replaces the study's value)",
    "oswald_factor_scale": "multiplies the Oswald factor of the study's method [-]",
    "propeller_efficiency_cruise": "cruise propeller efficiency [-] (propeller studies)",
    "propeller_efficiency_climb": "takeoff and climb propeller efficiency [-] (propeller studies)",
    "sfc_cruise": "power-specific fuel consumption in cruise [kg/J] (propeller studies)",
    "tsfc_cruise": "thrust-specific fuel consumption in cruise [kg/(N s)] (turbofan studies)",
    "empty_mass_factor": "multiplies the whole empty mass [-]",
}
"""Spec values that :func:`size_designs` accepts per design (``overrides``), e.g. for a
Monte Carlo over uncertain assumptions."""


def _check_overrides(spec, overrides, n):
    """Per-design override arrays (float, shape ``(n,)``); raises ValueError on a bad one."""
    if not overrides:
        return {}
    is_jet = spec.propulsion.family == "turbofan"
    out = {}
    for key, value in overrides.items():
        if key not in OVERRIDE_KEYS:
            raise ValueError(f"overrides: unknown key {key!r}; expected one of: "
                             + ", ".join(OVERRIDE_KEYS))
        if is_jet and key in ("propeller_efficiency_cruise", "propeller_efficiency_climb",
                              "sfc_cruise"):
            raise ValueError(f"overrides: {key!r} given for a turbofan study; expected it only "
                             "for propeller studies")
        if not is_jet and key == "tsfc_cruise":
            raise ValueError("overrides: 'tsfc_cruise' given for a propeller study; expected "
                             "it only for turbofan studies")
        a = np.asarray(value, dtype=float)
        if a.ndim == 0:
            a = np.full(n, float(a))
        a = a.ravel()
        if a.shape != (n,):
            raise ValueError(f"overrides: {key!r} has {a.size} values; expected one per design "
                             f"({n}) or a single value")
        if not (np.isfinite(a).all() and (a > 0.0).all()):
            raise ValueError(f"overrides: {key!r} holds values that are not finite and "
                             "positive; expected positive numbers")
        out[key] = a
    return out


@functools.lru_cache(maxsize=256)
def _air(h_m: float, dt_K: float = 0.0):
    """(density, temperature, pressure, speed of sound) of the ISA at ``h_m`` with a
    temperature offset, as floats; cached (a study asks for the same few states on every
    call)."""
    rho = float(atm.isa_density(h_m, dt_K))
    t = float(atm.isa_temperature(h_m, dt_K))
    return rho, t, float(atm.isa_pressure(h_m)), float(atm.speed_of_sound(t))


@functools.lru_cache(maxsize=64)
def _density_ratio(h_m: float) -> float:
    return float(atm.density_ratio(h_m))


def _at(x, ix):
    """``x[ix]`` for a per-design array, ``x`` itself for a study-wide scalar."""
    return x if np.ndim(x) == 0 else x[ix]


def active_constraints(spec: AircraftSpec) -> tuple[str, ...]:
    """Names of the constraints that apply to this study, in a fixed order."""
    names = ["mass_closure"]
    if np.isfinite(spec.requirements.max_takeoff_mass_kg):
        names.append("takeoff_mass_limit")
    names += ["runway_acceleration", "stall_speed", "takeoff_field", "landing_field",
              "climb_rate"]
    if spec.certification.aeo_climb_gradient_min > 0:
        names.append("climb_gradient")
    if spec.propulsion.engine_count > 1 and spec.certification.oei_climb_gradient_min > 0:
        names.append("oei_climb_gradient")
    names += ["cruise_speed", "service_ceiling"]
    return tuple(names)


def _high_lift_arrays(spec, index):
    table = _high_lift_table(spec.high_lift)
    return {f: v[index] for f, v in table.items()}


@functools.lru_cache(maxsize=32)
def _high_lift_table(options):
    """Per-option arrays of the high-lift numbers (cached per tuple of options)."""
    fields = ("cl_increment_takeoff", "cl_increment_landing", "cd0_increment_takeoff",
              "cd0_increment_landing", "flap_area_ratio", "flap_mass_per_area_kg_m2",
              "slat_area_ratio", "slat_mass_per_area_kg_m2", "actuator_mass_kg", "flap_items",
              "flap_supports_min", "flap_support_spacing_m", "slat_items", "slat_supports_min",
              "slat_support_spacing_m", "flapped_span_fraction", "slat_span_fraction",
              "support_weight")
    return {f: np.array([getattr(h, f) for h in options], dtype=float) for f in fields}


class _Propulsor:
    """Thrust of the installed engines at one air state, for a batch of designs."""

    def __init__(self, spec, rated, diameter, density, temperature, pressure, setting=1.0,
                 engines_working=None):
        p = spec.propulsion
        self.is_jet = p.family == "turbofan"
        share = 1.0 if engines_working is None else engines_working / p.engine_count
        self.share = share
        sigma = density / atm.RHO0
        if self.is_jet:
            self.thrust_sl = rated * setting * share
            self.temperature, self.pressure = temperature, pressure
            self.sound = atm.speed_of_sound(temperature)
            self.tr = p.turbofan_throttle_ratio
        else:
            if p.family == "piston":
                sig_crit = _density_ratio(p.turbocharged_critical_altitude_m)
                lapse = propulsion.piston_power_lapse(sigma, sig_crit)
            else:
                lapse = propulsion.turboprop_power_lapse(sigma, p.turboprop_lapse_exponent,
                                                         p.turboprop_flat_rating_margin)
            self.power_per_engine = rated / p.engine_count * setting * lapse
            self.power = self.power_per_engine * p.engine_count * share
            disc = 0.25 * np.pi * diameter**2
            self.static = propulsion.static_thrust_momentum(
                self.power_per_engine, density, disc, p.propeller_figure_of_merit) \
                * p.engine_count * share

    def thrust(self, speed, efficiency):
        if self.is_jet:
            mach = speed / _col(self.sound, speed)
            return _col(self.thrust_sl, speed) * propulsion.turbofan_thrust_lapse_mattingly(
                _col(self.temperature, speed), _col(self.pressure, speed), mach, self.tr)
        return propulsion.propeller_thrust(speed, _col(self.power, speed),
                                           _col(efficiency, speed), _col(self.static, speed))


def _finite(values, shape, seen):
    """A float array of ``shape`` with no NaN or inf (a safety net: the model avoids them).

    An array of the right shape is returned as it is (no copy) unless it was already
    returned for another key (``seen``: ids so far) or is a view into a larger array (a
    column of the margin matrix, a part of a stacked evaluation), so no two outputs share
    memory and an output keeps nothing larger than itself alive."""
    a = np.asarray(values, dtype=float)
    base = a.base
    if a.shape != shape or id(a) in seen or (base is not None and base.size != a.size):
        a = np.array(np.broadcast_to(a, shape))
    if not np.isfinite(a).all():
        a = np.nan_to_num(a, nan=0.0, posinf=1e12, neginf=-1e12)
    seen.add(id(a))
    return a


def _col(x, like):
    """Reshape a per-design array to broadcast against ``like`` (designs along axis 0)."""
    x = np.asarray(x, dtype=float)
    if np.ndim(like) == 2 and x.ndim == 1:
        return x[:, None]
    return x


def size_designs(spec: AircraftSpec, wing_loading_N_m2, loading, aspect_ratio, high_lift_index,
                 overrides=None):
    """Size every design of a batch.

    Parameters
    ----------
    spec : AircraftSpec
        Resolved study (SI).
    wing_loading_N_m2 : array_like
        Takeoff wing loading W/S [N m^-2].
    loading : array_like
        Power loading W/P [N kW^-1] (piston, turboprop) or thrust-to-weight T/W [-] (turbofan),
        both at takeoff weight and sea-level static rating.
    aspect_ratio : array_like
        [-].
    high_lift_index : array_like of int
        Index into ``spec.high_lift``.
    overrides : dict of str -> array_like, optional
        Per-design values of a few spec numbers (keys of :data:`OVERRIDE_KEYS`), each one
        value per design or a single value; they replace the study-wide scalar wherever it is
        used. Without ``overrides`` the results are those of the spec alone, bit for bit.

    Returns
    -------
    dict of str -> ndarray
        Sized numbers (SI, names with unit suffixes), ``margin_<constraint>`` for each active
        constraint, ``feasible`` (bool) and ``limiting_index`` (index into
        :func:`active_constraints` of the smallest margin).
    """
    ws = np.asarray(wing_loading_N_m2, dtype=float).ravel()
    ld_in = np.asarray(loading, dtype=float).ravel()
    ar = np.asarray(aspect_ratio, dtype=float).ravel()
    idx = np.asarray(high_lift_index, dtype=int).ravel()
    # keep the physics inside its valid ranges so no NaN can arise; out-of-range inputs are
    # flagged by the study layer, never silently changed in the output columns
    ws_c = np.clip(np.nan_to_num(ws, nan=1.0), 50.0, 2e4)
    ar_c = np.clip(np.nan_to_num(ar, nan=1.0), 1.0, 30.0)
    is_jet = spec.propulsion.family == "turbofan"
    if is_jet:
        tw = np.clip(np.nan_to_num(ld_in, nan=1e-3), 1e-3, 3.0)
        pw = None
    else:
        pw = 1e3 / np.clip(np.nan_to_num(ld_in, nan=1e4), 5.0, 1e4)  # [W/N]
        tw = None
    hl = _high_lift_arrays(spec, np.clip(idx, 0, len(spec.high_lift) - 1))
    ov = _check_overrides(spec, overrides, ws.size)
    e_scale = ov.get("oswald_factor_scale")  # None: the method's factor unchanged

    pr, ad, wt, ms, rq, sp = (spec.propulsion, spec.aerodynamics, spec.weights, spec.mission,
                              spec.requirements, spec.speeds)
    cert = spec.certification
    n_eng = pr.engine_count

    # --- air states (scalars for the whole study) ---
    dep, dst = spec.departure, spec.destination
    rho_to, t_to, p_to, _ = _air(dep.elevation_m, dep.temperature_offset_K)
    rho_ld = _air(dst.elevation_m, dst.temperature_offset_K)[0]
    h_cr, dt_cr = ms.cruise_altitude_m, ms.cruise_temperature_offset_K
    rho_cr, t_cr, p_cr, a_cr = _air(h_cr, dt_cr)
    v_cr = ms.cruise_speed_m_s
    mach_cr = v_cr / a_cr
    q_cr = 0.5 * rho_cr * v_cr**2

    cd0 = ov.get("cd0_clean", ad.cd0_clean)
    gear = ad.gear_drag_increment if ad.landing_gear == "retractable" else 0.0
    cd0_cruise = cd0 + float(aero.wave_drag_lock(mach_cr, ad.drag_divergence_mach))
    cl_to = ad.cl_max_clean + hl["cl_increment_takeoff"]
    cl_l = ad.cl_max_clean + hl["cl_increment_landing"]

    # mission fractions and fuel consumption
    f_start, f_taxi, f_to, f_climb, f_desc, f_land = (
        ms.fraction_startup, ms.fraction_taxi, ms.fraction_takeoff, ms.fraction_climb,
        ms.fraction_descent, ms.fraction_landing)
    f_pre = f_start * f_taxi * f_to * f_climb
    eta_cr = ov.get("propeller_efficiency_cruise", pr.propeller_efficiency_cruise) \
        if not is_jet else 1.0
    sfc_p = ov.get("sfc_cruise", pr.sfc_cruise) if not is_jet else 1.0
    sfc_t = ov.get("tsfc_cruise", pr.tsfc_cruise) if is_jet else 1.0
    emf = ov.get("empty_mass_factor", wt.empty_mass_factor)
    v_h_eas = v_cr * np.sqrt(rho_cr / atm.RHO0)

    fixed_kg = wt.payload_kg + wt.crew_kg
    # mass-independent factors of the cruise Oswald factor and of the wing mass, per design
    e_wing_cr = aero.oswald_factor(ad.oswald_method, ar_c, ad.taper_ratio,
                                   ad.sweep_quarter_chord_rad, 0.0, mach_cr, ad.oswald_k_ed0)
    if e_scale is not None:
        e_wing_cr = e_wing_cr * e_scale
    wing_k = wt.wing_mass_factor * weights.wing_mass_usaf_coefficient(
        ws_c, wt.ultimate_load_factor, ar_c, ad.taper_ratio, ad.thickness_ratio,
        ad.sweep_quarter_chord_rad, v_h_eas)

    def pieces(m_to, ix=slice(None)):
        """All mass-dependent quantities for takeoff mass m_to [kg] of designs ``ix``."""
        ws_i, ar_i = ws_c[ix], ar_c[ix]
        w = m_to * G0
        s_ref = w / ws_i
        span = np.sqrt(ar_i * s_ref)
        # e = (e of the wing alone, per design) x the fuselage factor at this span
        e_cr = e_wing_cr[ix] * aero.oswald_fuselage_factor(ad.oswald_method,
                                                            ad.fuselage_diameter_m / span)
        k_cr = aero.induced_drag_factor(ar_i, e_cr)
        cd0_i, eta_i = _at(cd0_cruise, ix), _at(eta_cr, ix)
        sfc_p_i, sfc_t_i = _at(sfc_p, ix), _at(sfc_t, ix)
        w_i = w * f_pre
        ld_i = aero.lift_to_drag(w_i / (q_cr * s_ref), cd0_i, k_cr)
        ratio = mission.cruise_weight_ratio(ms.range_m, v_cr, ld_i, eta_i, sfc_p_i, sfc_t_i,
                                            is_jet)
        w_mid = w_i / np.sqrt(ratio)
        ld_mid = aero.lift_to_drag(w_mid / (q_cr * s_ref), cd0_i, k_cr)
        ratio = mission.cruise_weight_ratio(ms.range_m, v_cr, ld_mid, eta_i, sfc_p_i, sfc_t_i,
                                            is_jet)
        w_end_cruise = w_i / ratio
        w_end = w_end_cruise * f_desc * f_land
        trip = (w - w_end) / G0
        ld_res = aero.lift_to_drag(w_end / (q_cr * s_ref), cd0_i, k_cr)
        res_ratio = (mission.endurance_weight_ratio(ms.reserve_time_s, v_cr, ld_res, eta_i,
                                                    sfc_p_i, sfc_t_i, is_jet)
                     * mission.cruise_weight_ratio(ms.reserve_range_m, v_cr, ld_res, eta_i,
                                                   sfc_p_i, sfc_t_i, is_jet))
        reserve = w_end * (1.0 - 1.0 / res_ratio) / G0
        fuel = trip + reserve + ms.trapped_fuel_fraction * m_to
        m_wing = wing_k[ix] * m_to ** weights.WING_MASS_USAF_EXPONENT
        if is_jet:
            rated = tw[ix] * w
            m_eng = weights.turbofan_engine_mass(rated, pr.engine_thrust_to_weight,
                                                 pr.engine_installation_factor)
        else:
            rated = pw[ix] * w
            m_eng = weights.propeller_engine_mass(rated, pr.engine_specific_mass)
        m_hl = weights.high_lift_mass(s_ref, hl["flap_area_ratio"][ix],
                                      hl["flap_mass_per_area_kg_m2"][ix],
                                      hl["slat_area_ratio"][ix], hl["slat_mass_per_area_kg_m2"][ix],
                                      hl["actuator_mass_kg"][ix])
        m_rest = wt.structure_systems_fraction * m_to + wt.fixed_equipment_kg
        empty = _at(emf, ix) * (m_wing + m_eng + m_hl + m_rest)
        residual = m_to - (fixed_kg + fuel + empty)
        residual = np.where(fuel >= 0.0, residual, np.nan)  # negative fuel (L/D < 0) is no closure
        return dict(residual=residual, s_ref=s_ref, span=span, e_cr=e_cr, k_cr=k_cr,
                    ld_cruise=ld_mid, trip=trip, reserve=reserve, fuel=fuel, empty=empty,
                    m_wing=m_wing, m_eng=m_eng, m_hl=m_hl, m_rest=m_rest, rated=rated,
                    w_mid=w_mid, w_i=w_i)

    # --- takeoff-mass closure: secant steps on the residual, kept inside a bracket
    # (bisection when a step leaves it), iterating only over the designs not yet converged;
    # the residual is nearly linear in the mass, so a few steps suffice ---
    cap_kg = fixed_kg * wt.mass_limit_ratio
    cap = np.full_like(ws_c, cap_kg)
    m0 = min(fixed_kg / 0.45, 0.5 * cap_kg)
    n = ws_c.size
    r2 = pieces(np.concatenate([cap, np.full(n, m0)]), np.concatenate([np.arange(n)] * 2))
    r_cap, r0 = r2["residual"][:n], r2["residual"][n:]  # at the mass limit and the first try
    closes = r_cap > 0.0
    ia = np.flatnonzero(closes)
    lo = np.full(ia.size, fixed_kg * 1.0001)
    hi = np.full(ia.size, cap_kg)
    # bracket ends' residuals for the fallback step (at the low end the residual is taken as
    # -fixed mass, its limit for a vanishing airplane: a weight for the step, not a value)
    r_lo, r_hi = np.full(ia.size, -fixed_kg), r_cap[ia]
    # the first step is the classic fixed-fraction update m = fixed / (1 - (fuel + empty)
    # / m): a secant through that same point (0, -fixed); the next ones use the last two
    m_prev, r_prev = np.zeros(ia.size), np.full(ia.size, -fixed_kg)
    m = np.full_like(ws_c, m0)
    for step_no in range(60):
        if ia.size == 0:
            break
        mi = m[ia]
        r = r0[ia] if step_no == 0 else pieces(mi, ia)["residual"]
        up = r >= 0.0  # a NaN residual (e.g. span below the fuselage diameter at this mass)
        lo, r_lo = np.where(up, lo, mi), np.where(up, r_lo, np.nan_to_num(r, nan=-fixed_kg))
        hi, r_hi = np.where(up, mi, hi), np.where(up, r, r_hi)  # counts as not yet closed
        todo = ~(np.abs(r) <= 1e-9 * mi)
        ia, mi, r, lo, hi = ia[todo], mi[todo], r[todo], lo[todo], hi[todo]
        r_lo, r_hi, m_prev, r_prev = r_lo[todo], r_hi[todo], m_prev[todo], r_prev[todo]
        with np.errstate(divide="ignore", invalid="ignore"):
            step = mi - r * (mi - m_prev) / (r - r_prev)
            inside = (step > lo) & (step < hi)  # False for NaN
            # outside the bracket: the false-position step between its ends, else bisection
            fp = lo - r_lo * (hi - lo) / (r_hi - r_lo)
        fp = np.where((fp > lo) & (fp < hi), fp, 0.5 * (lo + hi))
        m_prev, r_prev = mi, r
        m[ia] = np.where(inside, step, fp)
    converged = np.ones_like(closes)
    converged[ia] = False
    closes &= converged
    m_to = np.where(closes, m, cap)
    pc = pieces(m_to)
    closure_margin = np.where(closes | (r_cap <= 0.0), r_cap / cap, -1.0)  # -1: no convergence

    w = m_to * G0
    s_ref, span = pc["s_ref"], pc["span"]
    e_low = aero.oswald_factor(ad.oswald_method, ar_c, ad.taper_ratio,
                               ad.sweep_quarter_chord_rad, ad.fuselage_diameter_m / span, 0.2,
                               ad.oswald_k_ed0)
    if e_scale is not None:
        e_low = e_low * e_scale
    k_low = aero.induced_drag_factor(ar_c, e_low)
    e_low = 1.0 / (np.pi * ar_c * k_low)
    rated = pc["rated"]
    if is_jet:
        diameter = None
        eta_climb = 1.0
    else:
        diameter = propulsion.propeller_diameter(rated / n_eng, pr.propeller_diameter_coefficient)
        eta_climb = ov.get("propeller_efficiency_climb", pr.propeller_efficiency_climb)

    # --- stall ---
    vs_landing_sl = performance.stall_speed(ws_c, atm.RHO0, cl_l)
    vs_to = performance.stall_speed(ws_c, rho_to, cl_to)

    # --- takeoff ---
    eng_to = _Propulsor(spec, rated, diameter, rho_to, t_to, p_to)
    cd0_to = cd0 + hl["cd0_increment_takeoff"] + gear
    h_b = ad.wing_height_m / span
    phi = aero.ground_effect_factor(ad.ground_effect_method, h_b)
    mu_roll = dep.rolling_friction
    v_lo = sp.liftoff_speed_factor * vs_to
    s_g, min_acc, thrust_lo = performance.ground_roll(
        w, s_ref, v_lo, lambda v: eng_to.thrust(v, eta_climb), rho_to, cd0_to, k_low, phi,
        ad.cl_ground_roll, mu_roll, _MIN_ACCEL)
    s_rot = sp.rotation_time_s * v_lo
    v_tr = max(sp.transition_speed_factor, sp.liftoff_speed_factor) * vs_to
    dw_tr = performance.drag_to_weight(v_tr, ws_c, rho_to, cd0_to, k_low)
    climb_sine_tr = eng_to.thrust(v_tr, eta_climb) / w - dw_tr
    s_air = performance.takeoff_air_distance(vs_to, climb_sine_tr, dep.obstacle_height_m,
                                             max(sp.transition_speed_factor,
                                                 sp.liftoff_speed_factor),
                                             sp.transition_load_factor)
    takeoff_aeo = s_g + s_rot + s_air

    # --- one engine inoperative ---
    if n_eng > 1:
        if cert.oei_flaps_takeoff:  # Part 25 second segment: departure airfield, TO flaps, V2
            rho_oei, t_oei, p_oei = rho_to, t_to, p_to
            cl_oei_max = cl_to
            cd0_oei = cd0 + hl["cd0_increment_takeoff"]
            setting = 1.0
        else:  # Part 23: cruise configuration at the stated altitude, max continuous power
            h_oei = cert.oei_climb_altitude_m
            rho_oei, t_oei, p_oei, _ = _air(h_oei)
            cl_oei_max = np.full_like(ws_c, ad.cl_max_clean)
            cd0_oei = np.full_like(ws_c, cd0)
            setting = pr.climb_power_fraction
        eng_oei = _Propulsor(spec, rated, diameter, rho_oei, t_oei, p_oei, setting, n_eng - 1)
        v2 = sp.climb_speed_factor * performance.stall_speed(ws_c, rho_oei, cl_oei_max)
        oei_gradient = eng_oei.thrust(v2, eta_climb) / w - performance.drag_to_weight(
            v2, ws_c, rho_oei, cd0_oei + ad.engine_out_drag_increment, k_low)
    else:
        oei_gradient = np.zeros_like(ws_c)

    if cert.balanced_field and n_eng > 1:
        cl2 = cl_to / sp.climb_speed_factor**2
        mean_tw = eng_to.thrust(v_lo / np.sqrt(2.0), eta_climb) / w
        bfl = performance.balanced_field_length_torenbeek(
            ws_c, rho_to, cl2, mean_tw, cl_to, oei_gradient, cert.oei_climb_gradient_min,
            dep.obstacle_height_m)
        takeoff_required = np.maximum(bfl, cert.field_length_factor * takeoff_aeo)
    else:
        bfl = np.zeros_like(ws_c)
        takeoff_required = cert.field_length_factor * takeoff_aeo

    # --- landing ---
    ws_land = ws_c * ms.landing_mass_ratio
    cl_l_arr = cl_l * np.ones_like(ws_c)
    landing_total, s_app, s_flare, s_lg = performance.landing_distance(
        ws_land, rho_ld, cl_l_arr, dst.braking_friction, dst.obstacle_height_m,
        sp.approach_angle_rad, sp.flare_speed_factor, sp.free_roll_time_s)
    vs_land_dst = performance.stall_speed(ws_land, rho_ld, cl_l_arr)

    # --- climb (clean, gear up, climb power) ---
    def best_climb(h, dt, ix=slice(None)):
        """Best all-engines rate of climb [m/s] (clean, climb power) at altitude h for ``ix``."""
        rho, p_h, t_h = atm._density_unchecked(h, dt)
        ws_i, w_i, k_i, cd0_h = ws_c[ix], w[ix], k_low[ix], _at(cd0, ix)
        eng = _Propulsor(spec, rated[ix], None if diameter is None else diameter[ix], rho, t_h,
                         p_h, pr.climb_power_fraction)
        v_floor = sp.climb_speed_factor * performance.stall_speed(ws_i, rho, ad.cl_max_clean)
        if is_jet:
            tw_h = eng.thrust(np.full_like(ws_i, 100.0), 1.0) / w_i
            for step in range(2):
                v = np.sqrt(ws_i / (3.0 * rho * cd0_h) * (tw_h + np.sqrt(tw_h**2 + 12 * cd0_h
                                                                          * k_i)))
                if step == 0:  # the second speed's thrust is evaluated below, at the floor
                    tw_h = eng.thrust(v, 1.0) / w_i
        else:
            v = np.sqrt(2.0 * ws_i / (rho * np.sqrt(3.0 * cd0_h / k_i)))
        v = np.maximum(v, v_floor)
        roc = v * (eng.thrust(v, _at(eta_climb, ix)) / w_i
                   - performance.drag_to_weight(v, ws_i, rho, cd0_h, k_i))
        return roc, v

    # the best climb at the departure airfield, at sea level, at the required ceiling and at
    # H_MAX in one call (the latter three bracket the service ceiling below)
    n = ws_c.size
    h_req = min(max(rq.service_ceiling_m, 1.0), atm.H_MAX - 1.0)
    roc3, v3 = best_climb(
        np.concatenate([np.full(n, dep.elevation_m), np.zeros(n), np.full(n, h_req),
                        np.full(n, atm.H_MAX)]),
        np.concatenate([np.full(n, dep.temperature_offset_K), np.full(3 * n, dt_cr)]),
        np.concatenate([np.arange(n)] * 4))
    climb_rate, v_climb = roc3[:n], v3[:n]

    # regulatory all-engines gradient (Part 23: sea level, TO flaps, gear up)
    h_aeo = cert.aeo_climb_altitude_m
    rho_aeo, t_aeo, p_aeo, _ = _air(h_aeo)
    eng_aeo = _Propulsor(spec, rated, diameter, rho_aeo, t_aeo, p_aeo, pr.climb_power_fraction)
    v_aeo = sp.climb_speed_factor * performance.stall_speed(ws_c, rho_aeo, cl_to)
    climb_gradient = eng_aeo.thrust(v_aeo, eta_climb) / w - performance.drag_to_weight(
        v_aeo, ws_c, rho_aeo, cd0 + hl["cd0_increment_takeoff"], k_low)

    # --- service ceiling: ROC_max(h) = 0.508 m/s, solved over 0..20 km, from the half of
    # the range split at the required ceiling that holds it (designs near the requirement,
    # the ones that matter, then start from a short, nearly linear bracket) ---
    target = performance.SERVICE_CEILING_CLIMB_RATE
    f_sl = roc3[n:2 * n] - target
    f_req = roc3[2 * n:3 * n] - target
    f_top = roc3[3 * n:] - target
    above = f_req >= 0.0
    ceiling = performance.falling_root(
        lambda h, ix: best_climb(h, dt_cr, ix)[0] - target,
        np.where(above, h_req, 0.0), np.where(above, atm.H_MAX, h_req),
        np.where(above, f_req, f_sl), np.where(above, f_top, f_req), xtol=1.0)
    ceiling = np.where(f_sl < 0.0, 0.0, np.where(f_top >= 0.0, atm.H_MAX, ceiling))

    # --- highest level speed at cruise altitude and cruise setting ---
    eng_cr = _Propulsor(spec, rated, diameter, rho_cr, t_cr, p_cr, pr.cruise_power_fraction)
    w_cr = pc["w_i"]
    ws_cr = w_cr / s_ref
    k_cr = pc["k_cr"]

    def excess(v, ix=slice(None)):
        """Thrust minus drag over weight [-] in level flight at cruise altitude."""
        mach = v / a_cr
        d_w = performance.drag_to_weight(
            v, ws_cr[ix], rho_cr,
            _at(cd0, ix) + aero.wave_drag_lock(mach, ad.drag_divergence_mach), k_cr[ix])
        if is_jet:
            thrust = eng_cr.thrust_sl[ix] * propulsion.turbofan_thrust_lapse_mattingly(
                t_cr, p_cr, mach, pr.turbofan_throttle_ratio)
        else:
            thrust = propulsion.propeller_thrust(v, eng_cr.power[ix], _at(eta_cr, ix),
                                                 eng_cr.static[ix])
        return thrust / w_cr[ix] - d_w

    v_md = np.sqrt(2.0 * ws_cr / (rho_cr * np.sqrt(cd0 / k_cr)))
    v_low_alt = 1.1 * performance.stall_speed(ws_cr, rho_cr, ad.cl_max_clean)
    two = np.concatenate([np.arange(n)] * 2)
    f_two = excess(np.concatenate([v_md, v_low_alt]), two)
    f_md, f_low_alt = f_two[:n], f_two[n:]
    can_fly = (f_md >= 0.0) | (f_low_alt >= 0.0)
    v_start = np.where(f_md >= 0.0, v_md, v_low_alt)
    f_start = np.where(f_md >= 0.0, f_md, f_low_alt)
    # drag without wave drag: D/W = a_d V^2 + b_d / V^2
    a_d = 0.5 * rho_cr * cd0 / ws_cr
    b_d = 2.0 * k_cr * ws_cr / rho_cr
    if is_jet:
        t_max = eng_cr.thrust(np.full_like(ws_c, 1.0), 1.0) / w_cr
        v_free = np.sqrt(t_max / a_d)  # the speed with thrust = zero-lift drag
    else:
        t_max = eta_cr * eng_cr.power / w_cr  # [W/N]: thrust x speed per weight
        v_free = (t_max / a_d) ** (1.0 / 3.0)
    v_hi = np.maximum(np.minimum(v_free * 1.05, 0.98 * a_cr), v_start * 1.0001)
    f_hi = excess(v_hi)
    # A prediction of the root, then two evaluations 0.8 of the tolerance apart around it
    # narrow the bracket (to within the tolerance when the prediction holds, as it does
    # without wave drag and above the propeller's blend speed): the root solve then has
    # little or nothing left to do. Propellers: largest root of a_d V^4 - (eta P / W) V + b_d
    # by Newton from v_free (convex, so it falls monotonically onto it); jets: Newton on
    # drag - thrust with the wave drag (below).
    v_tol = 1e-3
    v = v_free
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        if is_jet:
            # Newton on drag - thrust with Lock's wave drag, derivatives analytic for the
            # drag and by a difference for the thrust, from the lower of v_free and the
            # drag-divergence speed (above it the fourth power slows Newton)
            v = np.clip(np.minimum(v, ad.drag_divergence_mach * a_cr), v_start, v_hi)
            for _ in range(5):
                cdw, dcdw_dm = aero.wave_drag_lock_and_slope(v / a_cr, ad.drag_divergence_mach)
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
    v_pred = np.clip(np.nan_to_num(v, nan=0.0), v_start, v_hi)
    solve = can_fly & (f_hi < 0.0)
    p_lo = np.maximum(v_pred - 0.4 * v_tol, v_start)
    p_hi = np.minimum(p_lo + 0.8 * v_tol, v_hi)
    f_two = excess(np.concatenate([p_lo, p_hi]), two)
    f_plo = np.where(solve, f_two[:n], -1.0)
    f_phi = np.where(solve, f_two[n:], -1.0)
    past_lo, past_hi = f_plo >= 0.0, f_phi >= 0.0
    a_v = np.where(past_lo, np.where(past_hi, p_hi, p_lo), v_start)
    fa_v = np.where(past_lo, np.where(past_hi, f_phi, f_plo), f_start)
    b_v = np.where(past_lo, np.where(past_hi, v_hi, p_hi), p_lo)
    fb_v = np.where(past_lo, np.where(past_hi, f_hi, f_phi), f_plo)
    v_max = performance.falling_root(excess, a_v, b_v, fa_v, fb_v, xtol=v_tol)
    narrowed = (b_v - a_v <= v_tol) & solve
    v_max = np.where(narrowed, 0.5 * (a_v + b_v), v_max)
    v_max = np.where(can_fly, np.where(f_hi >= 0.0, v_hi, v_max), 0.0)

    # --- maintenance ---
    mci = highlift.maintenance_index(span, hl["flap_items"], hl["flap_supports_min"],
                                     hl["flap_support_spacing_m"], hl["flapped_span_fraction"],
                                     hl["slat_items"], hl["slat_supports_min"],
                                     hl["slat_support_spacing_m"], hl["slat_span_fraction"],
                                     hl["support_weight"])

    # --- margins ---
    margins = {
        "mass_closure": closure_margin,
        "takeoff_mass_limit": 1.0 - m_to / rq.max_takeoff_mass_kg,
        "runway_acceleration": min_acc / G0,
        "stall_speed": 1.0 - vs_landing_sl / rq.stall_speed_m_s,
        "takeoff_field": 1.0 - takeoff_required / dep.field_length_m,
        "landing_field": 1.0 - landing_total / dst.field_length_m,
        "climb_rate": climb_rate / rq.climb_rate_m_s - 1.0,
        "climb_gradient": climb_gradient / max(cert.aeo_climb_gradient_min, 1e-9) - 1.0,
        "oei_climb_gradient": oei_gradient / max(cert.oei_climb_gradient_min, 1e-9) - 1.0,
        "cruise_speed": v_max / v_cr - 1.0,
        "service_ceiling": ceiling / rq.service_ceiling_m - 1.0,
    }
    names = active_constraints(spec)
    margin_matrix = np.column_stack([margins[c] for c in names])
    margin_matrix = np.nan_to_num(margin_matrix, nan=-1e3, posinf=1e3, neginf=-1e3)
    feasible = np.all(margin_matrix >= 0.0, axis=1)
    # a design whose mass does not close is reported as such: its other margins were computed
    # at the capped mass and mean little (mass_closure is always the first constraint)
    limiting = np.where(margin_matrix[:, 0] < 0.0, 0, np.argmin(margin_matrix, axis=1))

    out = {
        "takeoff_mass_kg": m_to,
        "empty_mass_kg": pc["empty"],
        "fuel_mass_kg": pc["fuel"],
        "trip_fuel_kg": pc["trip"],
        "reserve_fuel_kg": pc["reserve"],
        "payload_kg": np.full_like(ws_c, wt.payload_kg),
        "crew_kg": np.full_like(ws_c, wt.crew_kg),
        "empty_mass_fraction": pc["empty"] / m_to,
        "wing_mass_kg": pc["m_wing"] * emf,
        "engine_mass_kg": pc["m_eng"] * emf,
        "high_lift_mass_kg": pc["m_hl"] * emf,
        "structure_systems_mass_kg": pc["m_rest"] * emf,
        "wing_area_m2": s_ref,
        "span_m": span,
    }
    if is_jet:
        out["engine_thrust_kN"] = rated / 1e3
        out["static_thrust_N"] = rated
    else:
        out["engine_power_kW"] = rated / 1e3
        out["propeller_diameter_m"] = diameter
        out["static_thrust_N"] = eng_to.static
    out.update({
        "cd0": np.full_like(ws_c, cd0),
        "cd0_takeoff": cd0_to,
        "cd0_landing": cd0 + hl["cd0_increment_landing"] + gear,
        "oswald_e": e_low,
        "oswald_e_cruise": pc["e_cr"],
        "cl_max_clean": np.full_like(ws_c, ad.cl_max_clean),
        "cl_max_takeoff": cl_to * np.ones_like(ws_c),
        "cl_max_landing": cl_l_arr,
        "cruise_lift_coefficient": pc["w_mid"] / (q_cr * s_ref),
        "cruise_lift_to_drag": pc["ld_cruise"],
        "density_takeoff_kg_m3": np.full_like(ws_c, rho_to),
        "density_landing_kg_m3": np.full_like(ws_c, rho_ld),
        "density_cruise_kg_m3": np.full_like(ws_c, rho_cr),
        "stall_speed_m_s": vs_landing_sl,
        "stall_speed_takeoff_m_s": vs_to,
        "liftoff_speed_m_s": v_lo,
        "thrust_liftoff_N": thrust_lo,
        "ground_effect_factor": phi,
        "min_runway_acceleration_m_s2": min_acc,
        "takeoff_ground_roll_m": s_g,
        "takeoff_rotation_m": s_rot,
        "takeoff_air_distance_m": s_air,
        "takeoff_distance_m": takeoff_aeo,
        "balanced_field_length_m": bfl,
        "takeoff_field_required_m": takeoff_required,
        "approach_speed_m_s": sp.approach_speed_factor * vs_land_dst,
        "landing_approach_m": s_app,
        "landing_flare_m": s_flare,
        "landing_ground_roll_m": s_lg,
        "landing_distance_m": landing_total,
        "climb_speed_m_s": v_climb,
        "climb_rate_m_s": climb_rate,
        "climb_gradient": climb_gradient,
    })
    if n_eng > 1:
        out["oei_climb_gradient"] = oei_gradient
    out.update({
        "cruise_speed_m_s": v_max,
        "cruise_mach": v_max / a_cr,
        "service_ceiling_m": ceiling,
        "maintenance_index": mci,
    })
    for k, c in enumerate(names):
        out[f"margin_{c}"] = margin_matrix[:, k]
    seen = set()
    out = {k: _finite(v, ws_c.shape, seen) for k, v in out.items()}
    out["feasible"] = feasible
    out["limiting_index"] = limiting
    return out
