"""Frozen, SI-only description of what the sizing model needs.

These dataclasses are the contract between the study layer (which reads TOML, converts units
with pint and validates) and the sizing layer (which only sees plain floats in SI units).
Each field's ``metadata`` carries what the study loader needs to read it:

``unit``
    pint unit the value is stored in (the TOML value must be a string with a unit of the
    same dimension); absent for dimensionless numbers, which are bare TOML numbers.
``min`` / ``max``
    inclusive validity range in the stored unit; ``min_open`` makes the lower bound exclusive.
``doc``
    one line for the study reference in DEVELOPERS.md.

Family-dependent defaults live in :data:`FAMILY_DEFAULTS`; every default names its source.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any


def _f(default: Any = None, *, unit: str | None = None, lo: float | None = None,
       hi: float | None = None, lo_open: bool = False, doc: str = "", required: bool = False):
    meta = {"unit": unit, "min": lo, "max": hi, "min_open": lo_open, "doc": doc,
            "required": required}
    if required:
        return field(metadata=meta)
    return field(default=default, metadata=meta)


PROPULSION_FAMILIES = ("piston", "turboprop", "turbofan")
CERTIFICATION_BASES = ("part23", "part25")
CD0_METHODS = ("build_up", "fixed")
"""How the clean CD0 is found: built up from the components, or the study's fixed value."""


@dataclass(frozen=True, kw_only=True)
class Airfield:
    """One airfield of the mission (departure or destination)."""

    elevation_m: float = _f(0.0, unit="m", lo=-500.0, hi=5000.0,
                            doc="airfield elevation, taken as pressure altitude")
    temperature_offset_K: float = _f(0.0, unit="K", lo=-60.0, hi=50.0,
                                     doc="ISA temperature offset of the design day")
    runway: str = _f("paved_dry", doc="runway surface, a key of the surface table")
    field_length_m: float = _f(unit="m", lo=50.0, hi=6000.0, required=True,
                               doc="field length available (takeoff or landing)")
    obstacle_height_m: float | None = _f(None, unit="m", lo=0.0, hi=30.0,
                                         doc="screen height; default from the certification basis")
    rolling_friction: float | None = _f(None, lo=0.0, hi=0.5,
                                        doc="override of the surface's rolling friction")
    braking_friction: float | None = _f(None, lo=0.01, hi=1.0, lo_open=True,
                                        doc="override of the surface's braking friction")


@dataclass(frozen=True, kw_only=True)
class Propulsion:
    """Engine family, count and installed characteristics."""

    family: str = _f(required=True, doc="piston, turboprop or turbofan")
    engine_count: int = _f(required=True, lo=1, hi=4, doc="number of engines")
    sfc_cruise: float | None = _f(None, unit="kg/J", lo=1e-9, hi=1e-6,
                                  doc="power-specific fuel consumption (piston, turboprop)")
    tsfc_cruise: float | None = _f(None, unit="kg/N/s", lo=1e-6, hi=5e-5,
                                   doc="thrust-specific fuel consumption at cruise (turbofan)")
    propeller_efficiency_cruise: float | None = _f(None, lo=0.3, hi=0.95,
                                                     doc="propeller efficiency in cruise")
    propeller_efficiency_climb: float | None = _f(None, lo=0.3, hi=0.95,
                                                    doc="propeller efficiency in takeoff and climb")
    propeller_figure_of_merit: float = _f(0.70, lo=0.3, hi=0.9,
                                          doc="static figure of merit (McCormick, momentum theory)")
    propeller_rpm_cruise: float | None = _f(None, lo=300.0, hi=6000.0,
                                            doc="propeller rpm in cruise (after any gearbox)")
    propeller_rpm_takeoff: float | None = _f(None, lo=300.0, hi=6000.0,
                                             doc="propeller rpm at takeoff")
    propeller_tip_mach_max: float = _f(0.85, lo=0.5, hi=1.0,
                                       doc="helical tip Mach limit in cruise (common practice)")
    propeller_tip_speed_takeoff_max_m_s: float = _f(
        260.0, unit="m/s", lo=150.0, hi=340.0,
        doc="static tip speed limit at takeoff (common practice)")
    cruise_power_fraction: float | None = _f(None, lo=0.3, hi=1.0,
                                             doc="power or thrust setting for the cruise-speed check")
    climb_power_fraction: float = _f(1.0, lo=0.3, hi=1.0,
                                     doc="max-continuous over takeoff rating in climb")
    turboprop_lapse_exponent: float = _f(0.75, lo=0.3, hi=1.5,
                                         doc="n in P/P_SL = sigma^n")
    turboprop_flat_rating_margin: float = _f(1.15, lo=1.0, hi=1.6,
                                             doc="thermodynamic over rated power at SL ISA")
    turbocharged_critical_altitude_m: float = _f(0.0, unit="m", lo=0.0, hi=10000.0,
                                                 doc="piston: full power held to this altitude")
    turbofan_throttle_ratio: float = _f(1.05, lo=1.0, hi=1.2,
                                        doc="throttle ratio TR of the Mattingly lapse")
    engine_specific_mass: float | None = _f(None, unit="kg/kW", lo=0.05, hi=3.0,
                                            doc="installed engine mass per rated power (props)")
    engine_thrust_to_weight: float | None = _f(None, lo=2.0, hi=10.0,
                                               doc="bare turbofan static thrust over its weight")
    engine_installation_factor: float | None = _f(None, lo=1.0, hi=2.5,
                                                  doc="installed over bare engine mass (turbofan)")


