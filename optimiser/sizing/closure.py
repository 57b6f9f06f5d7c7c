"""Mission fuel, mass groups and the takeoff-mass closure."""

from __future__ import annotations

import functools
from dataclasses import dataclass

import numpy as np

from ..physics import G0, geometry, mission, weights
from ..physics import aerodynamics as aero
from ..physics import atmosphere as atm
from ..solvers import quadratic_start, secant_in_bracket, whole_or
from ..spec import FUSELAGE_FINENESS, AircraftSpec
from .aero import AirStates, CleanDrag, HighLift, cruise_induced_drag
from .engines import CruiseConsumption
from .inputs import DesignBatch, at
from .layout import ComponentDrag, component_drag


@dataclass(frozen=True, slots=True)
class MissionFuel:
    """Fuel of the design mission and the cruise weights it passes through."""

    start_cruise_weight_N: np.ndarray
    mid_cruise_weight_N: np.ndarray
    cruise_lift_to_drag: np.ndarray  # at mid-cruise weight, used in Breguet [-]
    trip_fuel_kg: np.ndarray
    reserve_fuel_kg: np.ndarray
    fuel_mass_kg: np.ndarray  # trip + reserve + trapped


def mission_fuel(spec: AircraftSpec, takeoff_mass_kg, wing_area_m2, induced_drag_factor,
                 cd0_cruise, consumption: CruiseConsumption, air: AirStates,
                 range_m=None) -> MissionFuel:
    """Trip and reserve fuel of the design mission by segment fractions and Breguet.

    Parameters
    ----------
    spec : AircraftSpec
        Resolved study: mission fractions [-], range [m], reserve time [s] and range [m],
        trapped-fuel fraction [-].
    takeoff_mass_kg, wing_area_m2 : ndarray
        Takeoff mass [kg] and wing area [m^2].
    induced_drag_factor, cd0_cruise : ndarray or float
        Cruise polar: K [-] and CD0 with wave drag [-].
    consumption : CruiseConsumption
        Cruise efficiency [-] and SFC [kg J^-1] or TSFC [kg N^-1 s^-1] (this subset of designs).
    air : AirStates
        Cruise true airspeed [m s^-1] and dynamic pressure [Pa].
    range_m : ndarray or float, optional
        Range flown [m], one per design or one for all (default the study's range).

    Returns
    -------
    MissionFuel
        Cruise weights [N], the cruise L/D [-], trip, reserve and total fuel [kg].

    References
    ----------
    .. [1] J. Roskam, "Airplane Design", Part I, Table 2.1 (segment fractions), and the
       Breguet range and endurance equations (via :mod:`optimiser.physics.mission`).
    """
    ms, is_jet = spec.mission, spec.propulsion.family == "turbofan"
    q_cr, v_cr = air.cruise_dynamic_pressure_Pa, air.cruise_speed_m_s
    eta, sfc_p, sfc_t = consumption.propeller_efficiency, consumption.sfc_kg_J, \
        consumption.tsfc_kg_N_s
    f_pre = ms.fraction_startup * ms.fraction_taxi * ms.fraction_takeoff * ms.fraction_climb
    w = takeoff_mass_kg * G0
    s_ref, k_cr = wing_area_m2, induced_drag_factor
    distance = ms.range_m if range_m is None else range_m
    w_i = w * f_pre
    ld_i = aero.lift_to_drag(w_i / (q_cr * s_ref), cd0_cruise, k_cr)
    ratio = mission.cruise_weight_ratio(distance, v_cr, ld_i, eta, sfc_p, sfc_t, is_jet)
    w_mid = w_i / np.sqrt(ratio)
    ld_mid = aero.lift_to_drag(w_mid / (q_cr * s_ref), cd0_cruise, k_cr)
    ratio = mission.cruise_weight_ratio(distance, v_cr, ld_mid, eta, sfc_p, sfc_t, is_jet)
    w_end_cruise = w_i / ratio
    w_end = w_end_cruise * ms.fraction_descent * ms.fraction_landing
    trip = (w - w_end) / G0
    ld_res = aero.lift_to_drag(w_end / (q_cr * s_ref), cd0_cruise, k_cr)
    res_ratio = (mission.endurance_weight_ratio(ms.reserve_time_s, v_cr, ld_res, eta, sfc_p,
                                                sfc_t, is_jet)
                 * mission.cruise_weight_ratio(ms.reserve_range_m, v_cr, ld_res, eta, sfc_p,
                                               sfc_t, is_jet))
    reserve = w_end * (1.0 - 1.0 / res_ratio) / G0
    fuel = trip + reserve + ms.trapped_fuel_fraction * takeoff_mass_kg
    return MissionFuel(w_i, w_mid, ld_mid, trip, reserve, fuel)


