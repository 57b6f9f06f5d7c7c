"""``evaluate(study, designs) -> DataFrame``: the sizing model with named columns.

The frame holds the design inputs, every sized number (SI, unit suffixes), one
``margin_<constraint>`` per active constraint (positive = met, as a fraction of its limit),
``feasible``, ``limiting_constraint`` (the smallest margin) and ``most_violated`` (the same,
when infeasible; empty otherwise), ``within_bounds`` and ``outside_bounds`` (which inputs lie
outside the study's variable bounds: such designs are evaluated but flagged).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from .sizing import active_constraints, size_designs

CAUTION = ("Conceptual-design estimates only: not for certification, airworthiness or "
           "operational use. The applicable airworthiness authority's rules and licensed "
           "engineering practice govern.")


def design_columns(study) -> tuple[str, ...]:
    """The input columns a designs table must have for this study."""
    return ("wing_loading_N_m2", study.loading_column, "aspect_ratio", "flap")


def size_frame(study, wing_loading, loading, aspect_ratio, flap_index) -> pd.DataFrame:
    """Size arrays of designs (flap as index into ``study.spec.high_lift``) into a frame."""
    spec = study.spec
    out = size_designs(spec, wing_loading, loading, aspect_ratio, flap_index)
    names = active_constraints(spec)
    feasible = out.pop("feasible")
    limiting = np.asarray(names, dtype=object)[out.pop("limiting_index")]
    columns = {
        "wing_loading_N_m2": np.asarray(wing_loading, float),
        study.loading_column: np.asarray(loading, float),
        "aspect_ratio": np.asarray(aspect_ratio, float),
        "flap": np.asarray(spec.high_lift_names, dtype=object)[np.asarray(flap_index, int)],
    }
    columns.update(out)
    columns["feasible"] = feasible
    columns["limiting_constraint"] = limiting
    columns["most_violated"] = np.where(feasible, "", limiting).astype(object)
    # one block per dtype, built once (cheaper than concatenating frames per generation)
    return pd.DataFrame(columns, copy=False)


def evaluate(study, designs) -> pd.DataFrame:
    """Size every design of ``designs`` (a DataFrame, or a dict of columns) for ``study``.

    ``designs`` needs the columns of :func:`design_columns`; ``flap`` holds catalogue names
    (``"fowler"``, ``"single_slotted+slats"``). Raises ``ValueError`` naming a missing column
    or an unknown flap name.
    """
    from .designs import check_designs
    table = check_designs(study, pd.DataFrame(designs))
    names = study.spec.high_lift_names
    index = np.array([names.index(f) for f in table["flap"]], dtype=int)
    frame = size_frame(study, table["wing_loading_N_m2"].to_numpy(float),
                       table[study.loading_column].to_numpy(float),
                       table["aspect_ratio"].to_numpy(float), index)
    outside = []
    for col in design_columns(study)[:3]:
        v = study.variable(col)
        x = frame[col].to_numpy(float)
        outside.append(np.where((x < v.lower - 1e-9 * abs(v.lower)) | (x > v.upper + 1e-9 * abs(v.upper)),
                                col, ""))
    allowed = np.isin(frame["flap"].to_numpy(object), np.asarray(study.flaps, dtype=object))
    outside.append(np.where(allowed, "", "flap"))
    notes = [";".join(p for p in parts if p) for parts in zip(*outside)]
    frame["within_bounds"] = [n == "" for n in notes]
    frame["outside_bounds"] = notes
    return frame


COLUMN_DOCS = {
    "wing_loading_N_m2": "takeoff wing loading W/S [N/m^2] (input)",
    "power_loading_N_kW": "takeoff weight over installed sea-level rated power [N/kW] (input)",
    "thrust_to_weight": "installed sea-level static thrust over takeoff weight [-] (input)",
    "aspect_ratio": "wing aspect ratio [-] (input)",
    "flap": "high-lift configuration from the catalogue (input)",
    "takeoff_mass_kg": "closed takeoff mass: payload + crew + fuel + empty [kg]",
    "empty_mass_kg": "empty mass, sum of the groups below times the empty-mass factor [kg]",
    "fuel_mass_kg": "fuel carried: trip + reserve + trapped [kg]",
    "trip_fuel_kg": "fuel of the design mission, start-up to shut-down, no reserves [kg]",
    "reserve_fuel_kg": "reserve fuel (time and/or distance at cruise speed) [kg]",
    "payload_kg": "payload [kg]",
    "crew_kg": "crew [kg]",
    "empty_mass_fraction": "empty over takeoff mass [-]",
    "wing_mass_kg": "wing group (USAF light-aircraft equation x wing_mass_factor) [kg]",
    "engine_mass_kg": "installed engines (and propellers) [kg]",
    "high_lift_mass_kg": "flaps, slats and their actuators [kg]",
    "structure_systems_mass_kg": "fuselage, tails, gear, systems and fixed equipment [kg]",
    "wing_area_m2": "reference wing area S = m g / (W/S) [m^2]",
    "span_m": "span b = sqrt(A S) [m]",
    "engine_power_kW": "installed sea-level rated power, all engines [kW] (engine-size objective)",
    "engine_thrust_kN": "installed sea-level static thrust, all engines [kN] (engine-size objective)",
    "propeller_diameter_m": "propeller diameter from power per engine (Raymer form) [m]",
    "static_thrust_N": "static thrust at the departure airfield, all engines [N]",
    "cd0": "clean zero-lift drag coefficient [-]",
    "cd0_takeoff": "zero-lift drag, takeoff flaps (and gear if retractable) [-]",
    "cd0_landing": "zero-lift drag, landing flaps (and gear if retractable) [-]",
    "oswald_e": "Oswald factor at low speed (takeoff, climb) [-]",
    "oswald_e_cruise": "Oswald factor at the cruise Mach number [-]",
    "cl_max_clean": "clean airplane CLmax [-]",
    "cl_max_takeoff": "airplane CLmax, takeoff configuration [-]",
    "cl_max_landing": "airplane CLmax, landing configuration [-]",
    "cruise_lift_coefficient": "lift coefficient at mid-cruise weight and the cruise speed [-]",
    "cruise_lift_to_drag": "L/D at the mid-cruise lift coefficient, used in Breguet [-]",
    "density_takeoff_kg_m3": "air density at the departure airfield on the design day [kg/m^3]",
    "density_landing_kg_m3": "air density at the destination airfield [kg/m^3]",
    "density_cruise_kg_m3": "air density at cruise altitude [kg/m^3]",
    "stall_speed_m_s": "stall speed, landing configuration, sea-level density, takeoff mass [m/s]",
    "stall_speed_takeoff_m_s": "stall speed, takeoff configuration, departure airfield (TAS) [m/s]",
    "liftoff_speed_m_s": "lift-off speed = liftoff_speed_factor x takeoff stall speed (TAS) [m/s]",
    "thrust_liftoff_N": "thrust at lift-off, all engines [N]",
    "ground_effect_factor": "induced-drag factor phi in ground effect during the roll [-]",
    "min_runway_acceleration_m_s2": "smallest acceleration during the ground roll [m/s^2]",
    "takeoff_ground_roll_m": "ground roll, equation of motion integrated to lift-off [m]",
    "takeoff_rotation_m": "rotation distance, rotation time x lift-off speed [m]",
    "takeoff_air_distance_m": "transition and climb to the screen height [m]",
    "takeoff_distance_m": "all-engines takeoff distance to the screen height [m]",
    "balanced_field_length_m": "balanced field length (Part 25 multi-engine), else 0 [m]",
    "takeoff_field_required_m": "field length the rules require, compared with the available [m]",
    "approach_speed_m_s": "approach speed = approach_speed_factor x landing stall speed (TAS) [m/s]",
    "landing_approach_m": "landing: air distance of the approach from the screen height [m]",
    "landing_flare_m": "landing: flare distance [m]",
    "landing_ground_roll_m": "landing: free roll and braked ground roll [m]",
    "landing_distance_m": "landing distance from the screen height [m]",
    "climb_speed_m_s": "speed of the best all-engines climb at the departure airfield [m/s]",
    "climb_rate_m_s": "best all-engines rate of climb at the departure airfield, clean [m/s]",
    "climb_gradient": "all-engines gradient at sea level, takeoff flaps, gear up (Part 23 rule) [-]",
    "oei_climb_gradient": "one engine inoperative gradient at the basis' condition [-]",
    "cruise_speed_m_s": "highest level speed at cruise altitude and cruise setting [m/s]",
    "cruise_mach": "Mach number of that speed [-]",
    "service_ceiling_m": "altitude where the best climb rate is 100 ft/min, takeoff mass [m]",
    "maintenance_index": "relative maintenance complexity of the high-lift system, per side [-]",
    "feasible": "every margin >= 0",
    "limiting_constraint": "the constraint with the smallest margin",
    "most_violated": "the most violated constraint when infeasible, else empty",
    "within_bounds": "all inputs inside the study's variable bounds and allowed flaps",
    "outside_bounds": "which inputs lie outside the study's bounds (';'-separated)",
}
"""Meaning and unit of every output column of :func:`evaluate` (margins: see the module)."""