@dataclass(frozen=True, kw_only=True)
class Aerodynamics:
    """Fixed aerodynamic assumptions of the study."""

    cd0_clean: float | None = _f(None, lo=0.005, hi=0.1, lo_open=True,
                                 doc="clean zero-lift drag coefficient, pinned (cd0_method "
                                 "'fixed'); family default when neither it nor the geometry "
                                 "is given")
    cd0_method: str | None = _f(None, doc="'build_up' (components, needs [geometry] "
                                "fuselage_length) or 'fixed' (cd0_clean); default build_up "
                                "when fuselage_length is given and cd0_clean is not")
    cl_max_clean: float | None = _f(None, lo=0.8, hi=2.2, doc="clean airplane CLmax")
    oswald_method: str = _f("nita_scholz2012", doc="key of the Oswald-factor registry")
    oswald_k_ed0: float | None = _f(None, lo=0.6, hi=1.0, doc="Nita & Scholz k_e,D0")
    fuselage_diameter_m: float = _f(unit="m", lo=0.5, hi=8.0, required=True,
                                    doc="for the Oswald factor (d_F / b) and the fuselage mass")
    taper_ratio: float = _f(0.6, lo=0.1, hi=1.0, doc="tip over root chord")
    sweep_quarter_chord_rad: float = _f(0.0, unit="rad", lo=0.0, hi=0.7,
                                        doc="quarter-chord sweep")
    thickness_ratio: float = _f(0.15, lo=0.06, hi=0.24, doc="wing thickness over chord")
    wing_height_m: float = _f(1.0, unit="m", lo=0.2, hi=6.0,
                              doc="height of the wing above the runway during the ground roll")
    ground_effect_method: str = _f("mccormick", doc="mccormick or wieselsberger")
    cl_ground_roll: float = _f(0.5, lo=0.0, hi=2.0, doc="lift coefficient during the ground roll")
    landing_gear: str = _f("fixed", doc="fixed or retractable")
    gear_drag_increment: float = _f(0.020, lo=0.0, hi=0.1,
                                    doc="CD0 of extended retractable gear (Roskam Pt I Tbl 3.6)")
    engine_out_drag_increment: float = _f(0.004, lo=0.0, hi=0.05,
                                          doc="windmilling/feathered engine and trim drag")
    flapped_span_fraction: float = _f(0.6, lo=0.1, hi=0.95, doc="S_flapped / S_ref")
    slat_span_fraction: float = _f(0.8, lo=0.1, hi=0.95, doc="slatted span over span")
    drag_divergence_mach: float = _f(0.80, lo=0.5, hi=0.95, doc="for the wave-drag rise")


