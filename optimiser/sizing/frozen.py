"""A fixed airplane analysed as built: wing, engines, flap and empty mass frozen, one
operating case (mass, payload and fuel, airfields, cruise), no mass closure.

Sizing (:func:`optimiser.sizing.size_batch`) answers "what airplane do these requirements
give?"; this module answers "what does this airplane do on that day?". The airplane keeps
its wing area, aspect ratio, installed rating, flap option and empty mass; its mass is the
operating case's (the design's maximum takeoff mass unless the case says otherwise), its fuel
on board what that mass leaves after empty mass, crew and payload. Every performance stage
after the closure is the sizing's own (:func:`optimiser.sizing.fly`), so a sized design
converted with :func:`frozen_from_sized` and analysed at its design case reproduces the
sizing's numbers.

Two constraints replace the mass closure (:func:`analysis_constraints`):

``mission_fuel``
    the fuel on board covers the mission's fuel with reserves (trip + reserve + trapped, at
    this mass and the case's range): ``fuel on board / fuel needed - 1``. Within the mass
    closure's own tolerance (:data:`FUEL_BALANCE_TOLERANCE` of the takeoff mass) the two are
    taken as equal (margin 0), so a design analysed at its design case meets it.
``max_takeoff_mass``
    the takeoff mass within the design's maximum takeoff mass (the mass it was sized at,
    which its structure and its certification numbers assume): ``1 - m / m_max``.

The fuel-volume constraint checks the fuel on board (not the mission's) against the tanks.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from ..physics import G0, performance
from ..spec import AircraftSpec
from .aero import air_states, built_up_drag, clean_drag, cruise_induced_drag, high_lift
from .closure import MassClosure, MassGroups, MassState, mission_fuel
from .engines import cruise_consumption
from .inputs import design_batch
from .layout import component_drag, fuel_volume
from .margins import active_constraints

FUEL_BALANCE_TOLERANCE = 1e-6
"""Fuel on board and fuel needed closer than this share of the takeoff mass count as equal
[-]: the mass closure converges to 1e-9 of the mass (its ``rtol``), so a sized design's fuel
on board matches its mission fuel to about that (ours)."""

ANALYSIS_FIRST_CONSTRAINTS = ("mission_fuel", "max_takeoff_mass")
"""The constraints of a frozen design that take the place of ``mass_closure``."""


@dataclass(frozen=True, slots=True)
class FrozenDesigns:
    """Fixed airplanes, one element per design (SI).

    ``rated`` is the installed sea-level rating of all engines: static thrust [N] for
    turbofans, rated power [W] for propeller families."""

    wing_area_m2: np.ndarray
    aspect_ratio: np.ndarray  # [-]
    rated: np.ndarray  # [N] or [W]
    high_lift_index: np.ndarray  # index into spec.high_lift [-]
    empty_mass_kg: np.ndarray
    max_takeoff_mass_kg: np.ndarray
    cruise_altitude_m: np.ndarray | None = None  # the design's own, where it was a variable

    @property
    def size(self) -> int:
        """Number of designs."""
        return self.wing_area_m2.size

    @property
    def span_m(self) -> np.ndarray:
        """Span b = sqrt(A S) [m]."""
        return np.sqrt(self.aspect_ratio * self.wing_area_m2)


def frozen_designs(wing_area_m2, aspect_ratio, rated, high_lift_index, empty_mass_kg,
                   max_takeoff_mass_kg, cruise_altitude_m=None) -> FrozenDesigns:
    """:class:`FrozenDesigns` from array-likes (broadcast to one length; units as there);
    ``cruise_altitude_m`` [m], the design's own cruise altitude where the study makes it a
    variable (the default cruise altitude of its analysis)."""
    given = [wing_area_m2, aspect_ratio, rated, empty_mass_kg, max_takeoff_mass_kg]
    if cruise_altitude_m is not None:
        given.append(cruise_altitude_m)
    arrays = np.broadcast_arrays(*(np.asarray(a, dtype=float).ravel() for a in given),
                                 np.asarray(high_lift_index, dtype=int).ravel())
    s, ar, rated_, m_e, m_max, *h, idx = (np.array(a) for a in arrays)
    return FrozenDesigns(s, ar, rated_, idx.astype(int), m_e, m_max, h[0] if h else None)


def frozen_from_sized(sized: dict, high_lift_index, uses_power_loading: bool) -> FrozenDesigns:
    """The airplanes a sizing gave, frozen: wing area, aspect ratio (from span and area),
    rating, flap, empty mass, and their takeoff mass as the maximum takeoff mass.

    ``sized`` is :func:`optimiser.sizing.size_designs`' dict (or a frame of evaluate's
    columns: ``wing_area_m2``, ``span_m``, ``engine_power_kW`` or ``engine_thrust_kN``,
    ``empty_mass_kg``, ``takeoff_mass_kg``)."""
    s = np.asarray(sized["wing_area_m2"], dtype=float)
    b = np.asarray(sized["span_m"], dtype=float)
    rated = (np.asarray(sized["engine_power_kW"], dtype=float) * 1e3 if uses_power_loading
             else np.asarray(sized["engine_thrust_kN"], dtype=float) * 1e3)
    altitude = sized["cruise_altitude_m"] if "cruise_altitude_m" in sized else None
    return frozen_designs(s, b * b / s, rated, high_lift_index, sized["empty_mass_kg"],
                          sized["takeoff_mass_kg"], altitude)


CONDITION_FIELDS = {
    "departure_elevation_m": ("departure", "elevation_m"),
    "departure_temperature_offset_K": ("departure", "temperature_offset_K"),
    "departure_runway": ("departure", "runway"),
    "departure_field_length_m": ("departure", "field_length_m"),
    "destination_elevation_m": ("destination", "elevation_m"),
    "destination_temperature_offset_K": ("destination", "temperature_offset_K"),
    "destination_runway": ("destination", "runway"),
    "destination_field_length_m": ("destination", "field_length_m"),
    "cruise_altitude_m": ("mission", "cruise_altitude_m"),
    "cruise_speed_m_s": ("mission", "cruise_speed_m_s"),
    "cruise_temperature_offset_K": ("mission", "cruise_temperature_offset_K"),
    "range_m": ("mission", "range_m"),
}
"""Operating conditions a case may change (name -> section and field of the spec), in SI:
elevations and altitude [m] (pressure altitude), ISA offsets [K], runway surface (a key of
the surface table), field lengths [m], cruise true airspeed [m s^-1], range [m]."""


def case_spec(spec: AircraftSpec, **conditions) -> AircraftSpec:
    """The study's spec with the operating conditions of a case (keys of
    :data:`CONDITION_FIELDS`, SI; the caller checks the values). ``None`` values are left as
    the study's. Raises ``KeyError`` for an unknown key.

    A new runway surface brings its rolling and braking friction from the surface table
    (:data:`~optimiser.physics.performance.RUNWAY_SURFACES`; at the destination, dry braking
    where the dispatch rules apply their wet factor instead, as the study loader does); a
    study's own friction overrides hold only for its own runways."""
    changes: dict = {}
    for key, value in conditions.items():
        if value is None:
            continue
        section, field = CONDITION_FIELDS[key]
        changes.setdefault(section, {})[field] = value
        if field == "runway":
            roll, brake = performance.RUNWAY_SURFACES[value]
            dispatch = (spec.certification.landing_rule != "part23"
                        or spec.requirements.landing_dispatch_factor)
            if section == "destination" and dispatch \
                    and value in performance.WET_RUNWAY_DRY_SURFACE:
                brake = performance.RUNWAY_SURFACES[performance.WET_RUNWAY_DRY_SURFACE[value]][1]
            changes[section].update(rolling_friction=roll, braking_friction=brake)
    for section, fields in changes.items():
        spec = replace(spec, **{section: replace(getattr(spec, section), **fields)})
    return spec


