"""The results schema: one :class:`Column` record per output column of ``evaluate``.

Every table, sheet, plot label, report field and the DEVELOPERS.md column reference takes
what a column is from here: its name, plain name, unit, plot label, meaning and group. A new
output column needs one entry in :data:`COLUMNS` (and one in :data:`CONSTRAINTS` for a new
constraint, whose ``margin_<name>`` column follows).

Pure data, standard library only: sizing, evaluation, runs, decide and report import it
without pulling anything heavy. ``python -m optimiser.columns --markdown`` prints the
column reference of DEVELOPERS.md.
"""

from __future__ import annotations

from dataclasses import dataclass

_NAME_SUFFIXES = ("_kg_m3", "_m_s2", "_N_m2", "_N_kW", "_m_s", "_kg", "_m2", "_m3", "_kW", "_kN",
                  "_N", "_m")
"""Unit suffixes of column names, longest first (stripped to give a column's plain name)."""


def plain_name(column: str) -> str:
    """``trip_fuel_kg`` -> ``"trip fuel"``: the name without its unit suffix, in words."""
    for suffix in _NAME_SUFFIXES:
        if column.endswith(suffix):
            column = column[: -len(suffix)]
            break
    return column.replace("_", " ")


def display_unit(unit: str) -> str:
    """A unit as sheets and pages show it: ``"m^2"`` -> ``"m²"``, ``"-"`` -> ``""``."""
    return "" if unit == "-" else unit.replace("^2", "²").replace("^3", "³")


@dataclass(frozen=True)
class Column:
    """One output column.

    ``unit`` is written in ASCII (``"N/m^2"``), ``"-"`` for dimensionless numbers and ``""``
    for names and flags. ``short`` (the plain name, default from the column name) and
    ``label`` (axis label, default ``"<short> [<unit>]"``) are filled when not given.
    ``archived``: kept in ``evaluations.csv`` beside the inputs, objectives and margins.
    ``report_key``: position among the key numbers the report shows on hover (0 = not one).
    """

    name: str
    group: str
    unit: str
    description: str
    note: str = ""
    short: str = ""
    label: str = ""
    archived: bool = False
    report_key: int = 0

    def __post_init__(self):
        if not self.short:
            object.__setattr__(self, "short", plain_name(self.name))
        if not self.label:
            object.__setattr__(self, "label", f"{self.short} [{display_unit(self.unit) or '-'}]")

    @property
    def doc(self) -> str:
        """Meaning and unit in one line: ``"trip fuel ... no reserves [kg]"``."""
        return self.description + (f" [{self.unit}]" if self.unit else "") + self.note

    @property
    def sheet_unit(self) -> str:
        """The unit as sheets and the report show it (``"m²"``, ``""`` when dimensionless)."""
        return display_unit(self.unit)


_c = Column

