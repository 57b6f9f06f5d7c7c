"""The output columns of a sized batch (the dict that :func:`size_designs` returns)."""

from __future__ import annotations

import numpy as np

from ..spec import AircraftSpec


_STACKED_CHECK_SIZE = 1 << 15
"""Up to this many values in all, the columns' finiteness is tested on one stacked copy (the
per-call cost dominates a small batch); above it column by column (no large copy)."""


def finite_columns(columns: dict, shape) -> dict:
    """The columns as float arrays of ``shape`` with no NaN or inf (a safety net: the model
    avoids them; NaN -> 0, +-inf -> +-1e12).

    An array of the right shape is kept as it is (no copy) unless it was already taken for
    another key or is a view into a larger array (a column of the margin matrix, a part of a
    stacked evaluation), so no two outputs share memory and an output keeps nothing larger
    than itself alive. In a small batch one finiteness test covers all columns (a stacked
    copy), so the cost does not grow with a Python call per column."""
    seen: set = set()
    out = {}
    for key, values in columns.items():
        a = np.asarray(values, dtype=float)
        base = a.base
        if a.shape != shape or id(a) in seen or (base is not None and base.size != a.size):
            a = np.array(np.broadcast_to(a, shape))
        seen.add(id(a))
        out[key] = a
    if not out:
        return out
    if len(out) * int(np.prod(shape)) <= _STACKED_CHECK_SIZE:  # small batch: one test for all
        good = np.isfinite(np.stack(list(out.values())).reshape(len(out), -1)).all(axis=1)
    else:  # large ones: no stacked copy
        good = [np.isfinite(a).all() for a in out.values()]
    for key, ok in zip(list(out), good):
        if not ok:
            out[key] = np.nan_to_num(out[key], nan=0.0, posinf=1e12, neginf=-1e12)
    return out


def _mass_columns(spec: AircraftSpec, sized) -> dict:
    """Mass, geometry and engine-size columns (the first of :func:`output_columns`)."""
    ap, st, wt = sized.airplane, sized.closure.state, spec.weights
    ws_c, m_to = ap.wing_loading_N_m2, ap.mass_kg
    emf = sized.batch.overrides.get("empty_mass_factor", wt.empty_mass_factor)
    masses, fuel = st.masses, st.fuel
    out = {
        "takeoff_mass_kg": m_to,
        "empty_mass_kg": masses.empty_kg,
        "fuel_mass_kg": fuel.fuel_mass_kg,
        "trip_fuel_kg": fuel.trip_fuel_kg,
        "reserve_fuel_kg": fuel.reserve_fuel_kg,
        "payload_kg": np.full_like(ws_c, wt.payload_kg),
        "crew_kg": np.full_like(ws_c, wt.crew_kg),
        "empty_mass_fraction": masses.empty_kg / m_to,
        "wing_mass_kg": masses.wing_kg * emf,
        "engine_mass_kg": masses.engine_kg * emf,
        "high_lift_mass_kg": masses.high_lift_kg * emf,
        "horizontal_tail_mass_kg": masses.horizontal_tail_kg * emf,
        "vertical_tail_mass_kg": masses.vertical_tail_kg * emf,
        "fuselage_mass_kg": masses.fuselage_kg * emf,
        "main_gear_mass_kg": masses.main_gear_kg * emf,
        "nose_gear_mass_kg": masses.nose_gear_kg * emf,
        "fuel_system_mass_kg": masses.fuel_system_kg * emf,
        "flight_controls_mass_kg": masses.flight_controls_kg * emf,
        "fixed_equipment_mass_kg": masses.fixed_equipment_kg * emf,
        "structure_systems_mass_kg": masses.structure_systems_kg * emf,
        "wing_area_m2": ap.wing_area_m2,
        "span_m": ap.span_m,
    }
    rated = ap.engines.rated
    if spec.propulsion.family == "turbofan":
        out["engine_thrust_kN"] = rated / 1e3
        # static thrust at the departure airfield: the sea-level rating lapsed to its
        # pressure and temperature at zero speed (the ground roll starts from the same)
        out["static_thrust_N"] = sized.takeoff.engines.thrust(np.zeros_like(rated), 1.0)
    else:
        out["engine_power_kW"] = rated / 1e3
        out["propeller_diameter_m"] = ap.engines.propeller_diameter_m
        out["static_thrust_N"] = sized.takeoff.engines.static
    return out


