"""Size a batch of designs completely: closed takeoff mass, mission fuel, every margin.

:func:`size_designs` composes named stages over arrays (one element per design, no Python
loop over designs). Inputs are the four decision variables; everything else comes from a
resolved :class:`~optimiser.spec.AircraftSpec` (SI, no ``None`` left). Each stage is a pure
function returning a frozen dataclass of arrays:

``design_batch`` (inputs) -> ``air_states`` -> ``clean_drag`` (with ``build_up_inputs``),
``high_lift``, ``cruise_consumption`` -> ``closure_inputs`` -> ``close_takeoff_mass`` (with
``component_drag``, ``mission_fuel`` and ``mass_groups`` inside) -> ``built_up_drag``,
``fuel_volume``, ``installed_propulsion``, ``low_speed_polar`` -> :class:`Airplane` -> ``takeoff``, ``oei_climb_gradient``,
``takeoff_field``, ``landing``, ``landing_field_required``, ``climb_and_ceiling``,
``aeo_climb_gradient_required``, ``transport_climb_segments``, ``cruise_speed`` ->
``constraint_margins``.

The stages after the closure take only an :class:`Airplane` (geometry, engines, high lift,
polar, mass) and the air states, so a fixed airplane can be analysed without re-closing it.

Margins are positive when a constraint is met, as a fraction of its limit:
``1 - value / limit`` for upper limits and ``value / limit - 1`` for lower limits.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..spec import AircraftSpec
from .aero import (AirStates, CleanDrag, HighLift, LowSpeedPolar, air_states, built_up_drag,
                   clean_drag, high_lift, low_speed_polar)
from .airplane import Airplane, airplane, maintenance_index
from .closure import (ClosureInputs, MassClosure, MassGroups, MissionFuel, close_takeoff_mass,
                      closure_inputs, mass_groups, mission_fuel)
from .columns import output_columns
from .engines import (CruiseConsumption, InstalledPropulsion, cruise_consumption,
                      installed_propulsion)
from .field import (Landing, Takeoff, TakeoffField, landing, landing_field_required, takeoff,
                    takeoff_field)
from .flight import (Climb, CruiseSpeed, TransportClimb, aeo_climb_gradient_required,
                     climb_and_ceiling, cruise_speed, oei_climb_gradient,
                     transport_climb_segments)
from .inputs import MODEL_RANGES, OVERRIDE_KEYS, DesignBatch, ModelRange, design_batch
from .layout import (BuildUpInputs, ComponentDrag, FuelVolume, build_up_inputs, component_drag,
                     fuel_volume)
from .margins import (CONSTRAINT_LABELS, OUTSIDE_MODEL_RANGE, Margins, active_constraints,
                      constraint_margins, required_margins)

__all__ = [
    "CONSTRAINT_LABELS", "MODEL_RANGES", "OUTSIDE_MODEL_RANGE", "OVERRIDE_KEYS", "AirStates",
    "Airplane", "BuildUpInputs", "CleanDrag", "Climb", "ClosureInputs", "ComponentDrag",
    "CruiseConsumption", "CruiseSpeed", "DesignBatch", "FuelVolume", "HighLift",
    "InstalledPropulsion", "Landing", "LowSpeedPolar", "Margins", "MassClosure", "MassGroups",
    "MissionFuel", "ModelRange", "SizedBatch", "Takeoff", "TakeoffField", "TransportClimb",
    "active_constraints", "aeo_climb_gradient_required", "air_states", "airplane",
    "build_up_inputs", "built_up_drag", "checked_constraints", "clean_drag", "climb_and_ceiling",
    "close_takeoff_mass", "closure_inputs", "component_drag", "constraint_margins",
    "cruise_consumption", "cruise_speed", "design_batch", "fuel_volume", "high_lift",
    "installed_propulsion", "landing", "landing_field_required", "low_speed_polar",
    "maintenance_index", "mass_groups", "mission_fuel", "oei_climb_gradient", "required_margins", "size_batch",
    "fly", "size_designs", "takeoff", "takeoff_field", "transport_climb_segments",
]


@dataclass(frozen=True, slots=True)
class SizedBatch:
    """Every stage's result for one batch (see the module docstring for the stages)."""

    batch: DesignBatch
    air: AirStates
    closure: MassClosure
    airplane: Airplane
    takeoff: Takeoff
    oei_climb_gradient: np.ndarray  # [-]
    takeoff_field: TakeoffField
    landing: Landing
    climb: Climb
    cruise_speed: CruiseSpeed
    margins: Margins
    maintenance_index: np.ndarray  # [-]
    landing_field_required_m: np.ndarray
    climb_gradient_required: np.ndarray  # [-]
    transport_climb: TransportClimb
    components: ComponentDrag | None  # drag build-up of the sized airplane (geometry given)
    fuel_volume: FuelVolume


