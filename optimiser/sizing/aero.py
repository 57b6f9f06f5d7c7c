"""Air states of a study's operating cases and the airplane's aerodynamics: clean drag, high
lift, the low-speed and cruise drag polars."""

from __future__ import annotations

import functools
from dataclasses import dataclass, fields, replace

import numpy as np

from ..physics import aerodynamics as aero
from ..physics import atmosphere as atm
from ..physics import highlift
from ..spec import AircraftSpec
from .layout import BuildUpInputs, ComponentDrag, build_up_inputs


@functools.lru_cache(maxsize=256)
def isa_state(h_m: float, dt_K: float = 0.0):
    """(density, temperature, pressure, speed of sound) of the ISA at ``h_m`` with a
    temperature offset, as floats; cached (a study asks for the same few states on every
    call)."""
    rho = float(atm.isa_density(h_m, dt_K))
    t = float(atm.isa_temperature(h_m, dt_K))
    return rho, t, float(atm.isa_pressure(h_m)), float(atm.speed_of_sound(t))


@dataclass(frozen=True, slots=True)
class AirStates:
    """Air at the departure and destination airfields and at cruise, the cruise speed, and the
    airfields' wind and runway friction. Study-wide scalars, or one per design where the
    overrides give them (the cruise states with the cruise altitude as a variable; the
    airfields' with sampled operating conditions)."""

    density_takeoff_kg_m3: float
    temperature_takeoff_K: float
    pressure_takeoff_Pa: float
    density_landing_kg_m3: float
    density_cruise_kg_m3: float
    temperature_cruise_K: float
    pressure_cruise_Pa: float
    sound_speed_cruise_m_s: float
    cruise_speed_m_s: float  # true airspeed flown
    cruise_mach: float
    cruise_dynamic_pressure_Pa: float
    departure_temperature_offset_K: float = 0.0
    temperature_landing_K: float = 288.15
    pressure_landing_Pa: float = 101325.0
    destination_temperature_offset_K: float = 0.0
    headwind_takeoff_m_s: float | np.ndarray | None = None  # as given; None: still air
    headwind_landing_m_s: float | np.ndarray | None = None
    rolling_friction: float = 0.03  # departure runway [-]
    braking_friction: float = 0.4  # destination runway [-]

    def take(self, ix) -> "AirStates":
        """The states of designs ``ix`` (per-design cruise states indexed, scalars kept)."""
        if np.ndim(self.density_cruise_kg_m3) == 0 or isinstance(ix, slice) \
                and ix == slice(None):
            return self
        return replace(self, **{f: getattr(self, f)[ix] for f in _CRUISE_FIELDS})


_CRUISE_FIELDS = ("density_cruise_kg_m3", "temperature_cruise_K", "pressure_cruise_Pa",
                  "sound_speed_cruise_m_s", "cruise_mach", "cruise_dynamic_pressure_Pa")
"""The fields of :class:`AirStates` that are per design when the cruise altitude is."""


def air_states(spec: AircraftSpec, overrides=None) -> AirStates:
    """Air states of the study's operating cases: study-wide scalars, except the cruise
    states, which are one per design where ``overrides`` holds a ``cruise_altitude_m`` per
    design (the cruise altitude as a decision variable).

    Parameters
    ----------
    spec : AircraftSpec
        Resolved study: airfield elevations [m] and temperature offsets [K], cruise altitude
        [m], offset [K] and true airspeed [m s^-1].
    overrides : dict, optional
        Per-design values; ``cruise_altitude_m`` [m] makes the cruise states per design,
        ``departure_temperature_offset_K`` and ``destination_temperature_offset_K`` [K] the
        airfields'; ``departure_headwind_m_s``, ``destination_headwind_m_s`` [m s^-1],
        ``rolling_friction`` and ``braking_friction`` [-] are carried for the field stages.

    Returns
    -------
    AirStates
        Densities [kg m^-3], temperatures [K], pressures [Pa], the speed of sound [m s^-1],
        the cruise Mach number [-] and dynamic pressure [Pa].

    References
    ----------
    .. [1] NOAA, NASA and USAF, "U.S. Standard Atmosphere, 1976", NOAA-S/T 76-1562, 1976
       (via :mod:`optimiser.physics.atmosphere`).
    """
    dep, dst, ms = spec.departure, spec.destination, spec.mission
    ov = overrides or {}
    dt_to = ov.get("departure_temperature_offset_K", dep.temperature_offset_K)
    dt_ld = ov.get("destination_temperature_offset_K", dst.temperature_offset_K)
    rho_to, t_to, p_to = _airfield_state(dep.elevation_m, dt_to)
    rho_ld, t_ld, p_ld = _airfield_state(dst.elevation_m, dt_ld)
    h_cr = ov.get("cruise_altitude_m")
    if h_cr is None:
        rho_cr, t_cr, p_cr, a_cr = isa_state(ms.cruise_altitude_m, ms.cruise_temperature_offset_K)
    else:
        h_cr = np.asarray(h_cr, dtype=float)
        rho_cr = atm.isa_density(h_cr, ms.cruise_temperature_offset_K)
        t_cr = atm.isa_temperature(h_cr, ms.cruise_temperature_offset_K)
        p_cr, a_cr = atm.isa_pressure(h_cr), atm.speed_of_sound(t_cr)
    v_cr = ms.cruise_speed_m_s
    return AirStates(rho_to, t_to, p_to, rho_ld, rho_cr, t_cr, p_cr, a_cr, v_cr, v_cr / a_cr,
                     0.5 * rho_cr * v_cr**2, dt_to, t_ld, p_ld, dt_ld,
                     ov.get("departure_headwind_m_s"), ov.get("destination_headwind_m_s"),
                     ov.get("rolling_friction", dep.rolling_friction),
                     ov.get("braking_friction", dst.braking_friction))