@dataclass(frozen=True, slots=True)
class OperatingMasses:
    """The masses of one operating case, per design [kg]."""

    takeoff_mass_kg: np.ndarray
    payload_kg: np.ndarray
    fuel_on_board_kg: np.ndarray  # may be negative: the payload leaves no room for fuel


def operating_masses(spec: AircraftSpec, frozen: FrozenDesigns, takeoff_mass_kg=None,
                     payload_kg=None, fuel_kg=None) -> OperatingMasses:
    """Takeoff mass, payload and fuel on board of a case [kg].

    Give at most two of the three. ``payload_kg`` defaults to the study's payload. With a
    takeoff mass, the fuel on board is what it leaves after empty mass, crew and payload; with
    fuel, the takeoff mass is empty + crew + payload + fuel; with neither, the takeoff mass is
    the design's maximum takeoff mass. Source: the mass breakdown of Roskam, "Airplane Design",
    Part I, ch. 2 (takeoff = empty + crew + payload + fuel)."""
    n = frozen.size
    if takeoff_mass_kg is not None and fuel_kg is not None and payload_kg is not None:
        raise ValueError("give at most two of takeoff mass, payload and fuel")
    crew = spec.weights.crew_kg
    m_e = frozen.empty_mass_kg
    if takeoff_mass_kg is not None and fuel_kg is not None:
        m = _per_design(takeoff_mass_kg, n)
        fuel = _per_design(fuel_kg, n)
        return OperatingMasses(m, m - m_e - crew - fuel, fuel)
    payload = _per_design(spec.weights.payload_kg if payload_kg is None else payload_kg, n)
    if fuel_kg is not None:
        fuel = _per_design(fuel_kg, n)
        return OperatingMasses(m_e + crew + payload + fuel, payload, fuel)
    m = frozen.max_takeoff_mass_kg.copy() if takeoff_mass_kg is None else \
        _per_design(takeoff_mass_kg, n)
    return OperatingMasses(m, payload, m - m_e - crew - payload)