COLUMNS = (
    _c("wing_loading_N_m2", "input", "N/m^2", "takeoff wing loading W/S", note=" (input)"),
    _c("power_loading_N_kW", "input", "N/kW",
        "takeoff weight over installed sea-level rated power", note=" (input)"),
    _c("thrust_to_weight", "input", "-", "installed sea-level static thrust over takeoff weight",
        note=" (input)", short="thrust-to-weight"),
    _c("aspect_ratio", "input", "-", "wing aspect ratio", note=" (input)"),
    _c("flap", "input", "", "high-lift configuration from the catalogue", note=" (input)"),
    _c("cruise_altitude_m", "input", "m",
        "cruise pressure altitude, where the study makes it a decision variable",
        note=" (input; only with [variables] cruise_altitude)"),
    _c("takeoff_mass_kg", "mass", "kg", "closed takeoff mass: payload + crew + fuel + empty",
        archived=True, report_key=1),
    _c("empty_mass_kg", "mass", "kg",
        "empty mass, sum of the groups below times the empty-mass factor", archived=True),
    _c("max_takeoff_mass_kg", "mass", "kg",
        "frozen design: its maximum takeoff mass (the mass it was sized at)",
        note=" (optimiser analyse only)"),
    _c("fuel_mass_kg", "mass", "kg", "fuel carried: trip + reserve + trapped", archived=True),
    _c("fuel_on_board_kg", "mass", "kg",
        "frozen design: fuel on board, takeoff mass - empty - crew - payload",
        note=" (optimiser analyse only)"),
    _c("trip_fuel_kg", "mass", "kg",
        "fuel of the design mission, start-up to shut-down, no reserves", archived=True),
    _c("reserve_fuel_kg", "mass", "kg", "reserve fuel (time and/or distance at cruise speed)"),
    _c("payload_kg", "mass", "kg", "payload"),
    _c("crew_kg", "mass", "kg", "crew"),
    _c("empty_mass_fraction", "mass", "-", "empty over takeoff mass"),
    _c("wing_mass_kg", "mass", "kg",
        "wing group (USAF light-aircraft equation x wing_mass_factor)"),
    _c("engine_mass_kg", "mass", "kg",
        "installed engines with propellers, mounts, cowls or nacelles (Part 23 propellers, "
        "components: USAF installed-propulsion equation; else class I specific mass or T/W)"),
    _c("high_lift_mass_kg", "mass", "kg", "flaps, slats and their actuators"),
    _c("horizontal_tail_mass_kg", "mass", "kg",
        "horizontal tail (Part 23: USAF light-airplane equation; Part 25: Torenbeek)"),
    _c("vertical_tail_mass_kg", "mass", "kg",
        "vertical tail (Part 23: USAF light-airplane equation; Part 25: Torenbeek)"),
    _c("fuselage_mass_kg", "mass", "kg",
        "fuselage (Part 23: USAF light-airplane equation; Part 25: Torenbeek)"),
    _c("main_gear_mass_kg", "mass", "kg", "main landing gear (Torenbeek)"),
    _c("nose_gear_mass_kg", "mass", "kg", "nose landing gear (Torenbeek)"),
    _c("fuel_system_mass_kg", "mass", "kg",
        "fuel system (Part 23: USAF light-airplane equation; Part 25: Torenbeek)"),
    _c("flight_controls_mass_kg", "mass", "kg", "flight-control system (Torenbeek)"),
    _c("fixed_equipment_mass_kg", "mass", "kg",
        "avionics, electrical, furnishings and other fixed items (the study's "
        "fixed_equipment)"),
    _c("structure_systems_mass_kg", "mass", "kg",
        "mass_method = \"fraction\" only: fuselage, tails, gear and systems as a share of "
        "takeoff mass (0 with components)"),
    _c("wing_area_m2", "geometry", "m^2", "reference wing area S = m g / (W/S)", archived=True,
        report_key=2),
    _c("span_m", "geometry", "m", "span b = sqrt(A S)", archived=True, report_key=3),
    _c("aerodrome_code_letter", "geometry", "",
        "aerodrome reference code letter of the span, ICAO Annex 14 Vol. I Table 1-1 (A below "
        "15 m ... F below 80 m; empty from 80 m)", note=" (only with a max_span requirement)",
        short="aerodrome code letter"),
    _c("engine_power_kW", "propulsion", "kW", "installed sea-level rated power, all engines",
        note=" (engine-size objective)", label="installed engine power, all engines [kW]",
        archived=True),
    _c("engine_thrust_kN", "propulsion", "kN", "installed sea-level static thrust, all engines",
        note=" (engine-size objective)", label="installed static thrust, all engines [kN]",
        archived=True),
    _c("propeller_diameter_m", "propulsion", "m",
        "propeller diameter from the tip limits at the study's rpm (cruise tip Mach, takeoff "
        "tip speed)"),
    _c("static_thrust_N", "propulsion", "N",
        "static thrust at the departure airfield, all engines"),
    _c("cd0", "aerodynamics", "-", "clean zero-lift drag coefficient"),
    _c("cd0_takeoff", "aerodynamics", "-",
        "zero-lift drag, takeoff flaps (and gear if retractable)"),
    _c("cd0_landing", "aerodynamics", "-",
        "zero-lift drag, landing flaps (and gear if retractable)"),
    _c("cd0_build_up", "drag build-up", "-",
        "clean CD0 of the component build-up, low speed, whether used or not (geometry "
        "given)"),
    _c("wetted_area_m2", "drag build-up", "m^2",
        "wetted area of the airplane: wing, fuselage, tails and nacelles"),
    _c("wing_wetted_area_m2", "drag build-up", "m^2", "wetted area of the exposed wing"),
    _c("fuselage_wetted_area_m2", "drag build-up", "m^2", "wetted area of the fuselage"),
    _c("horizontal_tail_area_m2", "drag build-up", "m^2",
        "horizontal tail area from its volume coefficient"),
    _c("vertical_tail_area_m2", "drag build-up", "m^2",
        "vertical tail area from its volume coefficient"),
    _c("tail_wetted_area_m2", "drag build-up", "m^2", "wetted area of both tails"),
    _c("nacelle_wetted_area_m2", "drag build-up", "m^2", "wetted area of all nacelles"),
    _c("wing_drag_area_m2", "drag build-up", "m^2", "wing drag area C_f FF Q S_wet (D/q)"),
    _c("fuselage_drag_area_m2", "drag build-up", "m^2", "fuselage drag area C_f FF Q S_wet"),
    _c("tail_drag_area_m2", "drag build-up", "m^2", "drag area of both tails"),
    _c("nacelle_drag_area_m2", "drag build-up", "m^2", "drag area of all nacelles"),
    _c("misc_drag_area_m2", "drag build-up", "m^2",
        "fixed gear, struts, cooling, leaks and protuberances"),
    _c("oswald_e", "aerodynamics", "-", "Oswald factor at low speed (takeoff, climb)"),
    _c("oswald_e_cruise", "aerodynamics", "-", "Oswald factor at the cruise Mach number"),
    _c("cl_max_clean", "aerodynamics", "-", "clean airplane CLmax"),
    _c("cl_max_takeoff", "aerodynamics", "-", "airplane CLmax, takeoff configuration"),
    _c("cl_max_landing", "aerodynamics", "-", "airplane CLmax, landing configuration"),
    _c("cruise_lift_coefficient", "aerodynamics", "-",
        "lift coefficient at mid-cruise weight and the cruise speed"),
    _c("cruise_lift_to_drag", "aerodynamics", "-",
        "L/D at the mid-cruise lift coefficient, used in Breguet", report_key=7),
    _c("wing_fuel_volume_m3", "fuel volume", "m^3",
        "usable fuel volume of the wing (box volume x usable share)"),
    _c("fuel_volume_m3", "fuel volume", "m^3",
        "usable fuel volume: wing, fuselage and tip tanks"),
    _c("fuel_volume_required_m3", "fuel volume", "m^3",
        "volume of the fuel carried at the study's fuel density"),
    _c("density_takeoff_kg_m3", "atmosphere", "kg/m^3",
        "air density at the departure airfield on the design day"),
    _c("density_landing_kg_m3", "atmosphere", "kg/m^3", "air density at the destination airfield"),
    _c("density_cruise_kg_m3", "atmosphere", "kg/m^3", "air density at cruise altitude"),
    _c("stall_speed_m_s", "performance", "m/s",
        "stall speed, landing configuration, sea-level density, takeoff mass", report_key=6),
    _c("stall_speed_takeoff_m_s", "performance", "m/s",
        "stall speed, takeoff configuration, departure airfield (TAS)"),
    _c("liftoff_speed_m_s", "performance", "m/s",
        "lift-off speed = liftoff_speed_factor x takeoff stall speed (TAS)"),
    _c("thrust_liftoff_N", "performance", "N", "thrust at lift-off, all engines"),
    _c("ground_effect_factor", "performance", "-",
        "induced-drag factor phi in ground effect during the roll"),
    _c("min_runway_acceleration_m_s2", "performance", "m/s^2",
        "smallest acceleration during the ground roll"),
    _c("takeoff_ground_roll_m", "performance", "m",
        "ground roll, equation of motion integrated to lift-off"),
    _c("takeoff_rotation_m", "performance", "m",
        "rotation distance, rotation time x lift-off speed"),
    _c("takeoff_air_distance_m", "performance", "m", "transition and climb to the screen height"),
    _c("takeoff_distance_m", "performance", "m",
        "all-engines takeoff distance to the screen height"),
    _c("balanced_field_length_m", "performance", "m",
        "balanced field length (Part 25 multi-engine), else 0"),
    _c("takeoff_field_required_m", "performance", "m",
        "field length the rules require, compared with the available", report_key=4),
    _c("approach_speed_m_s", "performance", "m/s",
        "approach speed = approach_speed_factor x landing stall speed (TAS)"),
    _c("landing_approach_m", "performance", "m",
        "landing: air distance of the approach from the screen height"),
    _c("landing_flare_m", "performance", "m", "landing: flare distance"),
    _c("landing_ground_roll_m", "performance", "m", "landing: free roll and braked ground roll"),
    _c("landing_distance_m", "performance", "m", "landing distance from the screen height",
        report_key=5),
    _c("landing_field_required_m", "performance", "m",
        "landing field length the rules require: distance / 0.6 (x 1.15 wet) under the "
        "dispatch rules (14 CFR 121.195(b), (d)), else the distance"),
    _c("climb_speed_m_s", "performance", "m/s",
        "speed flown in the best all-engines climb at the departure airfield: the best-rate "
        "speed, held to 250 kn indicated below 10 000 ft where the study applies the limit"),
    _c("climb_rate_m_s", "performance", "m/s",
        "best all-engines rate of climb at the departure airfield, clean"),
    _c("climb_gradient", "performance", "-",
        "all-engines gradient at sea level, takeoff flaps, gear up (Part 23 rule)"),
    _c("climb_gradient_required", "performance", "-",
        "Part 23 all-engines minimum from the design's own mass and engine type (23.65)"),
    _c("oei_climb_gradient", "performance", "-",
        "one engine inoperative gradient at the basis' condition"),
    _c("first_segment_gradient", "performance", "-",
        "Part 25 first segment: one engine out, V_LOF, takeoff flaps, gear down (25.121(a))"),
    _c("final_takeoff_gradient", "performance", "-",
        "Part 25 final takeoff: one engine out, clean, climb setting, 1500 ft (25.121(c))"),
    _c("approach_climb_gradient", "performance", "-",
        "Part 25 approach climb: one engine out, takeoff flaps as approach, gear up, 1.5 V_S "
        "(25.121(d))"),
    _c("landing_climb_gradient", "performance", "-",
        "Part 25 landing climb: all engines, landing flaps, gear down, 1.3 V_S (25.119)"),
    _c("cruise_speed_m_s", "performance", "m/s",
        "highest level speed at cruise altitude and cruise setting"),
    _c("cruise_mach", "performance", "-", "Mach number of that speed"),
    _c("service_ceiling_m", "performance", "m",
        "altitude where the best climb rate is 100 ft/min, takeoff mass"),
    _c("cd0_built_up", "aerodynamics", "",
        "the clean CD0 is the component build-up's (false: pinned by the study's cd0_clean "
        "or a per-design override)"),
    _c("oswald_mach_in_range", "performance", "",
        "cruise speed and ceiling found inside the Oswald method's Mach range (false: the "
        "cruise speed is held at the method's top Mach, or the ceiling's climb needs more)"),
    _c("maintenance_index", "high-lift", "-",
        "relative maintenance complexity of the high-lift system, per side", archived=True),
    _c("feasible", "verdict", "", "every margin >= 0"),
    _c("limiting_constraint", "verdict", "", "the constraint with the smallest margin"),
    _c("most_violated", "verdict", "", "the most violated constraint when infeasible, else empty"),
    _c("within_bounds", "verdict", "",
        "all inputs inside the study's variable bounds and allowed flaps"),
    _c("outside_bounds", "verdict", "",
        "which inputs lie outside the study's bounds (';'-separated)"),
    _c("design", "payload-range", "", "row of the designs table, from 1",
        note=" (optimiser payload-range only)"),
    _c("corner", "payload-range", "",
        "corner of the payload-range chart: A max payload at zero range, B max payload at "
        "the maximum takeoff mass, C full tanks at the maximum takeoff mass, D ferry",
        note=" (optimiser payload-range only)"),
    _c("range_km", "payload-range", "km",
        "range the fuel above reserves and trapped fuel flies", note=" (optimiser "
        "payload-range only)", short="range"),
    _c("tank_capacity_kg", "payload-range", "kg",
        "usable fuel the tanks hold: fuel volume x fuel density",
        note=" (optimiser payload-range only)"),
)
"""Every output column of ``evaluate`` except the margins, in the order of the reference."""