@dataclass(frozen=True, kw_only=True)
class Geometry:
    """Layout of the airplane beyond the wing: fuselage, tails, nacelles, miscellaneous drag
    and fuel tanks (for the drag build-up and the fuel volume)."""

    fuselage_length_m: float | None = _f(None, unit="m", lo=2.0, hi=80.0,
                                         doc="overall fuselage length; with it the clean CD0 "
                                         "is built up from the components")
    nose_fineness: float = _f(1.5, lo=0.3, hi=5.0,
                              doc="nose length over fuselage diameter (common practice 1-2)")
    tailcone_fineness: float = _f(2.5, lo=0.5, hi=6.0,
                                  doc="tail-cone length over fuselage diameter (common "
                                  "practice 2-3.5)")
    horizontal_tail_volume: float | None = _f(None, lo=0.2, hi=1.6,
                                              doc="S_H l_H / (S c_bar); default by class "
                                              "(physics.geometry.TAIL_VOLUME_COEFFICIENTS)")
    vertical_tail_volume: float | None = _f(None, lo=0.01, hi=0.2,
                                            doc="S_V l_V / (S b); default by class")
    tail_arm_fraction: float = _f(0.5, lo=0.2, hi=0.8,
                                  doc="tail moment arm over fuselage length (common practice)")
    tail_thickness_ratio: float = _f(0.10, lo=0.06, hi=0.18,
                                     doc="thickness over chord of both tails")
    nacelle_count: int | None = _f(None, lo=0, hi=4,
                                   doc="podded nacelles; default one per engine on a "
                                   "multi-engine airplane, none on a single")
    laminar_fraction: float = _f(0.0, lo=0.0, hi=0.6,
                                 doc="share of the wing's and tails' wetted area in laminar "
                                 "flow")
    fixed_gear_drag_area_m2: float | None = _f(None, unit="m^2", lo=0.0, hi=5.0,
                                               doc="D/q of a fixed landing gear (used with "
                                               "landing_gear = 'fixed'); default by family")
    strut_drag_area_m2: float = _f(0.0, unit="m^2", lo=0.0, hi=2.0,
                                   doc="D/q of wing struts and external bracing")
    cooling_drag_fraction: float | None = _f(None, lo=0.0, hi=0.3,
                                             doc="engine cooling drag over the components' "
                                             "friction drag; default by family")
    leakage_protuberance_fraction: float | None = _f(None, lo=0.0, hi=0.3,
                                                     doc="leaks, gaps, antennas, rivets over "
                                                     "the components' friction drag; default "
                                                     "by family")
    wing_fuel_share: float | None = _f(None, lo=0.1, hi=1.0,
                                       doc="usable share of the wing box volume (ribs, "
                                       "spars, dry bays, flapped span); default by family")
    fuselage_tank_volume_m3: float = _f(0.0, unit="m^3", lo=0.0, hi=200.0,
                                        doc="usable fuel volume in the fuselage")
    tip_tank_volume_m3: float = _f(0.0, unit="m^3", lo=0.0, hi=20.0,
                                   doc="usable fuel volume of tip tanks, both together")