def size_batch(spec: AircraftSpec, wing_loading_N_m2, loading, aspect_ratio, high_lift_index,
               overrides=None) -> SizedBatch:
    """Size every design of a batch and keep each stage's typed result.

    Parameters and units as :func:`size_designs`; returns a :class:`SizedBatch`.
    """
    batch = design_batch(spec, wing_loading_N_m2, loading, aspect_ratio, high_lift_index,
                         overrides)
    ov = batch.overrides
    air = air_states(spec, ov)
    drag = clean_drag(spec, batch.aspect_ratio, air, ov)
    hl = high_lift(spec, batch.high_lift_index, batch.aspect_ratio)
    consumption = cruise_consumption(spec, ov)
    closure = close_takeoff_mass(closure_inputs(spec, batch, air, drag, hl, consumption))
    st = closure.state
    components = st.components
    if components is None and drag.build_up is not None:  # pinned CD0: build-up for the record
        components = component_drag(spec, drag.build_up, st.wing_area_m2, batch.aspect_ratio,
                                    st.rated)
    drag = built_up_drag(drag, components)
    tanks = fuel_volume(spec, st.wing_area_m2, st.span_m, st.fuel.fuel_mass_kg)
    return fly(spec, batch, air, drag, hl, consumption, closure, closure.takeoff_mass_kg,
               st.wing_area_m2, st.span_m, st.rated, st.fuel, st.induced_drag_factor_cruise,
               components, tanks, closure.closure_margin)


def fly(spec: AircraftSpec, batch: DesignBatch, air: AirStates, drag: CleanDrag, hl: HighLift,
        consumption: CruiseConsumption, closure: MassClosure, mass_kg, wing_area_m2, span_m,
        rated, fuel: MissionFuel, induced_drag_factor_cruise, components, tanks: FuelVolume,
        first_margin, constraints=None, extra_margins=None,
        exempt_when_met=0) -> SizedBatch:
    """The stages after the mass: polar, engines, the :class:`Airplane` at ``mass_kg`` [kg],
    every performance stage and the margins (shared by :func:`size_batch` and the
    frozen-design analysis, :func:`optimiser.sizing.frozen.analyse_batch`).

    ``first_margin`` [-] is the first constraint's margin (the mass closure when sizing, the
    fuel on board when analysing a fixed airplane); ``constraints`` and ``extra_margins``
    (name -> margin [-]) name a constraint list other than :func:`active_constraints`, and
    ``exempt_when_met`` (:func:`constraint_margins`) keeps that many leading constraints
    from being named limiting where they are met.
    """
    polar = low_speed_polar(spec, batch.aspect_ratio, span_m, drag, hl, batch.overrides)
    engines = installed_propulsion(spec, rated, batch.overrides)
    ap = airplane(mass_kg, batch.wing_loading_N_m2, batch.aspect_ratio, wing_area_m2, span_m,
                  engines, hl, drag, polar)
    to = takeoff(spec, ap, air)
    oei = oei_climb_gradient(spec, ap, air)
    field = takeoff_field(spec, ap, air, to, oei)
    land = landing(spec, ap, air)
    land_required = landing_field_required(spec, land.distance_m)
    climb = climb_and_ceiling(spec, ap, air)
    gradient_required = aeo_climb_gradient_required(spec, ap)
    transport = transport_climb_segments(spec, ap, air, to.liftoff_speed_m_s)
    cruise = cruise_speed(spec, ap, air, consumption.propeller_efficiency,
                          fuel.start_cruise_weight_N, induced_drag_factor_cruise)
    margins = constraint_margins(
        spec, closure_margin=first_margin, takeoff_mass_kg=ap.mass_kg,
        min_runway_acceleration_m_s2=to.min_runway_acceleration_m_s2,
        stall_speed_m_s=land.stall_speed_m_s, takeoff_field_required_m=field.required_m,
        landing_field_required_m=land_required, climb_rate_m_s=climb.climb_rate_m_s,
        climb_gradient=climb.climb_gradient, climb_gradient_required=gradient_required,
        oei_climb_gradient=oei, transport_climb=transport,
        cruise_speed_m_s=cruise.speed_m_s, service_ceiling_m=climb.service_ceiling_m,
        fuel_volume_required_m3=tanks.required_m3, fuel_volume_available_m3=tanks.available_m3,
        span_m=ap.span_m, model_range_margin=batch.model_range_margin,
        constraints=constraints, extra_margins=extra_margins,
        exempt_when_met=exempt_when_met,
        cruise_altitude_m=batch.overrides.get("cruise_altitude_m"))
    return SizedBatch(batch, air, closure, ap, to, oei, field, land, climb, cruise, margins,
                      maintenance_index(ap), land_required, gradient_required, transport,
                      components, tanks)


def checked_constraints(spec: AircraftSpec, sized: dict) -> tuple[str, ...]:
    """The constraints of a sized batch (``limiting_index`` indexes them): the study's
    :func:`active_constraints`, then ``outside_model_range`` where the batch has its margin."""
    names = active_constraints(spec)
    if f"margin_{OUTSIDE_MODEL_RANGE}" in sized:
        names += (OUTSIDE_MODEL_RANGE,)
    return names


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
        :func:`checked_constraints` of the smallest margin); the columns of
        :func:`size_batch`'s stages (:func:`~optimiser.sizing.columns.output_columns`).

    Notes
    -----
    Nothing is clipped silently: a design given outside the model's valid ranges
    (:data:`~optimiser.sizing.inputs.MODEL_RANGES`) or as NaN is sized at the nearest limit,
    so that no NaN arises, and marked infeasible: the batch gains the column
    ``margin_outside_model_range`` (negative by how far outside, relative to the limit),
    which is the limiting constraint of each such design.
    """
    return output_columns(spec, size_batch(spec, wing_loading_N_m2, loading, aspect_ratio,
                                           high_lift_index, overrides))