BY_NAME = {c.name: c for c in COLUMNS}


@dataclass(frozen=True)
class Constraint:
    """One constraint the model can check; its margin is the column ``margin_<name>``."""

    name: str
    description: str

    @property
    def column(self) -> str:
        return f"margin_{self.name}"


CONSTRAINTS = (
    Constraint("mass_closure", "takeoff mass closes"),
    Constraint("mission_fuel", "frozen design: the fuel on board covers the mission's trip, "
               "reserve and trapped fuel (optimiser analyse, in place of mass_closure)"),
    Constraint("max_takeoff_mass", "frozen design: takeoff mass within its maximum takeoff "
               "mass (optimiser analyse)"),
    Constraint("takeoff_mass_limit", "takeoff mass within the certification basis' limit"),
    Constraint("runway_acceleration", "accelerates on the runway"),
    Constraint("stall_speed", "stall speed, landing configuration"),
    Constraint("takeoff_field", "takeoff field length"),
    Constraint("landing_field", "landing field length the rules require"),
    Constraint("climb_rate", "all-engines rate of climb"),
    Constraint("climb_gradient", "all-engines climb gradient (regulatory)"),
    Constraint("oei_climb_gradient", "one-engine-inoperative climb gradient"),
    Constraint("first_segment_climb", "Part 25 first-segment climb, gear down (25.121(a))"),
    Constraint("final_takeoff_climb", "Part 25 final-takeoff climb, en-route (25.121(c))"),
    Constraint("approach_climb", "Part 25 approach climb, one engine out (25.121(d))"),
    Constraint("landing_climb", "Part 25 landing climb, all engines (25.119)"),
    Constraint("cruise_speed", "cruise speed at cruise altitude"),
    Constraint("service_ceiling", "service ceiling"),
    Constraint("cruise_ceiling", "cruise altitude at or below the design's own service ceiling "
               "(only with [variables] cruise_altitude)"),
    Constraint("fuel_volume", "fuel carried (trip, reserve, trapped) fits the usable tank volume"),
    Constraint("span", "wing span within the study's max_span"),
    Constraint("outside_model_range", "inputs inside the model's valid ranges (only in a batch "
               "holding a design outside them, e.g. from the Python API: such a design is "
               "sized at the nearest limit and is infeasible; negative by how far outside, "
               "relative to the limit)"),
)
"""Every constraint the model can check, in the order the model checks them."""