@dataclass(frozen=True, kw_only=True)
class Weights:
    """Payload and empty-mass build-up assumptions."""

    payload_kg: float = _f(unit="kg", lo=1.0, hi=60000.0, required=True,
                           doc="passengers, bags and freight")
    crew_kg: float = _f(unit="kg", lo=0.0, hi=2000.0, required=True, doc="crew with bags")
    ultimate_load_factor: float | None = _f(None, lo=2.0, hi=12.0,
                                            doc="n_ult for the wing mass")
    wing_mass_factor: float = _f(1.0, lo=0.3, hi=3.0, doc="calibration of the wing equation")
    mass_method: str = _f("components", doc="components (class II masses by group) or "
                          "fraction (structure and systems as a share of m_TO, class I)")
    structure_systems_fraction: float | None = _f(None, lo=0.05, hi=0.6,
                                                  doc="fraction method: fuselage, tails, gear, "
                                                  "systems / m_TO")
    engine_dry_specific_mass: float | None = _f(
        None, unit="kg/kW", lo=0.05, hi=2.0,
        doc="components, Part 23 propellers: dry engine mass per rated power")
    fuel_density_kg_m3: float | None = _f(None, unit="kg/m^3", lo=500.0, hi=1000.0,
                                          doc="fuel density, for the fuel volume and the "
                                          "fuel-system mass; default 0.72 kg/l avgas "
                                          "(piston), 0.80 kg/l kerosene")
    fuel_tank_count: int = _f(2, lo=1, hi=12, doc="separate fuel tanks (fuel-system mass)")
    integral_tank_fraction: float | None = _f(None, lo=0.0, hi=1.0,
                                              doc="share of the fuel in integral (wet) tanks")
    flight_control_coefficient: float | None = _f(
        None, lo=0.1, hi=1.0, doc="Torenbeek k_sc of the flight-control mass; default "
        "0.23 (Part 23) or 0.44 (Part 25)")
    fixed_equipment_kg: float | None = _f(None, unit="kg", lo=0.0, hi=20000.0,
                                          doc="avionics, electrical, furnishings and other "
                                          "fixed items; default by family and mass method")
    actuator_unit_mass_kg: float = _f(3.0, unit="kg", lo=0.0, hi=200.0,
                                      doc="mass of one high-lift actuator (per side)")
    empty_mass_factor: float = _f(1.0, lo=0.5, hi=2.0, doc="multiplies the whole empty mass")
    mass_limit_ratio: float = _f(40.0, lo=2.0, hi=200.0,
                                 doc="closure search stops at this multiple of payload + crew")


@dataclass(frozen=True, kw_only=True)
class Mission:
    """Design mission."""

    range_m: float = _f(unit="m", lo=1e3, hi=2e7, required=True, doc="design range (cruise)")
    cruise_altitude_m: float = _f(unit="m", lo=0.0, hi=15000.0, required=True,
                                  doc="pressure altitude of the cruise")
    cruise_speed_m_s: float = _f(unit="m/s", lo=10.0, hi=300.0, required=True,
                                 doc="true airspeed flown and required")
    cruise_temperature_offset_K: float = _f(0.0, unit="K", lo=-60.0, hi=50.0,
                                            doc="ISA offset in cruise and for the ceiling")
    reserve_time_s: float = _f(0.0, unit="s", lo=0.0, hi=4 * 3600.0,
                               doc="reserve flown at cruise speed")
    reserve_range_m: float = _f(0.0, unit="m", lo=0.0, hi=2e6, doc="diversion distance")
    fraction_startup: float | None = _f(None, lo=0.9, hi=1.0, doc="Roskam Pt I Tbl 2.1")
    fraction_taxi: float | None = _f(None, lo=0.9, hi=1.0, doc="Roskam Pt I Tbl 2.1")
    fraction_takeoff: float | None = _f(None, lo=0.9, hi=1.0, doc="Roskam Pt I Tbl 2.1")
    fraction_climb: float | None = _f(None, lo=0.8, hi=1.0, doc="Roskam Pt I Tbl 2.1")
    fraction_descent: float | None = _f(None, lo=0.9, hi=1.0, doc="Roskam Pt I Tbl 2.1")
    fraction_landing: float | None = _f(None, lo=0.9, hi=1.0, doc="Roskam Pt I Tbl 2.1")
    trapped_fuel_fraction: float = _f(0.005, lo=0.0, hi=0.05,
                                      doc="trapped fuel and oil / m_TO (Roskam Pt I)")
    landing_mass_ratio: float = _f(1.0, lo=0.5, hi=1.0, doc="landing over takeoff mass")