def _per_design(value, n) -> np.ndarray:
    return np.array(np.broadcast_to(np.asarray(value, dtype=float).ravel(), (n,)))


def analysis_constraints(spec: AircraftSpec) -> tuple[str, ...]:
    """The constraints of a frozen design: :data:`ANALYSIS_FIRST_CONSTRAINTS`, then the
    study's :func:`active_constraints` after ``mass_closure``."""
    return ANALYSIS_FIRST_CONSTRAINTS + active_constraints(spec)[1:]


def fuel_margin(fuel_on_board_kg, fuel_needed_kg, takeoff_mass_kg) -> np.ndarray:
    """``fuel on board / fuel needed - 1`` [-], 0 where the two differ by less than
    :data:`FUEL_BALANCE_TOLERANCE` of the takeoff mass (the closure's tolerance)."""
    on_board = np.asarray(fuel_on_board_kg, dtype=float)
    needed = np.asarray(fuel_needed_kg, dtype=float)
    balanced = np.abs(on_board - needed) <= FUEL_BALANCE_TOLERANCE * takeoff_mass_kg
    raw = on_board / np.maximum(needed, 1e-9) - 1.0
    return np.where(balanced, 0.0, raw)


@dataclass(frozen=True, slots=True)
class CruiseSetup:
    """The stages of a frozen design before its mission fuel, at one takeoff mass (SI)."""

    batch: object  # DesignBatch
    air: object  # AirStates
    drag: object  # CleanDrag (before the build-up is folded in)
    high_lift: object  # HighLift
    consumption: object  # CruiseConsumption
    e_cr: np.ndarray  # cruise Oswald factor [-]
    k_cr: np.ndarray  # cruise induced-drag factor [-]
    components: object  # ComponentDrag or None (pinned CD0)
    cd0_cruise: np.ndarray  # cruise CD0 with wave drag [-]


def cruise_setup(spec: AircraftSpec, frozen: FrozenDesigns, takeoff_mass_kg,
                 overrides=None) -> CruiseSetup:
    """Design batch, air, clean drag, high lift, consumption and the cruise polar of fixed
    airplanes at a takeoff mass [kg]: what :func:`mission_fuel` needs besides the range."""
    w = takeoff_mass_kg * G0
    s_ref = frozen.wing_area_m2
    if frozen.cruise_altitude_m is not None:  # the design's own; a case's or caller's wins
        overrides = {"cruise_altitude_m": frozen.cruise_altitude_m, **(overrides or {})}
    loading = frozen.rated / w if spec.propulsion.family == "turbofan" else w / (frozen.rated / 1e3)
    batch = design_batch(spec, w / s_ref, loading, frozen.aspect_ratio, frozen.high_lift_index,
                         overrides)
    air = air_states(spec, batch.overrides)
    drag = clean_drag(spec, batch.aspect_ratio, air, batch.overrides)
    hl = high_lift(spec, batch.high_lift_index, batch.aspect_ratio)
    consumption = cruise_consumption(spec, batch.overrides)
    e_cr, k_cr = cruise_induced_drag(spec, drag.oswald_wing_cruise, batch.aspect_ratio,
                                     frozen.span_m)
    components = None
    if drag.build_up is not None:
        components = component_drag(spec, drag.build_up, s_ref, batch.aspect_ratio,
                                    frozen.rated)
    if drag.pinned:
        cd0_cruise = drag.cd0_cruise
    else:
        cd0_cruise = components.cd0_cruise_friction * drag.cd0_scale + drag.wave_cd0
    return CruiseSetup(batch, air, drag, hl, consumption, e_cr, k_cr, components, cd0_cruise)