CONSTRAINT_LABELS = {c.name: c.description for c in CONSTRAINTS}
"""Constraint name -> plain description."""

COLUMN_DOCS = {c.name: c.doc for c in COLUMNS}
"""Meaning and unit of every output column (margins: :data:`CONSTRAINTS`)."""

ENGINE_SIZE_COLUMNS = {True: "engine_power_kW", False: "engine_thrust_kN"}
"""The engine-size column by ``uses_power_loading`` (propeller families size by power)."""

OBJECTIVES = {
    "trip_fuel": "trip_fuel_kg",
    "engine_size": None,  # engine_size_column(): power or thrust by family
    "maintenance": "maintenance_index",
    "takeoff_mass": "takeoff_mass_kg",
}
"""Objective key of a study's ``[objectives] minimise`` -> its column."""

ARCHIVE_SUMMARY_COLUMNS = tuple(c.name for c in COLUMNS if c.archived)
"""Sized numbers the archive keeps beside the inputs, objectives and margins (those the
model gives for the study's propulsion family). The performance numbers behind the margins
(stall speed, field lengths, climb, cruise speed, ceiling) are not repeated: each is its
margin's limit times (1 - margin) or (1 + margin)."""

REPORT_KEY_COLUMNS = tuple(c.name for c in sorted((c for c in COLUMNS if c.report_key),
                                                  key=lambda c: c.report_key))
