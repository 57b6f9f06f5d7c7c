"""Field performance of an airplane: takeoff (all engines, balanced field) and landing."""

from __future__ import annotations

import functools
from dataclasses import dataclass

import numpy as np

from ..physics import aerodynamics as aero
from ..physics import atmosphere as atm
from ..physics import performance
from ..spec import AircraftSpec
from .aero import AirStates
from .airplane import Airplane
from .engines import InstalledThrust, engines_at

def field_wind(headwind_m_s, speed_m_s):
    """The wind component the field lengths count [m s^-1]: 50 % of a headwind, 150 % of a
    tailwind (:func:`optimiser.physics.performance.factored_wind`), a headwind held below
    0.9 of the airplane's speed ``speed_m_s`` [m s^-1] (lift-off or touchdown), so that the
    ground speed stays positive."""
    return np.minimum(performance.factored_wind(headwind_m_s), 0.9 * speed_m_s)


MIN_ACCELERATION_M_S2 = 0.01
"""Acceleration floor of the ground roll [m s^-2] (common practice: keeps the integral finite
for an airplane that cannot accelerate; its margin says so)."""


@dataclass(frozen=True, slots=True)
class Takeoff:
    """All-engines takeoff at the departure airfield."""

    stall_speed_takeoff_m_s: np.ndarray  # takeoff configuration, TAS
    liftoff_speed_m_s: np.ndarray
    thrust_liftoff_N: np.ndarray
    ground_effect_factor: np.ndarray  # [-]
    min_runway_acceleration_m_s2: np.ndarray
    ground_roll_m: np.ndarray
    rotation_m: np.ndarray
    air_distance_m: np.ndarray
    distance_m: np.ndarray  # to the screen height
    engines: InstalledThrust  # at the departure airfield, takeoff rating


def takeoff(spec: AircraftSpec, ap: Airplane, air: AirStates) -> Takeoff:
    """All-engines takeoff distance: ground roll, rotation, transition and climb to the screen.

    Parameters
    ----------
    spec : AircraftSpec
        Resolved study: speed factors [-], rotation time [s], wing height [m], ground-roll
        lift coefficient [-], rolling friction [-], screen height [m].
    ap : Airplane
        The airplane at takeoff mass (wing loading [N m^-2], span [m], engines, polar).
    air : AirStates
        Departure density [kg m^-3], temperature [K], pressure [Pa].

    Returns
    -------
    Takeoff
        Speeds [m s^-1], lift-off thrust [N], ground-effect factor [-], least acceleration
        [m s^-2], distances [m], and the engines at the airfield.

    References
    ----------
    .. [1] J. D. Anderson, "Aircraft Performance and Design", McGraw-Hill, 1999, ch. 6
       (ground roll, transition and climb; via :mod:`optimiser.physics.performance`).
    """
    ad, sp, dep, hl = spec.aerodynamics, spec.speeds, spec.departure, ap.high_lift
    ws_c, w, k_low = ap.wing_loading_N_m2, ap.weight_N, ap.polar.induced_drag_factor
    rho_to = air.density_takeoff_kg_m3
    eta_climb = ap.engines.propeller_efficiency_climb
    vs_to = performance.stall_speed(ws_c, rho_to, hl.cl_max_takeoff)
    eng_to = engines_at(spec, ap.engines, rho_to, air.temperature_takeoff_K,
                        air.pressure_takeoff_Pa)
    cd0_to = ap.polar.cd0_takeoff
    phi = aero.ground_effect_factor(ad.ground_effect_method, ad.wing_height_m / ap.span_m)
    v_lo = sp.liftoff_speed_factor * vs_to
    vw = None if air.headwind_takeoff_m_s is None else field_wind(air.headwind_takeoff_m_s, v_lo)
    s_g, min_acc, thrust_lo = performance.ground_roll(
        w, ap.wing_area_m2, v_lo, functools.partial(eng_to.thrust, efficiency=eta_climb),
        rho_to, cd0_to, k_low, phi, ad.cl_ground_roll, air.rolling_friction,
        MIN_ACCELERATION_M_S2, vw)
    s_rot = sp.rotation_time_s * v_lo
    tr_factor = max(sp.transition_speed_factor, sp.liftoff_speed_factor)
    v_tr = tr_factor * vs_to
    dw_tr = performance.drag_to_weight(v_tr, ws_c, rho_to, cd0_to, k_low)
    climb_sine_tr = eng_to.thrust(v_tr, eta_climb) / w - dw_tr
    s_air = performance.takeoff_air_distance(vs_to, climb_sine_tr, dep.obstacle_height_m,
                                             tr_factor, sp.transition_load_factor)
    if vw is not None:  # ground covered at ground speed: rotation at V_LO, the air path at V_TR
        s_rot = sp.rotation_time_s * (v_lo - vw)
        s_air = s_air * (v_tr - vw) / v_tr
    return Takeoff(vs_to, v_lo, thrust_lo, phi, min_acc, s_g, s_rot, s_air, s_g + s_rot + s_air,
                   eng_to)


@dataclass(frozen=True, slots=True)
class TakeoffField:
    """Field length the rules require."""

    balanced_field_length_m: np.ndarray  # 0 where the basis asks for none
    required_m: np.ndarray