def _airfield_state(elevation_m, offset_K):
    """(density, temperature, pressure) at an airfield: floats for a study-wide offset (from
    :func:`isa_state`), arrays for one offset per design."""
    if np.ndim(offset_K) == 0:
        return isa_state(elevation_m, offset_K)[:3]
    dt = np.asarray(offset_K, dtype=float)
    return (atm.isa_density(elevation_m, dt), atm.isa_temperature(elevation_m, dt),
            np.full_like(dt, float(atm.isa_pressure(elevation_m))))


@dataclass(frozen=True, slots=True)
class HighLift:
    """Per-design numbers of the chosen high-lift option and the airplane CLmax and CD0 with it."""

    cl_increment_takeoff: np.ndarray
    cl_increment_landing: np.ndarray
    cd0_increment_takeoff: np.ndarray
    cd0_increment_landing: np.ndarray
    flap_area_ratio: np.ndarray
    flap_mass_per_area_kg_m2: np.ndarray
    slat_area_ratio: np.ndarray
    slat_mass_per_area_kg_m2: np.ndarray
    actuator_mass_kg: np.ndarray
    flap_items: np.ndarray
    flap_supports_min: np.ndarray
    flap_support_spacing_m: np.ndarray
    slat_items: np.ndarray
    slat_supports_min: np.ndarray
    slat_support_spacing_m: np.ndarray
    flapped_span_fraction: np.ndarray
    slat_span_fraction: np.ndarray
    support_weight: np.ndarray
    slat_cl_increment_takeoff: np.ndarray  # the slats' part, swept wing [-]
    slat_cl_increment_landing: np.ndarray  # the slats' part, swept wing [-]
    cl_max_takeoff: np.ndarray  # airplane CLmax, takeoff configuration [-]
    cl_max_landing: np.ndarray  # airplane CLmax, landing configuration [-]


_CATALOGUE_FIELDS = tuple(f.name for f in fields(HighLift))[:-2]


@functools.lru_cache(maxsize=32)
def _high_lift_table(options):
    """Per-option arrays of the high-lift numbers (cached per tuple of options)."""
    return {f: np.array([getattr(h, f) for h in options], dtype=float) for f in _CATALOGUE_FIELDS}