@dataclass(frozen=True, kw_only=True)
class Requirements:
    """Limits every design must meet (cruise speed is in the mission)."""

    stall_speed_m_s: float = _f(unit="m/s", lo=10.0, hi=120.0, required=True,
                                doc="stall speed in landing configuration, SL, at takeoff mass")
    climb_rate_m_s: float = _f(unit="m/s", lo=0.0, hi=100.0, lo_open=True, required=True,
                               doc="all-engines rate of climb at the departure airfield")
    service_ceiling_m: float = _f(unit="m", lo=0.0, hi=20000.0, lo_open=True, required=True,
                                  doc="where the best climb rate is 100 ft/min, at takeoff mass")
    max_takeoff_mass_kg: float | None = _f(None, unit="kg", lo=10.0, hi=500000.0,
                                           doc="upper limit of takeoff mass; default from the "
                                           "certification basis (Part 23 weight limits)")
    landing_dispatch_factor: bool = _f(False, doc="Part 23: the operator applies the 60 % "
                                       "landing rule (14 CFR 135.385(b)); Part 25 always does")
    skip_checks: tuple[tuple[str, str], ...] = _f((), doc="Part 25 climb checks switched off, "
                                                  "a table name = \"reason\"")
    max_span_m: float | None = _f(None, unit="m", lo=1.0, hi=200.0,
                                  doc="largest wing span allowed (a hangar, a gate, an aerodrome "
                                  "code letter); none by default")
    margins: tuple[tuple[str, float], ...] = _f((), doc="design margins required on "
                                                "constraints, a table name = fraction (0 to 0.5)")


@dataclass(frozen=True, kw_only=True)
class Speeds:
    """Speed schedule as multiples of the relevant stall speed."""

    liftoff_speed_factor: float = _f(1.2, lo=1.05, hi=1.5, doc="V_LO / V_s,TO")
    transition_speed_factor: float = _f(1.15, lo=1.05, hi=1.5, doc="V_TR / V_s,TO (Anderson)")
    transition_load_factor: float = _f(1.19, lo=1.05, hi=1.5, doc="n in the flare-up arc")
    rotation_time_s: float = _f(1.0, unit="s", lo=0.0, hi=6.0,
                                doc="1 s small, up to 3 s large airplanes (Anderson)")
    climb_speed_factor: float = _f(1.2, lo=1.1, hi=1.6, doc="V_climb,min / V_s")
    approach_speed_factor: float = _f(1.3, lo=1.1, hi=1.5, doc="V_A / V_s,L")
    flare_speed_factor: float = _f(1.23, lo=1.05, hi=1.5, doc="V_F / V_s,L (Anderson)")
    approach_angle_rad: float = _f(0.05236, unit="rad", lo=0.01, hi=0.2,
                                   doc="approach path angle (3 deg)")
    free_roll_time_s: float = _f(3.0, unit="s", lo=0.0, hi=10.0,
                                 doc="free roll before braking (Anderson)")
    climb_speed_limit: bool | None = _f(
        None, doc="hold the climb to 250 kn indicated below 10 000 ft, 14 CFR 91.117(a) "
        "(default: true for turbofan, false for propeller studies)")


@dataclass(frozen=True, kw_only=True)
class HighLift:
    """One high-lift configuration (a flap type, optionally with slats), airplane level.

    Built by :func:`optimiser.physics.highlift.high_lift_config`; see there for the sources.
    """

    name: str
    cl_increment_takeoff: float
    cl_increment_landing: float
    cd0_increment_takeoff: float
    cd0_increment_landing: float
    flap_area_ratio: float
    flap_mass_per_area_kg_m2: float
    slat_area_ratio: float
    slat_mass_per_area_kg_m2: float
    actuators: float
    actuator_mass_kg: float
    flap_items: float
    flap_supports_min: float
    flap_support_spacing_m: float
    slat_items: float
    slat_supports_min: float
    slat_support_spacing_m: float
    flapped_span_fraction: float
    slat_span_fraction: float
    support_weight: float
    slat_cl_increment_takeoff: float = 0.0  # the slats' part of cl_increment_takeoff [-]
    slat_cl_increment_landing: float = 0.0  # the slats' part of cl_increment_landing [-]


@dataclass(frozen=True, kw_only=True)
class Certification:
    """Regulatory numbers from the certification basis (see physics.performance)."""

    basis: str
    aeo_climb_gradient_min: float
    oei_climb_gradient_min: float
    oei_climb_altitude_m: float
    oei_flaps_takeoff: bool
    aeo_climb_altitude_m: float
    balanced_field: bool
    field_length_factor: float
    landing_rule: str = "part23"  # key of performance.LANDING_DISTANCE_SHARE