DIVE_OVER_CRUISE_SPEED = 1.25
"""V_D / V_C: the least margin 14 CFR 25.335(b) allows, V_C / 0.8 [from memory]."""


@dataclass(frozen=True, slots=True)
class ComponentInputs:
    """Mass-independent numbers of the class II component masses (one element per design
    or one for all)."""

    components: bool  # [weights] mass_method = "components"
    transport: bool  # Part 25: Torenbeek's transport equations, else the USAF light set
    fuselage_length_m: float
    fuselage_diameter_m: float
    fuselage_shell_area_m2: float  # wetted area, cylinder with conical nose and tail cone
    tail_arm_m: float
    cruise_eas_m_s: np.ndarray | float  # design cruise speed V_C (equivalent) [m s^-1]
    gear_kind: str  # "fixed", "retractable" or "business_jet" (Torenbeek's rows)
    control_coefficient: np.ndarray  # Torenbeek k_sc [lb^(1/3)] per design, x1.2 with slats


@dataclass(frozen=True, slots=True)
class MassGroups:
    """Empty-mass groups (before the empty-mass factor) and the empty mass (after it).

    With ``mass_method = "fraction"`` the component groups are zero and
    ``structure_systems_kg`` carries the class I share; with ``"components"`` it is zero."""

    wing_kg: np.ndarray
    horizontal_tail_kg: np.ndarray
    vertical_tail_kg: np.ndarray
    fuselage_kg: np.ndarray
    main_gear_kg: np.ndarray
    nose_gear_kg: np.ndarray
    engine_kg: np.ndarray
    fuel_system_kg: np.ndarray
    flight_controls_kg: np.ndarray
    high_lift_kg: np.ndarray
    fixed_equipment_kg: np.ndarray
    structure_systems_kg: np.ndarray
    empty_kg: np.ndarray


def _tail_geometry(area_m2, aspect_ratio, thickness_ratio):
    """Span [m] and root thickness [m] of a tail of this area [m^2], aspect ratio [-] and
    thickness ratio [-] (the study's ``[geometry] tail_thickness_ratio``)."""
    span = geometry.wing_span(area_m2, aspect_ratio)
    return span, thickness_ratio * geometry.root_chord(area_m2, span,
                                                            geometry.TAIL_TAPER_RATIO)


def _component_groups(spec: AircraftSpec, parts: ComponentInputs, takeoff_mass_kg,
                      wing_area_m2, span_m, fuel_mass_kg, ix):
    """Tails, fuselage, gear, fuel system and flight controls [kg] (class II)."""
    wt, ad = spec.weights, spec.aerodynamics
    n_ult = wt.ultimate_load_factor
    mac = geometry.mean_aerodynamic_chord(
        geometry.root_chord(wing_area_m2, span_m, ad.taper_ratio), ad.taper_ratio)
    g = spec.geometry
    s_h, s_v = geometry.tail_areas(wing_area_m2, mac, span_m, g.horizontal_tail_volume,
                                   g.vertical_tail_volume, parts.tail_arm_m)
    b_h, t_h = _tail_geometry(s_h, geometry.HORIZONTAL_TAIL_ASPECT_RATIO, g.tail_thickness_ratio)
    b_v, t_v = _tail_geometry(s_v, geometry.VERTICAL_TAIL_ASPECT_RATIO, g.tail_thickness_ratio)
    d_f, l_f = parts.fuselage_diameter_m, parts.fuselage_length_m
    fuel_volume = fuel_mass_kg / wt.fuel_density_kg_m3
    n_e = spec.propulsion.engine_count
    v_eas = at(parts.cruise_eas_m_s, ix)  # per design with the cruise altitude
    if parts.transport:
        v_d = DIVE_OVER_CRUISE_SPEED * v_eas
        m_ht = weights.tail_mass_torenbeek(s_h, v_d, ad.sweep_quarter_chord_rad)
        m_vt = weights.tail_mass_torenbeek(s_v, v_d, ad.sweep_quarter_chord_rad)
        m_fus = weights.fuselage_mass_torenbeek(v_d, parts.tail_arm_m, d_f, d_f,
                                                parts.fuselage_shell_area_m2)
        m_fuel = weights.fuel_system_mass_torenbeek(fuel_volume, wt.fuel_tank_count, n_e)
    else:
        m_ht = weights.horizontal_tail_mass_usaf(takeoff_mass_kg, n_ult, s_h, parts.tail_arm_m,
                                                 b_h, t_h)
        m_vt = weights.vertical_tail_mass_usaf(takeoff_mass_kg, n_ult, s_v, b_v, t_v)
        m_fus = weights.fuselage_mass_usaf(takeoff_mass_kg, n_ult, l_f, d_f, d_f, v_eas)
        m_fuel = weights.fuel_system_mass_usaf(fuel_volume, wt.integral_tank_fraction,
                                               wt.fuel_tank_count, n_e)
    m_main = weights.landing_gear_mass_torenbeek(takeoff_mass_kg, parts.gear_kind + "_main")
    m_nose = weights.landing_gear_mass_torenbeek(takeoff_mass_kg, parts.gear_kind + "_nose")
    m_fc = weights.flight_controls_mass_torenbeek(takeoff_mass_kg,
                                                  parts.control_coefficient[ix])
    return m_ht, m_vt, m_fus, m_main, m_nose, m_fuel, m_fc