def high_lift(spec: AircraftSpec, high_lift_index, aspect_ratio) -> HighLift:
    """Catalogue numbers of each design's high-lift option and the airplane CLmax with it.

    The catalogue's CLmax increments are those of an unswept hinge line; each design's are
    scaled by cos(Lambda) of its own planform: the flap's part by the hinge-line sweep at
    x/c = 1 - c_f/c (c_f/c of :data:`optimiser.physics.highlift.FLAP_CHORD_RATIO`), the slats'
    part by the leading-edge sweep (x/c = 0), both from the quarter-chord sweep, taper and
    this design's aspect ratio (:func:`optimiser.physics.highlift.sweep_at_chord_fraction`).

    Parameters
    ----------
    spec : AircraftSpec
        Resolved study: the high-lift options, the clean CLmax [-], quarter-chord sweep [rad]
        and taper ratio [-].
    high_lift_index : ndarray of int
        Index into ``spec.high_lift``, one per design. [-]
    aspect_ratio : ndarray
        Wing aspect ratio, one per design. [-]

    Returns
    -------
    HighLift
        Increments of CLmax [-] and CD0 [-], areas [-], masses [kg, kg m^-2], item counts [-],
        support spacings [m], span fractions [-], and CLmax in takeoff and landing [-].

    References
    ----------
    .. [1] The catalogue of :mod:`optimiser.physics.highlift` (each entry cites its source;
       dCLmax proportional to cos(Lambda_hinge)); trapezoidal planform geometry (derived
       there).
    """
    ad = spec.aerodynamics
    table = _high_lift_table(spec.high_lift)
    hl = {f: v[high_lift_index] for f, v in table.items()}
    cos_hinge = np.cos(highlift.hinge_line_sweep(ad.sweep_quarter_chord_rad, aspect_ratio,
                                                 ad.taper_ratio))
    cos_le = np.cos(highlift.sweep_at_chord_fraction(ad.sweep_quarter_chord_rad, aspect_ratio,
                                                     ad.taper_ratio, 0.0))
    for phase in ("takeoff", "landing"):
        slat = hl[f"slat_cl_increment_{phase}"] * cos_le
        hl[f"cl_increment_{phase}"] = (hl[f"cl_increment_{phase}"]
                                       - hl[f"slat_cl_increment_{phase}"]) * cos_hinge + slat
        hl[f"slat_cl_increment_{phase}"] = slat
    cl_clean = ad.cl_max_clean
    return HighLift(**hl, cl_max_takeoff=cl_clean + hl["cl_increment_takeoff"],
                    cl_max_landing=cl_clean + hl["cl_increment_landing"])


@dataclass(frozen=True, slots=True)
class CleanDrag:
    """Drag numbers of the clean airplane: mass-independent when the CD0 is pinned; with the
    build-up, ``cd0`` and ``cd0_cruise`` are None until the wing area is known
    (:func:`built_up_drag`)."""

    cd0: np.ndarray | float | None  # clean zero-lift drag (per design with an override) [-]
    cd0_cruise: np.ndarray | float | None  # with the wave drag at the cruise Mach number [-]
    gear_cd0: float  # extended retractable gear, 0 for a fixed gear (in cd0 already) [-]
    oswald_wing_cruise: np.ndarray  # Oswald factor of the wing alone at cruise Mach [-]
    build_up: BuildUpInputs | None = None  # study-wide part of the build-up (geometry given)
    wave_cd0: float | np.ndarray = 0.0  # wave drag at the cruise Mach number [-]
    cd0_scale: np.ndarray | float = 1.0  # per-design factor on the clean CD0 [-]
    pinned: bool = True  # the clean CD0 is the study's cd0_clean or a per-design override


def built_up_drag(drag: CleanDrag, components: ComponentDrag | None) -> CleanDrag:
    """The clean drag with the build-up's CD0 [-] (x the per-design ``cd0_scale``, cruise
    with the wave drag) where the CD0 is not pinned; ``drag`` itself where it is."""
    if drag.pinned:
        return drag
    return replace(drag, cd0=components.cd0 * drag.cd0_scale,
                   cd0_cruise=components.cd0_cruise_friction * drag.cd0_scale + drag.wave_cd0)


def clean_drag(spec: AircraftSpec, aspect_ratio, air: AirStates, overrides) -> CleanDrag:
    """Clean zero-lift drag with the cruise wave drag, and the wing's cruise Oswald factor.

    With ``cd0_method = "fixed"`` (or a per-design ``cd0_clean`` override) the clean CD0 is
    that number; with ``"build_up"`` it follows the wing area and the engines, so only the
    study-wide part of the build-up is gathered here (:func:`~optimiser.sizing.layout.build_up_inputs`)
    and the CD0 is found with the mass (:func:`~optimiser.sizing.layout.component_drag`).

    Parameters
    ----------
    spec : AircraftSpec
        Resolved study: CD0 [-], gear, drag-divergence Mach [-], wing planform.
    aspect_ratio : ndarray
        Wing aspect ratio. [-]
    air : AirStates
        Cruise Mach number. [-]
    overrides : dict
        Per-design ``cd0_clean`` [-] (pins the clean CD0), ``cd0_scale`` [-] (multiplies the
        clean CD0, pinned or built up) and ``oswald_factor_scale`` [-], when given.

    Returns
    -------
    CleanDrag
        CD0 clean and in cruise [-] (None with the build-up), the gear increment [-], the
        wing's Oswald factor [-] (the fuselage factor, which depends on the span, is applied
        with the mass), the build-up's study-wide part, the wave drag [-].

    References
    ----------
    .. [1] M. Nita and D. Scholz, "Estimating the Oswald factor from basic aircraft geometrical
       parameters", DLRK 2012; Lock's wave-drag law (via :mod:`optimiser.physics.aerodynamics`).
    """
    ad = spec.aerodynamics
    gear = ad.gear_drag_increment if ad.landing_gear == "retractable" else 0.0
    wave = aero.wave_drag_lock(air.cruise_mach, ad.drag_divergence_mach)
    wave = float(wave) if np.ndim(wave) == 0 else wave  # per design with the cruise altitude
    scale = overrides.get("cd0_scale", 1.0)
    pinned = ad.cd0_method == "fixed" or "cd0_clean" in overrides
    if pinned:
        cd0 = overrides.get("cd0_clean", ad.cd0_clean)
        if "cd0_scale" in overrides:
            cd0 = cd0 * scale
        cd0_cruise = cd0 + wave
    else:
        cd0 = cd0_cruise = None
    build = build_up_inputs(spec, air) if spec.geometry.fuselage_length_m is not None else None
    e_wing_cr = aero.oswald_factor(ad.oswald_method, aspect_ratio, ad.taper_ratio,
                                   ad.sweep_quarter_chord_rad, 0.0, air.cruise_mach,
                                   ad.oswald_k_ed0)
    e_scale = overrides.get("oswald_factor_scale")
    if e_scale is not None:
        e_wing_cr = e_wing_cr * e_scale
    return CleanDrag(cd0, cd0_cruise, gear, e_wing_cr, build, wave, scale, pinned)