"""Key numbers of a design shown by the report's interactive view."""


def engine_size_column(uses_power_loading: bool) -> str:
    """``engine_power_kW`` for propeller families, ``engine_thrust_kN`` for turbofans."""
    return ENGINE_SIZE_COLUMNS[bool(uses_power_loading)]


def objective_column(key: str, uses_power_loading: bool) -> str:
    """The column of one objective key (``"engine_size"`` by propulsion family)."""
    column = OBJECTIVES[key]
    return engine_size_column(uses_power_loading) if column is None else column


def unit_of(column: str) -> str:
    """Sheet unit of a column (``""`` for an unknown one or a dimensionless number)."""
    c = BY_NAME.get(column)
    return c.sheet_unit if c is not None else ""


def short_and_unit(column: str) -> tuple[str, str]:
    """(plain name, sheet unit) of a column: ``trip_fuel_kg`` -> ("trip fuel", "kg");
    an unknown column gets its plain name and no unit."""
    c = BY_NAME.get(column)
    return (c.short, c.sheet_unit) if c is not None else (plain_name(column), "")


def heading(column: str) -> str:
    """Table heading with the unit: ``"trip fuel [kg]"``, ``"maintenance index [-]"``."""
    name, unit = short_and_unit(column)
    return f"{name} [{unit or '-'}]"