def mass_groups(spec: AircraftSpec, parts: ComponentInputs, takeoff_mass_kg, wing_area_m2,
                span_m, rated, fuel_mass_kg, wing_mass_coefficient, hl: HighLift,
                empty_mass_factor, ix=slice(None)) -> MassGroups:
    """The groups of the empty mass: class II components, or the class I share.

    Parameters
    ----------
    spec : AircraftSpec
        Resolved study: mass method, engine mass data, load factor [-], tail volumes [-],
        fuel data (density [kg m^-3], tanks [-]), fixed equipment [kg], structure-and-systems
        fraction [-] (fraction method).
    parts : ComponentInputs
        Mass-independent geometry and speeds of the component masses ([m], [m^2], [m s^-1]).
    takeoff_mass_kg, wing_area_m2, span_m : ndarray
        Takeoff mass [kg], wing area [m^2] and span [m] of designs ``ix``.
    rated : ndarray
        Sea-level static thrust [N] (turbofan) or rated power [W] of designs ``ix``.
    fuel_mass_kg : ndarray
        Fuel carried [kg] (sizes the fuel system) of designs ``ix``.
    wing_mass_coefficient : ndarray
        K of the wing mass K m^x, mass-independent, of designs ``ix``. [kg^(1-x)]
    hl : HighLift
        High-lift areas and masses of all designs (``ix`` picks them). [-], [kg m^-2], [kg]
    empty_mass_factor : ndarray or float
        Multiplies the sum of the groups (of designs ``ix``). [-]
    ix : index array or slice, default all
        Designs (rows of ``hl``) the masses belong to. [-]

    Returns
    -------
    MassGroups
        Group masses [kg] and the empty mass [kg].

    Notes
    -----
    Components: the wing by the USAF light-aircraft equation; under Part 23 the USAF
    light-airplane tails, fuselage, fuel system and (propeller families) installed
    propulsion; under Part 25 Torenbeek's transport tails, fuselage and fuel system; for
    both, Torenbeek's landing gear and flight controls. Turbofans and Part 25 propellers keep
    the class I installed engine (specific mass or T/W with an installation factor, nacelles
    included).

    References
    ----------
    .. [1] The equations of :mod:`optimiser.physics.weights`, each cited there (USAF method
       as in J. Roskam, "Airplane Design", Part V, and Nicolai & Carichner 2010, ch. 20;
       E. Torenbeek, "Synthesis of Subsonic Airplane Design", 1982, ch. 8).
    """
    wt = spec.weights
    pr = spec.propulsion
    m_wing = wing_mass_coefficient * takeoff_mass_kg ** weights.WING_MASS_USAF_EXPONENT
    if pr.family == "turbofan":
        m_eng = weights.turbofan_engine_mass(rated, pr.engine_thrust_to_weight,
                                             pr.engine_installation_factor)
    elif parts.components and not parts.transport:
        dry_kg = rated / 1e3 * wt.engine_dry_specific_mass / pr.engine_count
        m_eng = weights.propulsion_installation_mass_usaf(dry_kg, pr.engine_count)
    else:
        m_eng = weights.propeller_engine_mass(rated, pr.engine_specific_mass)
    m_hl = weights.high_lift_mass(wing_area_m2, hl.flap_area_ratio[ix],
                                  hl.flap_mass_per_area_kg_m2[ix], hl.slat_area_ratio[ix],
                                  hl.slat_mass_per_area_kg_m2[ix], hl.actuator_mass_kg[ix])
    m_fixed = np.full_like(takeoff_mass_kg, wt.fixed_equipment_kg)
    zero = np.zeros_like(takeoff_mass_kg)
    if parts.components:
        groups = _component_groups(spec, parts, takeoff_mass_kg, wing_area_m2, span_m,
                                   fuel_mass_kg, ix)
        m_rest = zero
    else:
        groups = (zero,) * 7
        m_rest = wt.structure_systems_fraction * takeoff_mass_kg
    m_ht, m_vt, m_fus, m_main, m_nose, m_fuel, m_fc = groups
    empty = empty_mass_factor * (m_wing + m_ht + m_vt + m_fus + m_main + m_nose + m_eng
                                 + m_fuel + m_fc + m_hl + m_fixed + m_rest)
    return MassGroups(m_wing, m_ht, m_vt, m_fus, m_main, m_nose, m_eng, m_fuel, m_fc, m_hl,
                      m_fixed, m_rest, empty)