@dataclass(frozen=True, kw_only=True)
class AircraftSpec:
    """Everything fixed in a study; the decision variables come separately as arrays."""

    propulsion: Propulsion
    aerodynamics: Aerodynamics
    weights: Weights
    mission: Mission
    requirements: Requirements
    speeds: Speeds
    departure: Airfield
    destination: Airfield
    certification: Certification
    high_lift: tuple[HighLift, ...]
    geometry: Geometry = Geometry()
    cruise_altitude_searched: bool = False  # [variables] cruise_altitude given: each design
    # flies its own, and the constraint cruise_ceiling keeps it at or below its service ceiling

    @property
    def uses_power_loading(self) -> bool:
        return self.propulsion.family in ("piston", "turboprop")

    @property
    def high_lift_names(self) -> tuple[str, ...]:
        return tuple(h.name for h in self.high_lift)


# Family defaults, used where a study leaves a value out. Each names its source.
FAMILY_DEFAULTS: dict[str, dict[str, dict[str, Any]]] = {
    "piston": {
        "propulsion": dict(
            sfc_cruise=7.5e-8,                 # 0.27 kg/kWh = 0.44 lb/(hp h), lean cruise [common practice]
            propeller_efficiency_cruise=0.80,  # Roskam Pt I Table 2.2 [from memory]
            propeller_efficiency_climb=0.75,   # Roskam Pt I Table 2.2, 0.7-0.77 [from memory]
            propeller_rpm_cruise=2400.0,       # direct-drive piston, 2200-2500 rpm [common practice]
            propeller_rpm_takeoff=2700.0,      # direct-drive piston, rated 2600-2800 rpm [common practice]
            cruise_power_fraction=0.75,        # 75 % power cruise [common practice]
            engine_specific_mass=1.35),        # 0.9 kg/kW dry x 1.5 installed [common practice]
        "aerodynamics": dict(cd0_clean=0.028, cl_max_clean=1.5, oswald_k_ed0=0.804),
        # cd0: GA 0.020-0.035 [common practice]; CLmax single prop 1.3-1.9, Roskam Pt I Tbl 3.1
        # [from memory]; k_eD0 GA, Nita & Scholz 2012 [from memory]
        "weights": dict(ultimate_load_factor=5.7,   # 1.5 x 3.8, normal category [from memory]
                        structure_systems_fraction=0.27,
                        engine_dry_specific_mass=0.90,   # dry piston 0.85-1.0 kg/kW [common practice]
                        fuel_density_kg_m3=720.0,        # avgas [common practice]
                        integral_tank_fraction=0.5),     # wet and bladder tanks mixed [common practice]
        # structure/systems share calibrated so that the demo's empty fraction is 0.55-0.65,
        # the range of Roskam Pt I Table 2.15 for single props [common practice]
        "geometry": dict(fixed_gear_drag_area_m2=0.15, cooling_drag_fraction=0.08,
                         leakage_protuberance_fraction=0.08, wing_fuel_share=0.55),
        # faired fixed tricycle gear of a light airplane, D/q 0.1-0.2 m^2; air-cooled engine
        # cooling 5-10 %; leaks and protuberances 5-10 % on a riveted light airplane; fuel in
        # the inboard bays only [all common practice]
    },
    "turboprop": {
        "propulsion": dict(
            sfc_cruise=8.33e-8,                # 0.30 kg/kWh = 0.49 lb/(shp h), Roskam Tbl 2.2 0.4-0.6
            propeller_efficiency_cruise=0.85,  # Roskam Pt I Table 2.2 [from memory]
            propeller_efficiency_climb=0.80,
            propeller_rpm_cruise=1700.0,       # geared turboprop, 1200-2000 rpm [common practice]
            propeller_rpm_takeoff=1700.0,      # constant-speed, same rpm at takeoff [common practice]
            cruise_power_fraction=0.90,        # max cruise power [common practice]
            engine_specific_mass=0.45),        # 0.25 kg/kW dry x 1.8 with propeller [common practice]
        "aerodynamics": dict(cd0_clean=0.024, cl_max_clean=1.5, oswald_k_ed0=0.804),
        "weights": dict(ultimate_load_factor=5.7, structure_systems_fraction=0.30,
                        engine_dry_specific_mass=0.25,   # dry turboprop 0.20-0.30 kg/kW [common practice]
                        fuel_density_kg_m3=800.0,        # kerosene [common practice]
                        integral_tank_fraction=1.0),     # wet wing [common practice]
        "geometry": dict(fixed_gear_drag_area_m2=0.30, cooling_drag_fraction=0.02,
                         leakage_protuberance_fraction=0.06, wing_fuel_share=0.70),
        # fixed gear (rare) of a commuter's wheel size; oil cooler and intakes 1-3 %; leaks
        # and protuberances 5-8 %; integral tanks between the nacelles and the tips
        # [all common practice]
    },
    "turbofan": {
        "propulsion": dict(
            tsfc_cruise=1.98e-5,               # 0.70 lb/(lbf h), business jets 0.5-0.9, Roskam Tbl 2.2
            cruise_power_fraction=0.90,        # cruise over max-climb thrust [common practice]
            engine_thrust_to_weight=5.0,       # bare engine T/W 4-6 [common practice]
            engine_installation_factor=1.3),   # nacelle and pylon 1.2-1.4 [common practice]
        "aerodynamics": dict(cd0_clean=0.020, cl_max_clean=1.4, oswald_k_ed0=0.873),
        # jets 0.015-0.020 [common practice]; business jet CLmax 1.4-1.8 Roskam Tbl 3.1 [from memory]
        "weights": dict(ultimate_load_factor=3.75,  # 1.5 x 2.5, 14 CFR 25.337 [from memory]
                        structure_systems_fraction=0.32,
                        fuel_density_kg_m3=800.0,        # kerosene [common practice]
                        integral_tank_fraction=1.0),     # wet wing [common practice]
        "geometry": dict(fixed_gear_drag_area_m2=0.30, cooling_drag_fraction=0.0,
                         leakage_protuberance_fraction=0.04, wing_fuel_share=0.80),
        # no cooling drag beyond the nacelle; leaks and protuberances 3-5 %; integral wing
        # tanks over most of the span [all common practice]
    },
}