def plot_label(column: str) -> str:
    """Axis label with the unit; an unknown column is labelled by its name."""
    c = BY_NAME.get(column)
    return c.label if c is not None else column


def markdown() -> str:
    """The column reference of DEVELOPERS.md ("Output columns of `evaluate`")."""
    lines = ["## Output columns of `evaluate`", "", "| column | meaning [unit] |", "|---|---|"]
    lines += [f"| `{c.name}` | {c.doc} |" for c in COLUMNS]
    lines += ["", "One `margin_<constraint>` column per active constraint (positive = met, as a "
              "fraction of its limit):", "", "| constraint | what it checks |", "|---|---|"]
    lines += [f"| `{c.name}` | {c.description} |" for c in CONSTRAINTS]
    lines += ["", "A study may require a design margin on any active constraint "
              "(`[requirements] margins`): the margin columns stay the raw margins, and a "
              "design meets a constraint when `margin_<constraint>` >= its required margin."]
    lines += ["", "A chance-constrained run (`[search] reliability`) adds, in "
              "`evaluations.csv` and `front.csv`:", "", "| column | meaning [unit] |",
              "|---|---|"]
    lines += [f"| `{name}` | {doc} |" for name, doc in CHANCE_COLUMN_DOCS.items()]
    return "\n".join(lines) + "\n"


CHANCE_COLUMN_DOCS = {
    "probability_<constraint>": "share of the run's samples in which the frozen design meets "
                                "the constraint (at its required margin) [-]",
    "probability_<constraint>_low": "lower end of its Wilson 95 % interval (front only) [-]",
    "probability_<constraint>_high": "upper end of its Wilson 95 % interval (front only) [-]",
    "meets_reliability": "nominally feasible and every constrained probability at least the "
                         "reliability (true/false)",
}
"""Columns of a chance-constrained run (:mod:`optimiser.chance`), by pattern."""


if __name__ == "__main__":  # python -m optimiser.columns --markdown
    import sys
    if sys.argv[1:] != ["--markdown"]:
        sys.exit("usage: python -m optimiser.columns --markdown")
    sys.stdout.write(markdown())