def takeoff_field(spec: AircraftSpec, ap: Airplane, air: AirStates, to: Takeoff,
                  oei_climb_gradient) -> TakeoffField:
    """Required takeoff field: balanced field (multi-engine, where the basis asks) or the
    all-engines distance times the basis' factor.

    Parameters
    ----------
    spec : AircraftSpec
        Resolved study: certification basis (field-length factor [-], OEI gradient minimum
        [-]), climb speed factor [-], screen height [m].
    ap : Airplane
        The airplane at takeoff mass.
    air : AirStates
        Departure density. [kg m^-3]
    to : Takeoff
        All-engines distance [m], lift-off speed [m s^-1] and the engines.
    oei_climb_gradient : ndarray
        One-engine-inoperative climb gradient. [-]

    Returns
    -------
    TakeoffField
        Balanced field length [m] and the required field length [m].

    References
    ----------
    .. [1] E. Torenbeek, "Synthesis of Subsonic Airplane Design", Delft University Press, 1982,
       ch. 5 (balanced field length; via :mod:`optimiser.physics.performance`).
    """
    cert, sp = spec.certification, spec.speeds
    ws_c, w = ap.wing_loading_N_m2, ap.weight_N
    if cert.balanced_field and spec.propulsion.engine_count > 1:
        cl_to = ap.high_lift.cl_max_takeoff
        cl2 = cl_to / sp.climb_speed_factor**2
        mean_tw = to.engines.thrust(to.liftoff_speed_m_s / np.sqrt(2.0),
                                    ap.engines.propeller_efficiency_climb) / w
        bfl = performance.balanced_field_length_torenbeek(
            ws_c, air.density_takeoff_kg_m3, cl2, mean_tw, cl_to, oei_climb_gradient,
            cert.oei_climb_gradient_min, spec.departure.obstacle_height_m)
        if air.headwind_takeoff_m_s is not None:  # Torenbeek's fit is for still air: scaled
            # as a ground run at uniform acceleration to the lift-off speed (derived)
            vw = field_wind(air.headwind_takeoff_m_s, to.liftoff_speed_m_s)
            bfl = bfl * performance.ground_run_in_wind_ratio(to.liftoff_speed_m_s, vw)
        return TakeoffField(bfl, np.maximum(bfl, cert.field_length_factor * to.distance_m))
    return TakeoffField(np.zeros_like(ws_c), cert.field_length_factor * to.distance_m)


@dataclass(frozen=True, slots=True)
class Landing:
    """Landing at the destination and the stall speed of the requirement."""

    stall_speed_m_s: np.ndarray  # landing configuration, sea level, takeoff mass
    approach_speed_m_s: np.ndarray  # at the destination, landing mass (TAS)
    approach_m: np.ndarray
    flare_m: np.ndarray
    ground_roll_m: np.ndarray
    distance_m: np.ndarray  # from the screen height
    cl_max_landing: np.ndarray  # one per design [-]


def landing(spec: AircraftSpec, ap: Airplane, air: AirStates) -> Landing:
    """Landing distance from the screen height at the destination, and the stall speed.

    Parameters
    ----------
    spec : AircraftSpec
        Resolved study: landing mass ratio [-], braking friction [-], screen height [m],
        approach angle [rad], flare and approach speed factors [-], free-roll time [s].
    ap : Airplane
        The airplane at takeoff mass (the landing mass is ``landing_mass_ratio`` of it).
    air : AirStates
        Destination density. [kg m^-3]

    Returns
    -------
    Landing
        Stall speed (sea level, takeoff mass) [m s^-1], approach speed [m s^-1], the
        approach, flare, ground-roll and total distances [m], CLmax [-].

    References
    ----------
    .. [1] J. D. Anderson, "Aircraft Performance and Design", McGraw-Hill, 1999, ch. 6
       (approach, flare, free roll and braking; via :mod:`optimiser.physics.performance`).
    """
    ms, sp, dst = spec.mission, spec.speeds, spec.destination
    ws_c, cl_l = ap.wing_loading_N_m2, ap.high_lift.cl_max_landing
    rho_ld = air.density_landing_kg_m3
    vs_landing_sl = performance.stall_speed(ws_c, atm.RHO0, cl_l)
    ws_land = ws_c * ms.landing_mass_ratio
    cl_l_arr = cl_l * np.ones_like(ws_c)
    vs_land_dst = performance.stall_speed(ws_land, rho_ld, cl_l_arr)
    vw = None if air.headwind_landing_m_s is None else field_wind(
        air.headwind_landing_m_s, sp.flare_speed_factor * vs_land_dst)
    total, s_app, s_flare, s_lg = performance.landing_distance(
        ws_land, rho_ld, cl_l_arr, air.braking_friction, dst.obstacle_height_m,
        sp.approach_angle_rad, sp.flare_speed_factor, sp.free_roll_time_s,
        headwind=vw, approach_speed_factor=sp.approach_speed_factor)
    return Landing(vs_landing_sl, sp.approach_speed_factor * vs_land_dst, s_app, s_flare, s_lg,
                   total, cl_l_arr)


def landing_field_required(spec: AircraftSpec, landing_distance_m) -> np.ndarray:
    """Landing field length the operating rules require at the destination.

    Parameters
    ----------
    spec : AircraftSpec
        Resolved study: the landing rule of the basis (``transport`` for Part 25, ``part23``),
        the operator's 60 % rule under Part 23, the destination's runway (``paved_wet`` is
        wet).
    landing_distance_m : ndarray
        Landing distance from the screen height [m] (dry braking where the dispatch factor
        applies: see
        :data:`optimiser.physics.performance.WET_RUNWAY_DRY_SURFACE`).

    Returns
    -------
    ndarray
        Required landing field length [m]: the distance / 0.6 (x 1.15 on a wet runway) under
        the dispatch rules, the distance itself otherwise.

    References
    ----------
    .. [1] 14 CFR 121.195(b), (d) and 135.385(b), (d), via
       :func:`optimiser.physics.performance.landing_field_length_required`.
    """
    return performance.landing_field_length_required(
        landing_distance_m, spec.certification.landing_rule,
        spec.destination.runway in performance.WET_RUNWAY_DRY_SURFACE,
        spec.requirements.landing_dispatch_factor)