def cruise_induced_drag(spec: AircraftSpec, oswald_wing_cruise, aspect_ratio, span_m):
    """Cruise Oswald factor (wing x fuselage factor at this span) and induced-drag factor.

    Parameters
    ----------
    spec : AircraftSpec
        Resolved study: Oswald method and fuselage diameter [m].
    oswald_wing_cruise : ndarray
        Oswald factor of the wing alone at cruise Mach. [-]
    aspect_ratio, span_m : ndarray
        Aspect ratio [-] and span [m].

    Returns
    -------
    (ndarray, ndarray)
        Oswald factor e [-] and K = 1 / (pi A e) [-].

    References
    ----------
    .. [1] M. Nita and D. Scholz, DLRK 2012 (fuselage factor k_e,F).
    """
    ad = spec.aerodynamics
    e_cr = oswald_wing_cruise * aero.oswald_fuselage_factor(ad.oswald_method,
                                                            ad.fuselage_diameter_m / span_m)
    return e_cr, aero.induced_drag_factor(aspect_ratio, e_cr)


@dataclass(frozen=True, slots=True)
class LowSpeedPolar:
    """Drag polar at low speed (takeoff, climb, landing)."""

    oswald_e: np.ndarray  # [-]
    induced_drag_factor: np.ndarray  # K = 1 / (pi A e) [-]
    cd0_takeoff_flaps: np.ndarray  # clean + takeoff flaps, gear up [-]
    cd0_takeoff: np.ndarray  # takeoff flaps and (retractable) gear down [-]
    cd0_landing: np.ndarray  # landing flaps and (retractable) gear down [-]


def low_speed_polar(spec: AircraftSpec, aspect_ratio, span_m, drag: CleanDrag, hl: HighLift,
                    overrides) -> LowSpeedPolar:
    """Low-speed Oswald factor (Mach 0.2) and the zero-lift drag of each configuration.

    Parameters
    ----------
    spec : AircraftSpec
        Resolved study: Oswald method and wing planform, fuselage diameter [m].
    aspect_ratio, span_m : ndarray
        Aspect ratio [-] and span [m] of the sized wing.
    drag : CleanDrag
        Clean CD0 [-] and gear increment [-].
    hl : HighLift
        CD0 increments of the flaps [-].
    overrides : dict
        Per-design ``oswald_factor_scale`` [-], when given.

    Returns
    -------
    LowSpeedPolar
        Oswald factor [-], K [-], CD0 of the takeoff and landing configurations [-].

    References
    ----------
    .. [1] M. Nita and D. Scholz, "Estimating the Oswald factor from basic aircraft geometrical
       parameters", DLRK 2012.
    """
    ad = spec.aerodynamics
    e_low = aero.oswald_factor(ad.oswald_method, aspect_ratio, ad.taper_ratio,
                               ad.sweep_quarter_chord_rad, ad.fuselage_diameter_m / span_m, 0.2,
                               ad.oswald_k_ed0)
    e_scale = overrides.get("oswald_factor_scale")
    if e_scale is not None:
        e_low = e_low * e_scale
    k_low = aero.induced_drag_factor(aspect_ratio, e_low)
    e_low = 1.0 / (np.pi * aspect_ratio * k_low)
    cd0_flaps = drag.cd0 + hl.cd0_increment_takeoff
    return LowSpeedPolar(e_low, k_low, cd0_flaps, cd0_flaps + drag.gear_cd0,
                         drag.cd0 + hl.cd0_increment_landing + drag.gear_cd0)