def component_inputs(spec: AircraftSpec, cruise_eas_m_s, hl: HighLift) -> ComponentInputs:
    """Mass-independent geometry and speeds of the class II component masses.

    Parameters
    ----------
    spec : AircraftSpec
        Resolved study: fuselage length and diameter [m], mass method, basis, gear, family,
        flight-control coefficient [-].
    cruise_eas_m_s : ndarray or float
        Design cruise speed as equivalent airspeed [m s^-1].
    hl : HighLift
        High-lift configuration of every design (slat area ratio [-]: Torenbeek's k_sc is
        20 % higher with leading-edge slats).

    Returns
    -------
    ComponentInputs
        Fuselage length, diameter [m] and shell area [m^2], tail arm [m], cruise EAS
        [m s^-1], gear row and k_sc [lb^(1/3)].

    References
    ----------
    .. [1] Fuselage as a cylinder with cones and the tail arm:
       :mod:`optimiser.physics.geometry` (common practice; the cone lengths are this
       module's constants).
    """
    ad, wt = spec.aerodynamics, spec.weights
    g = spec.geometry
    d_f = ad.fuselage_diameter_m
    # the study's [geometry] fuselage length, else the family's fineness ratio (the clean
    # CD0 is then pinned, but the fuselage and tail masses still need a length)
    l_f = g.fuselage_length_m if g.fuselage_length_m is not None else \
        d_f * FUSELAGE_FINENESS[spec.propulsion.family]
    retractable = ad.landing_gear == "retractable"
    gear = ("business_jet" if spec.propulsion.family == "turbofan" else "retractable") \
        if retractable else "fixed"
    fuselage = geometry.fuselage_geometry(l_f, d_f, g.nose_fineness, g.tailcone_fineness)
    return ComponentInputs(
        components=wt.mass_method == "components",
        transport=spec.certification.basis == "part25",
        fuselage_length_m=l_f, fuselage_diameter_m=d_f,
        fuselage_shell_area_m2=float(fuselage.wetted_area_m2),
        tail_arm_m=g.tail_arm_fraction * l_f, cruise_eas_m_s=cruise_eas_m_s,
        gear_kind=gear, control_coefficient=wt.flight_control_coefficient
        * np.where(hl.slat_area_ratio > 0.0, 1.2, 1.0))


@dataclass(frozen=True, slots=True)
class ClosureInputs:
    """Mass-independent per-design numbers of the closure (one element per design)."""

    spec: AircraftSpec
    batch: DesignBatch
    air: AirStates
    drag: CleanDrag
    high_lift: HighLift
    consumption: CruiseConsumption
    wing_mass_coefficient: np.ndarray  # K of the wing mass K m^x [kg^(1-x)]
    empty_mass_factor: np.ndarray | float  # [-]
    parts: ComponentInputs