FUSELAGE_FINENESS = {"piston": 6.5, "turboprop": 8.0, "turbofan": 7.5}
"""Fuselage length over diameter where a study gives no ``[geometry] fuselage_length`` (the
component masses need one; the clean CD0 is then pinned) [common practice:
light singles 6-7, commuters and light jets 7-9]."""

FLIGHT_CONTROL_COEFFICIENT = {"part23": 0.23, "part25": 0.44}
"""Torenbeek's k_sc by basis: light airplanes without duplicated controls; transports with
manual controls (Synthesis 1982, sec. 8.4.4) [from memory]."""

FIXED_EQUIPMENT_DEFAULTS = {
    # avionics, electrical, furnishings, air conditioning and other fixed items [kg]
    "components": {"piston": 150.0, "turboprop": 850.0, "turbofan": 600.0},
    # 10-15 % of a typical takeoff mass of the class (a six-seat single of about 1 500 kg,
    # a 19-seat commuter of about 6 000 kg, a light jet of about 4 000 kg), METHODS.md sec. 5
    # [common practice]
    "fraction": {"piston": 60.0, "turboprop": 450.0, "turbofan": 600.0},
    # beside the class I share, which carries the systems [common practice]
}
"""Default ``[weights] fixed_equipment`` by mass method and family."""

MASS_METHODS = ("components", "fraction")
"""``[weights] mass_method``: class II masses by group (default) or the class I share."""


def segment_class(family: str, engine_count: int) -> str:
    """Row of the segment-fraction table for a family and engine count."""
    if family == "piston":
        return "single_engine_prop" if engine_count == 1 else "twin_engine_prop"
    if family == "turboprop":
        return "regional_turboprop"
    return "business_jet"