def output_columns(spec: AircraftSpec, sized) -> dict:
    """Columns of a :class:`~optimiser.sizing.SizedBatch`: name (unit suffix) -> array, in
    the order of the results schema, then ``feasible`` and ``limiting_index``."""
    ap, st, air = sized.airplane, sized.closure.state, sized.air
    to, land, climb, cruise, mg = (sized.takeoff, sized.landing, sized.climb, sized.cruise_speed,
                                   sized.margins)
    ws_c, fuel = ap.wing_loading_N_m2, st.fuel
    out = _mass_columns(spec, sized)
    if "cruise_altitude_m" in sized.batch.overrides:  # a decision variable: an input column
        out = {"cruise_altitude_m": sized.batch.overrides["cruise_altitude_m"], **out}
    out.update({
        "cd0": np.full_like(ws_c, ap.drag.cd0),
        "cd0_takeoff": ap.polar.cd0_takeoff,
        "cd0_landing": ap.polar.cd0_landing,
    })
    comp = sized.components
    if comp is not None:
        out.update({
            "cd0_build_up": comp.cd0,
            "wetted_area_m2": comp.wing_wetted_area_m2 + comp.fuselage_wetted_area_m2
            + comp.tail_wetted_area_m2 + comp.nacelle_wetted_area_m2,
            "wing_wetted_area_m2": comp.wing_wetted_area_m2,
            "fuselage_wetted_area_m2": comp.fuselage_wetted_area_m2,
            "horizontal_tail_area_m2": comp.horizontal_tail_area_m2,
            "vertical_tail_area_m2": comp.vertical_tail_area_m2,
            "tail_wetted_area_m2": comp.tail_wetted_area_m2,
            "nacelle_wetted_area_m2": comp.nacelle_wetted_area_m2,
            "wing_drag_area_m2": comp.wing_drag_area_m2,
            "fuselage_drag_area_m2": comp.fuselage_drag_area_m2,
            "tail_drag_area_m2": comp.tail_drag_area_m2,
            "nacelle_drag_area_m2": comp.nacelle_drag_area_m2,
            "misc_drag_area_m2": comp.misc_drag_area_m2,
        })
    tanks = sized.fuel_volume
    out.update({
        "oswald_e": ap.polar.oswald_e,
        "oswald_e_cruise": st.oswald_e_cruise,
        "cl_max_clean": np.full_like(ws_c, spec.aerodynamics.cl_max_clean),
        "cl_max_takeoff": ap.high_lift.cl_max_takeoff * np.ones_like(ws_c),
        "cl_max_landing": land.cl_max_landing,
        "cruise_lift_coefficient": fuel.mid_cruise_weight_N
        / (air.cruise_dynamic_pressure_Pa * ap.wing_area_m2),
        "cruise_lift_to_drag": fuel.cruise_lift_to_drag,
        "wing_fuel_volume_m3": tanks.wing_m3,
        "fuel_volume_m3": tanks.available_m3,
        "fuel_volume_required_m3": tanks.required_m3,
        "density_takeoff_kg_m3": np.full_like(ws_c, air.density_takeoff_kg_m3),
        "density_landing_kg_m3": np.full_like(ws_c, air.density_landing_kg_m3),
        "density_cruise_kg_m3": np.full_like(ws_c, air.density_cruise_kg_m3),
        "stall_speed_m_s": land.stall_speed_m_s,
        "stall_speed_takeoff_m_s": to.stall_speed_takeoff_m_s,
        "liftoff_speed_m_s": to.liftoff_speed_m_s,
        "thrust_liftoff_N": to.thrust_liftoff_N,
        "ground_effect_factor": to.ground_effect_factor,
        "min_runway_acceleration_m_s2": to.min_runway_acceleration_m_s2,
        "takeoff_ground_roll_m": to.ground_roll_m,
        "takeoff_rotation_m": to.rotation_m,
        "takeoff_air_distance_m": to.air_distance_m,
        "takeoff_distance_m": to.distance_m,
        "balanced_field_length_m": sized.takeoff_field.balanced_field_length_m,
        "takeoff_field_required_m": sized.takeoff_field.required_m,
        "approach_speed_m_s": land.approach_speed_m_s,
        "landing_approach_m": land.approach_m,
        "landing_flare_m": land.flare_m,
        "landing_ground_roll_m": land.ground_roll_m,
        "landing_distance_m": land.distance_m,
        "landing_field_required_m": sized.landing_field_required_m,
        "climb_speed_m_s": climb.climb_speed_m_s,
        "climb_rate_m_s": climb.climb_rate_m_s,
        "climb_gradient": climb.climb_gradient,
    })
    if spec.certification.basis == "part23":
        out["climb_gradient_required"] = sized.climb_gradient_required
    if spec.propulsion.engine_count > 1:
        out["oei_climb_gradient"] = sized.oei_climb_gradient
    if spec.certification.basis == "part25" and spec.propulsion.engine_count > 1:
        tc = sized.transport_climb
        out.update({"first_segment_gradient": tc.first_segment,
                    "final_takeoff_gradient": tc.final_takeoff,
                    "approach_climb_gradient": tc.approach,
                    "landing_climb_gradient": tc.landing})
    out.update({
        "cruise_speed_m_s": cruise.speed_m_s,
        "cruise_mach": cruise.mach,
        "service_ceiling_m": climb.service_ceiling_m,
        "maintenance_index": sized.maintenance_index,
    })
    for k, c in enumerate(mg.names):
        out[f"margin_{c}"] = mg.matrix[:, k]
    out = finite_columns(out, ws_c.shape)
    out["cd0_built_up"] = np.full(ws_c.shape, not ap.drag.pinned)
    out["oswald_mach_in_range"] = climb.ceiling_mach_in_range & ~cruise.at_mach_cap
    out["feasible"] = mg.feasible
    out["limiting_index"] = mg.limiting_index
    return out