def closure_inputs(spec: AircraftSpec, batch: DesignBatch, air: AirStates, drag: CleanDrag,
                   hl: HighLift, consumption: CruiseConsumption) -> ClosureInputs:
    """Gather the mass-independent numbers and the wing-mass coefficient of each design.

    Parameters
    ----------
    spec : AircraftSpec
        Resolved study: wing-mass data (load factor [-], calibration [-]), wing planform.
    batch : DesignBatch
        Wing loading [N m^-2], aspect ratio [-], overrides.
    air : AirStates
        Cruise density [kg m^-3] and speed [m s^-1] (the wing equation's EAS).
    drag, hl, consumption : CleanDrag, HighLift, CruiseConsumption
        Earlier stages.

    Returns
    -------
    ClosureInputs
        Everything :func:`mass_state` needs besides the takeoff mass.

    References
    ----------
    .. [1] USAF light-aircraft wing equation (via
       :func:`optimiser.physics.weights.wing_mass_usaf_coefficient`).
    """
    ad, wt = spec.aerodynamics, spec.weights
    v_h_eas = air.cruise_speed_m_s * np.sqrt(air.density_cruise_kg_m3 / atm.RHO0)
    wing_k = wt.wing_mass_factor * weights.wing_mass_usaf_coefficient(
        batch.wing_loading_N_m2, wt.ultimate_load_factor, batch.aspect_ratio, ad.taper_ratio,
        ad.thickness_ratio, ad.sweep_quarter_chord_rad, v_h_eas)
    emf = batch.overrides.get("empty_mass_factor", wt.empty_mass_factor)
    return ClosureInputs(spec, batch, air, drag, hl, consumption, wing_k, emf,
                         component_inputs(spec, v_h_eas, hl))


@dataclass(frozen=True, slots=True)
class MassState:
    """Every mass-dependent number at one takeoff mass."""

    residual_kg: np.ndarray  # takeoff mass - (payload + crew + fuel + empty); NaN: no closure
    wing_area_m2: np.ndarray
    span_m: np.ndarray
    oswald_e_cruise: np.ndarray  # [-]
    induced_drag_factor_cruise: np.ndarray  # [-]
    rated: np.ndarray  # sea-level static thrust [N] or rated power [W], all engines
    fuel: MissionFuel
    masses: MassGroups
    components: ComponentDrag | None  # the drag build-up at this wing area (None: pinned CD0)


def mass_state(c: ClosureInputs, takeoff_mass_kg, ix=slice(None)) -> MassState:
    """Geometry, engines, clean drag, mission fuel and empty mass of designs ``ix`` at a
    takeoff mass.

    With the drag build-up the cruise CD0 follows this mass's wing area and engine rating
    (:func:`optimiser.sizing.layout.component_drag`); a pinned CD0 is taken as it is.

    Parameters
    ----------
    c : ClosureInputs
        Mass-independent numbers of all designs.
    takeoff_mass_kg : ndarray
        Takeoff mass of designs ``ix``. [kg]
    ix : index array or slice, default all
        Designs (rows of ``c``) the masses belong to. [-]

    Returns
    -------
    MassState
        The mass residual [kg] and what it is made of (areas [m^2], span [m], ...).

    References
    ----------
    Stages :func:`mission_fuel` and :func:`mass_groups` (cited there).
    """
    spec, b = c.spec, c.batch
    ws_i, ar_i = b.wing_loading_N_m2[ix], b.aspect_ratio[ix]
    w = takeoff_mass_kg * G0
    s_ref = w / ws_i
    span = np.sqrt(ar_i * s_ref)
    e_cr, k_cr = cruise_induced_drag(spec, c.drag.oswald_wing_cruise[ix], ar_i, span)
    loading = b.thrust_to_weight if b.thrust_to_weight is not None else b.power_to_weight_W_N
    rated = loading[ix] * w
    drag = c.drag
    if drag.pinned:
        components, cd0_cruise = None, at(drag.cd0_cruise, ix)
    else:
        components = component_drag(spec, drag.build_up.take(ix), s_ref, ar_i, rated)
        cd0_cruise = components.cd0_cruise_friction * at(drag.cd0_scale, ix) \
            + at(drag.wave_cd0, ix)
    cons = c.consumption
    fuel = mission_fuel(spec, takeoff_mass_kg, s_ref, k_cr, cd0_cruise,
                        CruiseConsumption(at(cons.propeller_efficiency, ix),
                                          at(cons.sfc_kg_J, ix), at(cons.tsfc_kg_N_s, ix)),
                        c.air.take(ix))
    masses = mass_groups(spec, c.parts, takeoff_mass_kg, s_ref, span, rated, fuel.fuel_mass_kg,
                         c.wing_mass_coefficient[ix], c.high_lift, at(c.empty_mass_factor, ix),
                         ix)
    fixed_kg = spec.weights.payload_kg + spec.weights.crew_kg
    residual = takeoff_mass_kg - (fixed_kg + fuel.fuel_mass_kg + masses.empty_kg)
    # negative fuel (L/D < 0) is no closure
    residual = np.where(fuel.fuel_mass_kg >= 0.0, residual, np.nan)
    return MassState(residual, s_ref, span, e_cr, k_cr, rated, fuel, masses, components)