def analyse_batch(spec: AircraftSpec, frozen: FrozenDesigns, masses: OperatingMasses,
                  overrides=None):
    """Every stage of a fixed airplane at one operating case.

    Parameters
    ----------
    spec : AircraftSpec
        The study with the case's conditions (:func:`case_spec`).
    frozen : FrozenDesigns
        The airplanes (SI).
    masses : OperatingMasses
        The case's masses per design [kg] (:func:`operating_masses`).
    overrides : dict, optional
        Per-design spec values (:data:`~optimiser.sizing.inputs.OVERRIDE_KEYS`), for example
        the uncertain assumptions of a robustness study. ``empty_mass_factor`` scales the
        frozen empty mass by its ratio to the study's factor (the structure as built is
        heavier or lighter, the fuel on board at a fixed takeoff mass changes with it).

    Returns
    -------
    SizedBatch
        As :func:`optimiser.sizing.size_batch`, its ``closure.state.masses`` holding only the
        empty mass; the margins are those of :func:`analysis_constraints`.

    Notes
    -----
    The airplane is given by its wing area and rating, so its wing loading and power loading
    (or thrust-to-weight) follow the case's mass; a case that moves them outside the model's
    valid ranges is flagged ``outside_model_range`` as in sizing.
    """
    from . import fly  # the stages after the mass, shared with size_batch
    m_to = masses.takeoff_mass_kg
    c = cruise_setup(spec, frozen, m_to, overrides)
    batch, air, hl, consumption = c.batch, c.air, c.high_lift, c.consumption
    drag, components, k_cr, cd0_cruise = c.drag, c.components, c.k_cr, c.cd0_cruise
    ov, s_ref, span, e_cr = batch.overrides, frozen.wing_area_m2, frozen.span_m, c.e_cr
    fuel = mission_fuel(spec, m_to, s_ref, k_cr, cd0_cruise, consumption, air)
    drag = built_up_drag(drag, components)
    scale = ov.get("empty_mass_factor", spec.weights.empty_mass_factor) \
        / spec.weights.empty_mass_factor
    m_empty = frozen.empty_mass_kg * scale
    on_board = m_to - m_empty - spec.weights.crew_kg - masses.payload_kg
    zero = np.zeros_like(m_to)
    groups = MassGroups(*(zero,) * 12, m_empty)
    residual = m_to - (masses.payload_kg + spec.weights.crew_kg + fuel.fuel_mass_kg + m_empty)
    state = MassState(residual, s_ref, span, e_cr, k_cr, frozen.rated, fuel, groups, components)
    first = fuel_margin(on_board, fuel.fuel_mass_kg, m_to)
    closure = MassClosure(m_to, first, state)
    tanks = fuel_volume(spec, s_ref, span, np.maximum(on_board, 0.0))
    extra = {"max_takeoff_mass": 1.0 - m_to / frozen.max_takeoff_mass_kg}
    sized = fly(spec, batch, air, drag, hl, consumption, closure, m_to, s_ref, span,
                frozen.rated, fuel, k_cr, components, tanks, first,
                constraints=analysis_constraints(spec), extra_margins=extra,
                exempt_when_met=len(ANALYSIS_FIRST_CONSTRAINTS))
    return sized, on_board


FROZEN_OMITTED_COLUMNS = (
    "wing_mass_kg", "engine_mass_kg", "high_lift_mass_kg", "horizontal_tail_mass_kg",
    "vertical_tail_mass_kg", "fuselage_mass_kg", "main_gear_mass_kg", "nose_gear_mass_kg",
    "fuel_system_mass_kg", "flight_controls_mass_kg", "fixed_equipment_mass_kg",
    "structure_systems_mass_kg")
"""Sizing columns a frozen design has no value for: its empty mass is given whole."""


def analyse_designs(spec: AircraftSpec, frozen: FrozenDesigns, masses: OperatingMasses,
                    overrides=None) -> dict:
    """The columns of :func:`analyse_batch`: those of
    :func:`~optimiser.sizing.size_designs` (less :data:`FROZEN_OMITTED_COLUMNS`), with
    ``payload_kg`` the case's payload, ``fuel_mass_kg`` the fuel the case's mission needs,
    and ``fuel_on_board_kg`` and ``max_takeoff_mass_kg`` beside them; the margins of
    :func:`analysis_constraints`; ``feasible`` and ``limiting_index`` (into
    :func:`analysis_checked_constraints`)."""
    from .columns import output_columns
    sized, on_board = analyse_batch(spec, frozen, masses, overrides)
    out = output_columns(spec, sized)
    for key in FROZEN_OMITTED_COLUMNS:
        out.pop(key, None)
    ordered = {}
    for key, value in out.items():
        ordered[key] = value
        if key == "takeoff_mass_kg":
            ordered["max_takeoff_mass_kg"] = frozen.max_takeoff_mass_kg.copy()
        elif key == "fuel_mass_kg":
            ordered["fuel_on_board_kg"] = np.asarray(on_board, dtype=float).copy()
    ordered["payload_kg"] = masses.payload_kg.copy()
    return ordered


def analysis_checked_constraints(spec: AircraftSpec, analysed: dict) -> tuple[str, ...]:
    """The constraints of an analysed batch (``limiting_index`` indexes them)."""
    from .margins import OUTSIDE_MODEL_RANGE
    names = analysis_constraints(spec)
    if f"margin_{OUTSIDE_MODEL_RANGE}" in analysed:
        names += (OUTSIDE_MODEL_RANGE,)
    return names
