"""Mission fuel, mass groups and the takeoff-mass closure."""

from __future__ import annotations

import functools
from dataclasses import dataclass

import numpy as np

from ..physics import G0, mission, weights
from ..physics import aerodynamics as aero
from ..physics import atmosphere as atm
from ..solvers import secant_in_bracket
from ..spec import AircraftSpec
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
                 cd0_cruise, consumption: CruiseConsumption, air: AirStates) -> MissionFuel:
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
    w_i = w * f_pre
    ld_i = aero.lift_to_drag(w_i / (q_cr * s_ref), cd0_cruise, k_cr)
    ratio = mission.cruise_weight_ratio(ms.range_m, v_cr, ld_i, eta, sfc_p, sfc_t, is_jet)
    w_mid = w_i / np.sqrt(ratio)
    ld_mid = aero.lift_to_drag(w_mid / (q_cr * s_ref), cd0_cruise, k_cr)
    ratio = mission.cruise_weight_ratio(ms.range_m, v_cr, ld_mid, eta, sfc_p, sfc_t, is_jet)
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


@dataclass(frozen=True, slots=True)
class MassGroups:
    """Empty-mass groups (before the empty-mass factor) and the empty mass (after it)."""

    wing_kg: np.ndarray
    engine_kg: np.ndarray
    high_lift_kg: np.ndarray
    structure_systems_kg: np.ndarray
    empty_kg: np.ndarray


def mass_groups(spec: AircraftSpec, takeoff_mass_kg, wing_area_m2, rated, wing_mass_coefficient,
                hl: HighLift, empty_mass_factor, ix=slice(None)) -> MassGroups:
    """Wing, engine, high-lift and remaining groups of the empty mass.

    Parameters
    ----------
    spec : AircraftSpec
        Resolved study: engine mass data, structure-and-systems fraction [-], fixed
        equipment [kg].
    takeoff_mass_kg, wing_area_m2 : ndarray
        Takeoff mass [kg] and wing area [m^2] of designs ``ix``.
    rated : ndarray
        Sea-level static thrust [N] (turbofan) or rated power [W] of designs ``ix``.
    wing_mass_coefficient : ndarray
        K of the wing mass K m^x, mass-independent, of designs ``ix``. [kg^(1-x)]
    hl : HighLift
        High-lift areas and masses of all designs (``ix`` picks them). [-], [kg m^-2], [kg]
    empty_mass_factor : ndarray or float
        Multiplies the sum of the groups (of designs ``ix``). [-]

    Returns
    -------
    MassGroups
        Group masses [kg] and the empty mass [kg].

    References
    ----------
    .. [1] USAF light-aircraft wing equation and the engine and high-lift masses of
       :mod:`optimiser.physics.weights` (each cited there).
    """
    wt = spec.weights
    pr = spec.propulsion
    m_wing = wing_mass_coefficient * takeoff_mass_kg ** weights.WING_MASS_USAF_EXPONENT
    if pr.family == "turbofan":
        m_eng = weights.turbofan_engine_mass(rated, pr.engine_thrust_to_weight,
                                             pr.engine_installation_factor)
    else:
        m_eng = weights.propeller_engine_mass(rated, pr.engine_specific_mass)
    m_hl = weights.high_lift_mass(wing_area_m2, hl.flap_area_ratio[ix],
                                  hl.flap_mass_per_area_kg_m2[ix], hl.slat_area_ratio[ix],
                                  hl.slat_mass_per_area_kg_m2[ix], hl.actuator_mass_kg[ix])
    m_rest = wt.structure_systems_fraction * takeoff_mass_kg + wt.fixed_equipment_kg
    empty = empty_mass_factor * (m_wing + m_eng + m_hl + m_rest)
    return MassGroups(m_wing, m_eng, m_hl, m_rest, empty)


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
    return ClosureInputs(spec, batch, air, drag, hl, consumption, wing_k, emf)


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
        components = component_drag(spec, drag.build_up, s_ref, ar_i, rated)
        cd0_cruise = components.cd0_cruise_friction * at(drag.cd0_scale, ix) + drag.wave_cd0
    cons = c.consumption
    fuel = mission_fuel(spec, takeoff_mass_kg, s_ref, k_cr, cd0_cruise,
                        CruiseConsumption(at(cons.propeller_efficiency, ix),
                                          at(cons.sfc_kg_J, ix), at(cons.tsfc_kg_N_s, ix)),
                        c.air)
    masses = mass_groups(spec, takeoff_mass_kg, s_ref, rated, c.wing_mass_coefficient[ix],
                         c.high_lift, at(c.empty_mass_factor, ix), ix)
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

    Secant steps on the residual kept inside a bracket (payload + crew, the mass limit),
    iterating only over the designs not yet converged; the residual is nearly linear in
    the mass, so a few steps suffice. The first step is the classic fixed-fraction update
    m = fixed / (1 - (fuel + empty) / m): a secant through the point (0, -fixed).

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
    cap_kg = fixed_kg * wt.mass_limit_ratio
    cap = np.full_like(ws, cap_kg)
    m0 = min(fixed_kg / 0.45, 0.5 * cap_kg)
    n = ws.size
    r2 = _residual(c, np.concatenate([cap, np.full(n, m0)]), np.concatenate([np.arange(n)] * 2))
    r_cap, r0 = r2[:n], r2[n:]  # at the mass limit and the first try
    closes = r_cap > 0.0
    # at the low end the residual is taken as -fixed mass, its limit for a vanishing
    # airplane: a weight for the step, not a value
    m, converged = secant_in_bracket(
        functools.partial(_residual, c), np.full_like(ws, m0), r0, closes,
        low=fixed_kg * 1.0001, high=cap_kg, f_low=-fixed_kg, f_high=r_cap, x_prev=0.0,
        f_prev=-fixed_kg, rtol=1e-9, nan_low=-fixed_kg)
    closes &= converged
    m_to = np.where(closes, m, cap)
    return MassClosure(m_to, np.where(closes | (r_cap <= 0.0), r_cap / cap, -1.0),
                       mass_state(c, m_to))