def _residual(c, takeoff_mass_kg, ix):
    return mass_state(c, takeoff_mass_kg, ix).residual_kg


@dataclass(frozen=True, slots=True)
class MassClosure:
    """The closed takeoff mass and the state at it."""

    takeoff_mass_kg: np.ndarray  # closed, or the mass limit where it does not close
    closure_margin: np.ndarray  # residual at the limit over the limit [-]; -1: no convergence
    state: MassState


def close_takeoff_mass(c: ClosureInputs) -> MassClosure:
    """Takeoff mass where payload + crew + fuel + empty mass equals the takeoff mass.

    The residual is probed at three masses in one call (the classic first guess
    fixed / 0.45, 4 x fixed and the mass limit, fixed = payload + crew); the root of the
    quadratic through them (:func:`optimiser.solvers.quadratic_start`, within 0.1 % of the
    closed mass for most designs) starts secant steps kept inside the bracket the probes
    leave, iterating only over the designs not yet converged, to |residual| <= 1e-9 x mass.

    Parameters
    ----------
    c : ClosureInputs
        Mass-independent numbers; the limit is ``mass_limit_ratio`` x (payload + crew). [kg]

    Returns
    -------
    MassClosure
        Takeoff mass [kg], closure margin [-] and the mass state at it.

    References
    ----------
    .. [1] J. Roskam, "Airplane Design", Part I, ch. 2 (the fixed-fraction iteration);
       the solver: :func:`optimiser.solvers.secant_in_bracket`.
    """
    wt = c.spec.weights
    fixed_kg = wt.payload_kg + wt.crew_kg
    ws = c.batch.wing_loading_N_m2
    n = ws.size
    cap_kg = fixed_kg * wt.mass_limit_ratio
    cap = np.full_like(ws, cap_kg)
    # three probes in one call: the classic first guess, a mid point and the mass limit
    m0 = min(fixed_kg / 0.45, 0.5 * cap_kg)
    m_mid = min(4.0 * fixed_kg, np.sqrt(m0 * cap_kg))
    probes = (m0, m_mid, cap_kg)
    r3 = _residual(c, np.repeat(probes, n), np.tile(np.arange(n), 3))
    r_probes = (r3[:n], r3[n:2 * n], r3[2 * n:])
    r_cap = r_probes[2]
    closes = r_cap > 0.0
    # at the low end the residual is taken as -fixed mass, its limit for a vanishing
    # airplane: a weight for the step, not a value
    low = fixed_kg * 1.0001
    m1, slope, lo, hi, f_lo, f_hi = quadratic_start(probes, r_probes, low, cap_kg, -fixed_kg,
                                                    r_cap)
    solve = np.flatnonzero(closes)
    r1 = np.zeros(n)
    r1[solve] = _residual(c, m1[solve], whole_or(solve, n))
    # the point before m1 for the first secant step: on the quadratic's tangent at m1 (a
    # Newton step on the interpolant's slope), else the nearer end of the probes' bracket
    near_hi = (hi - m1 <= m1 - lo) | (lo <= low)
    tangent = np.isfinite(slope) & (slope > 0.0)
    dm = 0.01 * m1
    m_prev = np.where(tangent, m1 - dm, np.where(near_hi, hi, lo))
    r_prev = np.where(tangent, r1 - dm * np.where(tangent, slope, 0.0),
                      np.where(near_hi, f_hi, f_lo))
    m, converged = secant_in_bracket(
        functools.partial(_residual, c), m1, r1, closes, low=lo, high=hi, f_low=f_lo,
        f_high=f_hi, x_prev=m_prev, f_prev=r_prev, rtol=1e-9, nan_low=-fixed_kg)
    closes &= converged
    m_to = np.where(closes, m, cap)
    return MassClosure(m_to, np.where(closes | (r_cap <= 0.0), r_cap / cap, -1.0),
                       mass_state(c, m_to))
