"""The airplane's layout at a wing area: clean zero-lift drag by component build-up, and the
fuel volume of the wing and any other tanks.

The build-up is split in two: :func:`build_up_inputs` gathers the study-wide numbers once
per batch (the fuselage's drag area, the Reynolds number per metre, form factors, the
compressibility factor); :func:`component_drag` adds the parts that follow the wing area and
the engine rating (wing, tails, nacelles) inside the mass closure.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from typing import TYPE_CHECKING

import numpy as np

from ..physics import atmosphere as atm
from ..physics import drag as dg
from ..physics import geometry as geo
from ..spec import AircraftSpec

if TYPE_CHECKING:
    from .aero import AirStates


@dataclass(frozen=True, slots=True)
class BuildUpInputs:
    """Study-wide numbers of the drag build-up (floats; the cruise Reynolds number, the
    compressibility factor and the fuselage's drag area per design when the cruise altitude
    is a decision variable)."""

    reynolds_per_m: float | np.ndarray  # rho V / mu at cruise [m^-1]
    compressibility: float | np.ndarray  # turbulent-friction factor at the cruise Mach [-]
    laminar_fraction: float  # of the wing's and tails' wetted area [-]
    wing_form_factor: float
    tail_form_factor: float
    nacelle_form_factor: float
    fuselage_wetted_area_m2: float
    fuselage_drag_area_m2: float | np.ndarray  # C_f FF Q S_wet at cruise Reynolds [m^2]
    fixed_drag_area_m2: float  # fixed gear and struts [m^2]
    markup: float  # 1 + cooling + leakage and protuberance fractions [-]
    tail_arm_m: float
    nacelle_count: int

    def take(self, ix) -> "BuildUpInputs":
        """The inputs of designs ``ix`` (per-design numbers indexed, scalars kept)."""
        if np.ndim(self.reynolds_per_m) == 0 or isinstance(ix, slice) and ix == slice(None):
            return self
        return replace(self, reynolds_per_m=self.reynolds_per_m[ix],
                       compressibility=self.compressibility[ix],
                       fuselage_drag_area_m2=self.fuselage_drag_area_m2[ix])


def _scalar_or_array(x):
    """A float for a study-wide number, the array for a per-design one."""
    return float(x) if np.ndim(x) == 0 else np.asarray(x, dtype=float)


def build_up_inputs(spec: AircraftSpec, air: AirStates) -> BuildUpInputs:
    """The mass-independent part of the build-up, at the cruise air state.

    Every component's Reynolds number is taken at cruise (density, speed, Sutherland
    viscosity at the cruise temperature); the same skin friction serves the low-speed clean
    CD0 (takeoff, climb, landing) without the compressibility factor, a small conservative
    simplification (friction falls with the lower Reynolds number at low speed).

    Parameters
    ----------
    spec : AircraftSpec
        Resolved study: [geometry], fuselage diameter [m], landing gear, wing t/c [-].
    air : AirStates
        Cruise density [kg m^-3], temperature [K], speed [m s^-1] and Mach number [-].

    Returns
    -------
    BuildUpInputs
        Reynolds number per metre [m^-1], factors [-], fuselage areas [m^2], fixed drag
        areas [m^2], the tail arm [m] and the nacelle count [-].

    References
    ----------
    .. [1] The laws of :mod:`optimiser.physics.drag` (Prandtl-Schlichting, Blasius, Hoerner
       1965, Torenbeek 1982) and the shapes of :mod:`optimiser.physics.geometry`.
    """
    ad, g = spec.aerodynamics, spec.geometry
    re_per_m = _scalar_or_array(dg.reynolds_number(
        air.density_cruise_kg_m3, air.cruise_speed_m_s, 1.0,
        atm.dynamic_viscosity(air.temperature_cruise_K)))
    fus = geo.fuselage_geometry(g.fuselage_length_m, ad.fuselage_diameter_m, g.nose_fineness,
                                g.tailcone_fineness)
    f_fus = _scalar_or_array(dg.drag_area(dg.skin_friction_turbulent_prandtl_schlichting(
        re_per_m * fus.length_m), dg.form_factor_body_hoerner1965(fus.fineness_ratio),
        dg.INTERFERENCE_FACTORS["fuselage"], fus.wetted_area_m2))
    fixed_gear = g.fixed_gear_drag_area_m2 if ad.landing_gear == "fixed" else 0.0
    nacelle_fineness = geo.NACELLE_SIZING[spec.propulsion.family][2]
    return BuildUpInputs(
        re_per_m, _scalar_or_array(dg.skin_friction_compressibility_factor(air.cruise_mach)),
        g.laminar_fraction, float(dg.form_factor_wing_torenbeek1982(ad.thickness_ratio)),
        float(dg.form_factor_wing_torenbeek1982(g.tail_thickness_ratio)),
        float(dg.form_factor_body_hoerner1965(nacelle_fineness)),
        float(fus.wetted_area_m2), f_fus, fixed_gear + g.strut_drag_area_m2,
        1.0 + g.cooling_drag_fraction + g.leakage_protuberance_fraction,
        g.tail_arm_fraction * g.fuselage_length_m, g.nacelle_count)


@dataclass(frozen=True, slots=True)
class ComponentDrag:
    """Wetted areas, drag areas and the clean CD0 of the build-up (arrays, one per design)."""

    wing_wetted_area_m2: np.ndarray
    fuselage_wetted_area_m2: float
    horizontal_tail_area_m2: np.ndarray
    vertical_tail_area_m2: np.ndarray
    tail_wetted_area_m2: np.ndarray  # both tails
    nacelle_wetted_area_m2: np.ndarray  # all nacelles
    wing_drag_area_m2: np.ndarray
    fuselage_drag_area_m2: float | np.ndarray
    tail_drag_area_m2: np.ndarray
    nacelle_drag_area_m2: np.ndarray
    misc_drag_area_m2: np.ndarray  # gear, struts, cooling, leaks and protuberances
    cd0: np.ndarray  # clean, low speed (no compressibility factor) [-]
    cd0_cruise_friction: np.ndarray  # clean at the cruise Mach number, before wave drag [-]


def _surface(b: BuildUpInputs, form_factor, interference, exposed_area_m2, exposed_taper,
             thickness_ratio, mac_m):
    """Wetted and drag area [m^2] of a lifting surface, its skin friction at the Reynolds
    number of its mean aerodynamic chord."""
    s_wet = geo.wing_wetted_area_torenbeek1982(exposed_area_m2, thickness_ratio, exposed_taper)
    re = b.reynolds_per_m * mac_m
    cf = (dg.skin_friction_mixed(re, b.laminar_fraction) if b.laminar_fraction > 0.0
          else dg.skin_friction_turbulent_prandtl_schlichting(re))
    return s_wet, dg.drag_area(cf, form_factor, interference, s_wet)


def _tail(b: BuildUpInputs, area_m2, aspect_ratio, thickness_ratio):
    """Wetted and drag area [m^2] of a tail surface, all of it exposed (planform of
    :func:`optimiser.physics.geometry.tail_geometry`, without its sweeps)."""
    lam = geo.TAIL_TAPER_RATIO
    c_r = geo.root_chord(area_m2, geo.wing_span(area_m2, aspect_ratio), lam)
    return _surface(b, b.tail_form_factor, dg.INTERFERENCE_FACTORS["tail"], area_m2, lam,
                    thickness_ratio, geo.mean_aerodynamic_chord(c_r, lam))


def component_drag(spec: AircraftSpec, b: BuildUpInputs, wing_area_m2, aspect_ratio,
                   rated) -> ComponentDrag:
    """Clean CD0 = (sum of C_f FF Q S_wet) (1 + cooling + leakage) / S + (gear + struts) / S.

    Parameters
    ----------
    spec : AircraftSpec
        Resolved study: wing planform [-], fuselage diameter [m], family and engine count.
    b : BuildUpInputs
        The study-wide part (:func:`build_up_inputs`).
    wing_area_m2, aspect_ratio : ndarray
        Reference wing area [m^2] and aspect ratio [-] of each design.
    rated : ndarray
        Sea-level static thrust [N] (turbofan) or rated power [W], all engines, per design.

    Returns
    -------
    ComponentDrag
        Wetted areas [m^2], drag areas [m^2], CD0 at low speed and in cruise (before the
        wave drag) [-].

    Notes
    -----
    The wing and the tails follow the wing area (tails by their volume coefficients at the
    study's tail arm), the nacelles the engine rating; the fuselage is fixed by the study.
    The wing's geometry is that of :func:`optimiser.physics.geometry.wing_geometry`, computed
    here without the sweeps it does not need (this runs inside the mass closure).

    References
    ----------
    .. [1] E. Torenbeek, "Synthesis of Subsonic Airplane Design", 1982, App. F (the
       build-up; from memory); the laws of :mod:`optimiser.physics.drag` and the shapes of
       :mod:`optimiser.physics.geometry` (each cited there).
    """
    ad, g = spec.aerodynamics, spec.geometry
    s = np.asarray(wing_area_m2, dtype=float)
    lam = ad.taper_ratio
    span = geo.wing_span(s, aspect_ratio)
    c_r = geo.root_chord(s, span, lam)
    mac = geo.mean_aerodynamic_chord(c_r, lam)
    d = np.minimum(ad.fuselage_diameter_m, span)
    exposed_taper = lam / (1.0 - (1.0 - lam) * d / span)
    wet_w, f_w = _surface(b, b.wing_form_factor, dg.INTERFERENCE_FACTORS["wing"],
                          geo.exposed_wing_area(s, span, c_r, lam, d), exposed_taper,
                          ad.thickness_ratio, mac)
    s_h, s_v = geo.tail_areas(s, mac, span, g.horizontal_tail_volume, g.vertical_tail_volume,
                              b.tail_arm_m)
    wet_h, f_h = _tail(b, s_h, geo.HORIZONTAL_TAIL_ASPECT_RATIO, g.tail_thickness_ratio)
    wet_v, f_v = _tail(b, s_v, geo.VERTICAL_TAIL_ASPECT_RATIO, g.tail_thickness_ratio)
    if b.nacelle_count > 0:
        d_n, l_n = geo.nacelle_size(spec.propulsion.family,
                                    np.asarray(rated, dtype=float) / spec.propulsion.engine_count)
        wet_n = b.nacelle_count * geo.nacelle_wetted_area(d_n, l_n)
        f_n = dg.drag_area(dg.skin_friction_turbulent_prandtl_schlichting(b.reynolds_per_m * l_n),
                           b.nacelle_form_factor, dg.INTERFERENCE_FACTORS["nacelle"], wet_n)
    else:
        wet_n = f_n = np.zeros_like(s)
    friction = f_w + b.fuselage_drag_area_m2 + f_h + f_v + f_n
    misc = friction * (b.markup - 1.0) + b.fixed_drag_area_m2
    cd0 = (friction * b.markup + b.fixed_drag_area_m2) / s
    cd0_cruise = (friction * (b.compressibility * b.markup) + b.fixed_drag_area_m2) / s
    return ComponentDrag(wet_w, b.fuselage_wetted_area_m2, s_h, s_v, wet_h + wet_v, wet_n, f_w,
                         b.fuselage_drag_area_m2, f_h + f_v, f_n, misc, cd0, cd0_cruise)


@dataclass(frozen=True, slots=True)
class FuelVolume:
    """Usable fuel volumes and the volume the mission's fuel needs (arrays) [m^3]."""

    wing_m3: np.ndarray  # usable, in the wing
    available_m3: np.ndarray  # wing + fuselage + tip tanks
    required_m3: np.ndarray  # fuel carried (trip, reserve, trapped) / density


def fuel_volume(spec: AircraftSpec, wing_area_m2, span_m, fuel_mass_kg) -> FuelVolume:
    """Usable tank volume against the volume of the fuel carried.

    Parameters
    ----------
    spec : AircraftSpec
        Resolved study: wing taper and t/c [-], [geometry] wing_fuel_share [-] and the other
        tanks [m^3], fuel density [kg m^-3].
    wing_area_m2, span_m : ndarray
        Wing reference area [m^2] and span [m].
    fuel_mass_kg : ndarray
        Trip + reserve + trapped fuel [kg].

    Returns
    -------
    FuelVolume
        Volumes [m^3].

    References
    ----------
    .. [1] E. Torenbeek, "Synthesis of Subsonic Airplane Design", 1982 (the wing-box volume,
       via :func:`optimiser.physics.geometry.wing_fuel_volume_torenbeek1982`); the usable
       share is common practice.
    """
    ad, g = spec.aerodynamics, spec.geometry
    wing = g.wing_fuel_share * geo.wing_fuel_volume_torenbeek1982(
        wing_area_m2, span_m, ad.thickness_ratio, ad.taper_ratio)
    return FuelVolume(wing, wing + (g.fuselage_tank_volume_m3 + g.tip_tank_volume_m3),
                      np.asarray(fuel_mass_kg, dtype=float) / spec.weights.fuel_density_kg_m3)
