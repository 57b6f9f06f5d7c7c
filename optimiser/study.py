"""Study files: TOML in, a validated :class:`Study` (SI inside) out.

Every dimensional value in a study is a string with its unit ("600 m", "61 kn", "350 hp"),
parsed with pint and checked for dimension; dimensionless values are bare numbers. Anything
wrong raises :class:`StudyError` with one line that names the key, what was given and what
was expected. See DEVELOPERS.md for the full list of keys.
"""

from __future__ import annotations

import hashlib
from dataclasses import dataclass, fields, replace
from pathlib import Path
from typing import Any

try:  # Python 3.11+
    import tomllib
except ModuleNotFoundError:  # pragma: no cover - Python 3.10
    import tomli as tomllib

from . import spec as S
from .columns import OBJECTIVES, engine_size_column, objective_column
from .errors import StudyError
from .physics import aerodynamics, atmosphere, geometry, highlift, mission, performance
from .quantities import _Reader, _dimension_name, _suggest, units  # noqa: F401  (units: public)
from .sizing.inputs import CRUISE_ALTITUDE_MAX_M, MODEL_RANGES

MAX_STUDY_BYTES = 1_000_000
MAX_CRUISE_MACH = 0.82
"""Nita & Scholz's Mach factor k_eM falls to zero near M 0.85; the wave-drag law is calibrated
to a drag-divergence Mach number of about 0.8."""
DEFAULT_OBJECTIVES = ("trip_fuel", "engine_size", "maintenance")
MAX_ENGINES = {"piston": 2, "turboprop": 4, "turbofan": 4}
"""Engine counts each family may have (common practice: no piston airplanes above twins here)."""

VARIABLE_UNITS = {
    # key: (column, pint unit or None, lowest allowed, highest allowed): the model's valid
    # range (sizing.inputs.MODEL_RANGES), so that a search never leaves it
    key: (column, unit, MODEL_RANGES[column].lower, MODEL_RANGES[column].upper)
    for key, column, unit in (("wing_loading", "wing_loading_N_m2", "N/m^2"),
                              ("power_loading", "power_loading_N_kW", "N/kW"),
                              ("thrust_to_weight", "thrust_to_weight", None),
                              ("aspect_ratio", "aspect_ratio", None))
}
VARIABLE_UNITS["cruise_altitude"] = ("cruise_altitude_m", "m", 0.0, CRUISE_ALTITUDE_MAX_M)
"""An optional fourth variable: the cruise pressure altitude (the study's [mission]
cruise_altitude then holds only where no design is at hand, e.g. for ``check``'s screen)."""
OPTIONAL_VARIABLES = ("cruise_altitude",)
"""[variables] keys a study may leave out (the study's fixed value then holds)."""
SEARCH_KEYS = {"population": (int, 4, 100000), "generations": (int, 1, 1000000),
               "seed": (int, 0, 2**32 - 1), "reliability": (float, None, None),
               "reliability_samples": (int, 10, 100000)}
"""[search] keys: (type, lowest, highest); ``reliability`` is checked by
:func:`optimiser.uncertainty.check_reliability` (strictly between 0 and 1)."""

_UNIT_SUFFIXES = ("_kg_m2", "_kg_m3", "_m_s", "_kg", "_rad", "_m2", "_m3", "_K", "_m", "_s")
_SECTIONS = {
    "propulsion": S.Propulsion, "aerodynamics": S.Aerodynamics, "weights": S.Weights,
    "mission": S.Mission, "requirements": S.Requirements, "speeds": S.Speeds,
    "departure": S.Airfield, "destination": S.Airfield, "geometry": S.Geometry,
}
_TOP_KEYS = {"name", "description", "certification", "variables", "objectives", "flap_catalogue",
             "slats", "search", "uncertainty", *_SECTIONS}
_REQUIRED_SECTIONS = ("propulsion", "aerodynamics", "weights", "mission", "requirements",
                      "departure", "variables")


def toml_key(field_name: str, unit: str | None) -> str:
    """The study key of a spec field: the field name without its unit suffix."""
    if unit is not None:
        for suffix in _UNIT_SUFFIXES:
            if field_name.endswith(suffix):
                return field_name[: -len(suffix)]
    return field_name


@dataclass(frozen=True)
class Variable:
    """One decision variable: CSV column, bounds in that column's unit, fixed or free."""

    key: str
    column: str
    lower: float
    upper: float

    @property
    def fixed(self) -> bool:
        return self.lower == self.upper


@dataclass(frozen=True)
class Study:
    """A validated study: requirements and assumptions (``spec``) plus the search space."""

    name: str
    description: str
    path: str
    text: str
    spec: S.AircraftSpec
    variables: tuple[Variable, ...]
    flaps: tuple[str, ...]
    objectives: tuple[str, ...]
    search: dict
    sha256: str
    uncertainty: dict | None = None  # [uncertainty] table, read by optimiser.uncertainty

    @property
    def loading_column(self) -> str:
        return "power_loading_N_kW" if self.spec.uses_power_loading else "thrust_to_weight"

    @property
    def engine_size_column(self) -> str:
        return engine_size_column(self.spec.uses_power_loading)

    def objective_columns(self) -> tuple[str, ...]:
        return tuple(objective_column(o, self.spec.uses_power_loading) for o in self.objectives)

    def variable(self, column: str) -> Variable:
        return next(v for v in self.variables if v.column == column)


_CHOICES = {
    ("propulsion", "family"): S.PROPULSION_FAMILIES,
    ("aerodynamics", "oswald_method"): tuple(aerodynamics.OSWALD_METHODS),
    ("aerodynamics", "ground_effect_method"): tuple(aerodynamics.GROUND_EFFECT_METHODS),
    ("aerodynamics", "landing_gear"): ("fixed", "retractable"),
    ("aerodynamics", "cd0_method"): S.CD0_METHODS,
    ("weights", "mass_method"): S.MASS_METHODS,
    ("departure", "runway"): tuple(performance.RUNWAY_SURFACES),
    ("destination", "runway"): tuple(performance.RUNWAY_SURFACES),
}


def _read_section(rd: _Reader, section: str, raw: dict, cls, preset: dict) -> Any:
    """Read one TOML table into a spec dataclass, filling defaults from ``preset``."""
    by_key = {}
    for f in fields(cls):
        by_key[toml_key(f.name, f.metadata.get("unit"))] = f
    values = {}
    for key, value in raw.items():
        where = f"[{section}] {key}"
        if key not in by_key:
            rd.fail(f"[{section}]", f"unknown key {key!r}{_suggest(key, by_key)}; expected one "
                    "of: " + ", ".join(sorted(by_key)))
        f = by_key[key]
        meta = f.metadata
        if (section, key) in _CHOICES:
            values[f.name] = rd.choice(where, value, _CHOICES[(section, key)])
        elif f.type in ("bool", bool):
            values[f.name] = value if isinstance(value, bool) else \
                rd.fail(where, f"got {value!r}; expected true or false")
        elif f.name == "skip_checks":
            values[f.name] = _skip_checks(rd, where, value)
        elif f.name == "margins":
            values[f.name] = _margins_table(rd, where, value)
        elif f.type in ("str", str):
            values[f.name] = rd.choice(where, value, (value,)) if isinstance(value, str) else \
                rd.fail(where, f"got {value!r}; expected a string")
        elif f.type in ("bool", "bool | None"):
            if not isinstance(value, bool):
                rd.fail(where, f"got {value!r}; expected true or false")
            values[f.name] = value
        elif meta.get("unit"):
            values[f.name] = rd.quantity(where, value, meta["unit"], meta.get("min"),
                                         meta.get("max"), meta.get("min_open", False))
        else:
            values[f.name] = rd.number(where, value, meta.get("min"), meta.get("max"),
                                       meta.get("min_open", False),
                                       integer=(f.type in ("int", int, "int | None")))
    for f in fields(cls):
        if f.name not in values:
            if f.name in preset:
                values[f.name] = preset[f.name]
            elif f.metadata.get("required"):
                unit = f.metadata.get("unit")
                hint = f" ({_dimension_name(unit)} with its unit)" if unit else ""
                rd.fail(f"[{section}]", f"missing required key "
                        f"{toml_key(f.name, unit)!r}{hint}")
    return cls(**values)


SKIPPABLE_CHECKS = ("first_segment_climb", "final_takeoff_climb", "approach_climb",
                    "landing_climb")
"""Constraints a study may switch off with a reason (``[requirements] skip_checks``)."""


def _skip_checks(rd: _Reader, where: str, value) -> tuple[tuple[str, str], ...]:
    """``{ approach_climb = "reason" }`` -> (("approach_climb", "reason"),), checked."""
    if not isinstance(value, dict):
        rd.fail(where, f"got {value!r}; expected a table such as "
                '{ approach_climb = "reason it does not apply" }')
    for name, reason in value.items():
        if name not in SKIPPABLE_CHECKS:
            rd.fail(f"{where}.{name}", f"unknown check {name!r}{_suggest(name, SKIPPABLE_CHECKS)}"
                    "; expected one of: " + ", ".join(SKIPPABLE_CHECKS))
        if not isinstance(reason, str) or not reason.strip():
            rd.fail(f"{where}.{name}", f"got {reason!r}; expected a non-empty string giving "
                    "the reason the check is switched off")
    return tuple((name, reason.strip()) for name, reason in value.items())


MAX_REQUIRED_MARGIN = 0.5
"""Largest design margin a study may require on a constraint (a fraction of its limit; a
larger one would stand for a different requirement, better written as that requirement)."""


def _margins_table(rd: _Reader, where: str, value) -> tuple[tuple[str, float], ...]:
    """``{ takeoff_field = 0.05 }`` -> (("takeoff_field", 0.05),), each value checked; the
    names are checked against the active constraints by :func:`_check_margin_names`."""
    if not isinstance(value, dict):
        rd.fail(where, f"got {value!r}; expected a table such as "
                "{ takeoff_field = 0.05, climb_rate = 0.10 }")
    return tuple((name, rd.number(f"{where}.{name}", v, 0.0, MAX_REQUIRED_MARGIN))
                 for name, v in value.items())


def _check_margin_names(rd: _Reader, spec: S.AircraftSpec):
    """Every name of ``[requirements] margins`` is an active constraint of the study."""
    from .sizing.margins import active_constraints
    active = active_constraints(spec)
    for name, _ in spec.requirements.margins:
        if name not in active:
            rd.fail(f"[requirements] margins.{name}", f"unknown constraint {name!r}"
                    f"{_suggest(name, active)}; expected one of the study's constraints: "
                    + ", ".join(active))


def _bounds(rd: _Reader, key: str, raw, unit, lo_ok, hi_ok) -> tuple[float, float]:
    where = f"[variables] {key}"

    def one(v, w):
        if unit:
            return rd.quantity(w, v, unit, lo_ok, hi_ok)
        return rd.number(w, v, lo_ok, hi_ok)

    if isinstance(raw, list):
        if len(raw) != 2:
            rd.fail(where, f"got {len(raw)} values; expected [lower, upper] or a single value "
                    "to fix the variable")
        lo = one(raw[0], where + " (lower)")
        hi = one(raw[1], where + " (upper)")
        if lo > hi:
            rd.fail(where, f"lower bound {raw[0]!r} is greater than upper bound {raw[1]!r} "
                    "(lower and upper reversed?)")
        if lo == hi:
            rd.fail(where, f"lower and upper bound are both {raw[0]!r} (an empty range); "
                    "give a single value to fix the variable")
        return lo, hi
    x = one(raw, where)
    return x, x


def _read_catalogue(rd: _Reader, raw: dict):
    cat = {k: dict(v) for k, v in highlift.FLAP_CATALOGUE.items()}
    slat = dict(highlift.SLAT_ENTRY)
    over = rd.table("[flap_catalogue]", raw.get("flap_catalogue", {}))
    for name, entry in over.items():
        where = f"[flap_catalogue.{name}]"
        if "+" in name or not name.replace("_", "").isalnum():
            rd.fail("[flap_catalogue]", f"got the name {name!r}; expected letters, digits and '_' only")
        entry = rd.table(where, entry)
        known = name in cat
        base = cat.get(name, {})
        for k, v in entry.items():
            if k not in highlift.FLAP_FIELDS:
                rd.fail(where, f"unknown key {k!r}{_suggest(k, highlift.FLAP_FIELDS)}; "
                        "expected one of: " + ", ".join(highlift.FLAP_FIELDS))
            hi = 1.0 if k == "takeoff_fraction" else (10.0 if k in (
                "section_cl_increment", "chord_extension", "cd0_factor_takeoff",
                "cd0_factor_landing") else 200.0)
            lo = 1.0 if k == "chord_extension" else 0.0
            lo_open = k == "support_spacing_m"
            base[k] = rd.number(f"{where} {k}", v, lo, hi, lo_open)
        missing = [k for k in highlift.FLAP_FIELDS if k not in base]
        if missing and not known:
            rd.fail(where, "a new flap type needs every field; missing: " + ", ".join(missing))
        cat[name] = base
    sl = rd.table("[slats]", raw.get("slats", {}))
    for k, v in sl.items():
        if k not in highlift.SLAT_FIELDS:
            rd.fail("[slats]", f"unknown key {k!r}{_suggest(k, highlift.SLAT_FIELDS)}; expected "
                    "one of: " + ", ".join(highlift.SLAT_FIELDS))
        lo_open = k == "support_spacing_m"
        slat[k] = rd.number(f"[slats] {k}", v, 1.0 if k == "chord_extension" else 0.0,
                            200.0, lo_open)
    return cat, slat


def _read_toml(rd: _Reader, text: str) -> dict:
    """The parsed TOML with its top-level keys and required tables checked."""
    try:
        raw = tomllib.loads(text)
    except (tomllib.TOMLDecodeError, ValueError) as exc:  # ValueError: int over 4300 digits
        raise StudyError(f"{rd.path}: not valid TOML: {exc}") from None
    for key in raw:
        if key not in _TOP_KEYS:
            rd.fail("top level", f"unknown key {key!r}{_suggest(key, _TOP_KEYS)}; expected one "
                    "of: " + ", ".join(sorted(_TOP_KEYS)))
    for sec in _REQUIRED_SECTIONS:
        if sec not in raw:
            rd.fail("top level", f"missing required table [{sec}]")
    for sec in (*_SECTIONS, "variables", "objectives", "search"):
        if sec in raw:
            rd.table(f"[{sec}]", raw[sec])
    return raw


def _read_names(rd: _Reader, raw: dict) -> tuple[str, str, str]:
    """The study's name, description and certification basis."""
    name = raw.get("name")
    if not isinstance(name, str) or not name.strip():
        rd.fail("name", f"got {name!r}; expected a non-empty string naming the study")
    if not all(c.isalnum() or c in "-_." for c in name) or len(name) > 80:
        rd.fail("name", f"got {name!r}; expected at most 80 letters, digits, '-', '_' or '.' "
                "(it names the run folder)")
    description = raw.get("description", "")
    if not isinstance(description, str):
        rd.fail("description", f"got {description!r}; expected a string")
    basis = rd.choice("certification", raw.get("certification", "part23"),
                      S.CERTIFICATION_BASES)
    return name, description, basis


def _read_propulsion(rd: _Reader, raw: dict, basis: str):
    """[propulsion] with the family's defaults; keys of the other families are refused."""
    family = rd.choice("[propulsion] family", raw["propulsion"].get("family"),
                       S.PROPULSION_FAMILIES)
    prop = _read_section(rd, "propulsion", raw["propulsion"], S.Propulsion,
                         S.FAMILY_DEFAULTS[family].get("propulsion", {}))
    if prop.engine_count > MAX_ENGINES[family]:
        rd.fail("[propulsion] engine_count", f"got {prop.engine_count}; a {family} study "
                f"expects 1 to {MAX_ENGINES[family]} engines")
    if basis == "part25" and prop.engine_count < 2:
        rd.fail("[propulsion] engine_count", f"got {prop.engine_count} under certification "
                "'part25'; expected 2 to 4 (this tool sizes transport-category airplanes with "
                "two or more engines)")
    if family == "turbofan":
        for k in ("sfc_cruise", "propeller_efficiency_cruise", "propeller_efficiency_climb",
                  "propeller_rpm_cruise", "propeller_rpm_takeoff", "propeller_tip_mach_max",
                  "propeller_tip_speed_takeoff_max", "engine_specific_mass"):
            if k in raw["propulsion"]:
                rd.fail(f"[propulsion] {k}", "given for a turbofan study; expected it only for "
                        "piston or turboprop studies (use tsfc_cruise, engine_thrust_to_weight)")
    else:
        for k in ("tsfc_cruise", "engine_thrust_to_weight", "engine_installation_factor"):
            if k in raw["propulsion"]:
                rd.fail(f"[propulsion] {k}", f"given for a {family} study; expected it only "
                        "for turbofan studies")
    return family, prop


def _read_airplane_sections(rd: _Reader, raw: dict, family: str, prop, basis: str) -> tuple:
    """[aerodynamics], [weights], [mission], [requirements] and [speeds], with defaults."""
    presets = S.FAMILY_DEFAULTS[family]
    aero = _read_section(rd, "aerodynamics", raw["aerodynamics"], S.Aerodynamics,
                         presets.get("aerodynamics", {}))
    wts = _read_section(rd, "weights", raw["weights"], S.Weights, presets.get("weights", {}))
    if family == "turbofan" and "engine_dry_specific_mass" in raw["weights"]:
        rd.fail("[weights] engine_dry_specific_mass", "given for a turbofan study; expected it "
                "only for piston or turboprop studies (turbofans use engine_thrust_to_weight)")
    if wts.fixed_equipment_kg is None:
        wts = replace(wts, fixed_equipment_kg=S.FIXED_EQUIPMENT_DEFAULTS[wts.mass_method][family])
    if wts.flight_control_coefficient is None:
        wts = replace(wts, flight_control_coefficient=S.FLIGHT_CONTROL_COEFFICIENT[basis])
    fr = mission.SEGMENT_FRACTIONS[S.segment_class(family, prop.engine_count)]
    mis_preset = dict(zip(("fraction_startup", "fraction_taxi", "fraction_takeoff",
                           "fraction_climb", "fraction_descent", "fraction_landing"), fr))
    mis = _read_section(rd, "mission", raw["mission"], S.Mission, mis_preset)
    req = _read_section(rd, "requirements", raw["requirements"], S.Requirements, {})
    speeds = _read_section(rd, "speeds", raw.get("speeds", {}), S.Speeds,
                           {"climb_speed_limit": family == "turbofan"})  # 14 CFR 91.117(a)
    if speeds.flare_speed_factor > speeds.approach_speed_factor:
        rd.fail("[speeds] flare_speed_factor", f"got {speeds.flare_speed_factor:g}; expected "
                f"at most the approach_speed_factor {speeds.approach_speed_factor:g}")
    return aero, wts, mis, req, speeds


def _read_geometry(rd: _Reader, raw: dict, family: str, prop, aero) -> tuple:
    """[geometry] with its class defaults, and the clean-drag method of [aerodynamics]
    resolved: 'build_up' needs the fuselage length, 'fixed' the study's (or the family's)
    cd0_clean; returns (aerodynamics, geometry)."""
    geo = _read_section(rd, "geometry", raw.get("geometry", {}), S.Geometry,
                        S.FAMILY_DEFAULTS[family].get("geometry", {}))
    v_h, v_v = geometry.TAIL_VOLUME_COEFFICIENTS[S.segment_class(family, prop.engine_count)]
    geo = replace(
        geo,
        horizontal_tail_volume=v_h if geo.horizontal_tail_volume is None
        else geo.horizontal_tail_volume,
        vertical_tail_volume=v_v if geo.vertical_tail_volume is None else geo.vertical_tail_volume,
        nacelle_count=(prop.engine_count if prop.engine_count > 1 else 0)
        if geo.nacelle_count is None else geo.nacelle_count)
    pinned = "cd0_clean" in raw["aerodynamics"]
    method = aero.cd0_method
    if method is None:
        method = "build_up" if geo.fuselage_length_m is not None and not pinned else "fixed"
    if method == "build_up" and geo.fuselage_length_m is None:
        rd.fail("[aerodynamics] cd0_method", "got 'build_up' without [geometry] "
                "fuselage_length; expected a fuselage length (e.g. \"8.5 m\") or "
                "cd0_method = 'fixed'")
    if method == "build_up" and pinned:
        rd.fail("[aerodynamics] cd0_clean", f"given ({aero.cd0_clean:g}) with cd0_method = "
                "'build_up'; expected one of the two: cd0_clean pins the clean CD0 "
                "(cd0_method = 'fixed'), the build-up computes it from the geometry")
    if geo.fuselage_length_m is not None and geo.fuselage_length_m < 2.0 * aero.fuselage_diameter_m:
        rd.fail("[geometry] fuselage_length", f"got {geo.fuselage_length_m:g} m; expected at "
                f"least twice the fuselage diameter ({aero.fuselage_diameter_m:g} m)")
    return replace(aero, cd0_method=method), geo


def _certification(rd: _Reader, raw: dict, basis, family, prop, req, mis) -> tuple:
    """The certification numbers, the mass limit they set, the airfields and the checks of
    the cruise speed; returns (certification, requirements, departure, destination)."""
    try:
        cert_numbers = performance.certification_numbers(basis, family, prop.engine_count)
    except ValueError as exc:
        rd.fail("certification", str(exc))
    if req.max_takeoff_mass_kg is None:
        req = replace(req, max_takeoff_mass_kg=cert_numbers["max_takeoff_mass_kg"])
    elif req.max_takeoff_mass_kg > cert_numbers["max_takeoff_mass_kg"]:
        rd.fail("[requirements] max_takeoff_mass", f"got {req.max_takeoff_mass_kg:g} kg; "
                f"expected at most {cert_numbers['max_takeoff_mass_kg']:.0f} kg, the limit of "
                f"certification {basis!r} for this airplane")
    dep = _airfield(rd, "departure", raw["departure"], cert_numbers["obstacle_height_m"])
    landing_rule = "transport" if basis == "part25" else "part23"
    dispatch = landing_rule != "part23" or req.landing_dispatch_factor
    dst = _airfield(rd, "destination", raw["destination"], performance.OBSTACLE_HEIGHT["part23"],
                    dispatch) if "destination" in raw else _airfield(
        rd, "departure", {k: v for k, v in raw["departure"].items() if k != "obstacle_height"},
        performance.OBSTACLE_HEIGHT["part23"], dispatch)  # the departure, landing back
    _check_cruise_mach(rd, "[mission] cruise_speed", mis, mis.cruise_altitude_m, "")
    if mis.cruise_speed_m_s < 1.05 * req.stall_speed_m_s:
        rd.fail("[mission] cruise_speed", f"got {mis.cruise_speed_m_s:.1f} m/s; expected well "
                f"above the stall-speed limit {req.stall_speed_m_s:.1f} m/s")
    cert = S.Certification(basis=basis, aeo_climb_gradient_min=cert_numbers[
        "aeo_climb_gradient_min"], oei_climb_gradient_min=cert_numbers["oei_climb_gradient_min"],
        oei_climb_altitude_m=cert_numbers["oei_climb_altitude_m"],
        oei_flaps_takeoff=cert_numbers["oei_flaps_takeoff"],
        aeo_climb_altitude_m=0.0, balanced_field=cert_numbers["balanced_field"],
        field_length_factor=cert_numbers["field_length_factor"], landing_rule=landing_rule)
    return cert, req, dep, dst


def parse_study(text: str, path: str = "<study>") -> Study:
    """Validate study TOML text and build a :class:`Study`. Raises :class:`StudyError`."""
    rd = _Reader(path)
    raw = _read_toml(rd, text)
    name, description, basis = _read_names(rd, raw)
    family, prop = _read_propulsion(rd, raw, basis)
    aero, wts, mis, req, speeds = _read_airplane_sections(rd, raw, family, prop, basis)
    aero, geo = _read_geometry(rd, raw, family, prop, aero)
    cert, req, dep, dst = _certification(rd, raw, basis, family, prop, req, mis)
    catalogue, slat_entry = _read_catalogue(rd, raw)
    all_names = [n for base in catalogue for n in (base, f"{base}+slats")]
    # unswept increments (hinge sweep 0): sizing.aero.high_lift scales them per design
    configs = tuple(S.HighLift(**highlift.high_lift_config(
        n, catalogue, slat_entry, aero.flapped_span_fraction, aero.slat_span_fraction, 0.0,
        wts.actuator_unit_mass_kg)) for n in all_names)
    spec = S.AircraftSpec(propulsion=prop, aerodynamics=aero, weights=wts, mission=mis,
                          requirements=req, speeds=speeds, departure=dep, destination=dst,
                          certification=cert, high_lift=configs, geometry=geo,
                          cruise_altitude_searched=isinstance(raw["variables"], dict)
                          and "cruise_altitude" in raw["variables"])
    _check_margin_names(rd, spec)
    variables, flaps = _read_variables(rd, raw["variables"], spec, catalogue)
    objectives = _read_objectives(rd, raw.get("objectives", {}))
    search = _read_search(rd, raw.get("search", {}))
    uncertainty = None
    if "uncertainty" in raw:
        from .uncertainty import read_uncertainty
        uncertainty = read_uncertainty(rd.fail, raw["uncertainty"], family, rd.quantity)
    if "reliability" in search and not (uncertainty or {}).get("assumptions"):
        rd.fail("[search] reliability", f"got {search['reliability']:g} but the study has no "
                "uncertain assumption; expected an [uncertainty] table (e.g. cd0_clean = { "
                "distribution = \"normal\", std = 0.05 }) or no reliability")
    return Study(name=name, description=description, path=path, text=text, spec=spec,
                 variables=variables, flaps=flaps, objectives=objectives, search=search,
                 sha256=hashlib.sha256(text.encode("utf-8")).hexdigest(),
                 uncertainty=uncertainty)


def _airfield(rd, section, raw, default_obstacle, dispatch_landing=False):
    af = _read_section(rd, section, raw, S.Airfield, {})
    roll, brake = performance.RUNWAY_SURFACES[af.runway]
    if dispatch_landing and af.runway in performance.WET_RUNWAY_DRY_SURFACE:
        # the dispatch rules apply their wet 115 % (121.195(d)) to the dry distance
        brake = performance.RUNWAY_SURFACES[performance.WET_RUNWAY_DRY_SURFACE[af.runway]][1]
    return replace(af,
                   obstacle_height_m=default_obstacle if af.obstacle_height_m is None
                   else af.obstacle_height_m,
                   rolling_friction=roll if af.rolling_friction is None else af.rolling_friction,
                   braking_friction=brake if af.braking_friction is None else af.braking_friction)


def _check_cruise_mach(rd, where, mis, altitude_m, which):
    """The cruise speed's Mach number at ``altitude_m`` [m] within :data:`MAX_CRUISE_MACH`
    (the speed of sound falls with altitude up to the tropopause: the highest altitude of a
    variable's bounds is the one to check)."""
    mach = mis.cruise_speed_m_s / float(atmosphere.speed_of_sound(atmosphere.isa_temperature(
        altitude_m, mis.cruise_temperature_offset_K)))
    if mach > MAX_CRUISE_MACH:
        rd.fail(where, f"got Mach {mach:.3f} at the cruise altitude{which}; "
                f"expected at most Mach {MAX_CRUISE_MACH} (the range of the Oswald-factor and "
                "wave-drag estimates)")


def _read_variables(rd, raw, spec, catalogue):
    family_key = "power_loading" if spec.uses_power_loading else "thrust_to_weight"
    other = "thrust_to_weight" if spec.uses_power_loading else "power_loading"
    allowed = ("wing_loading", family_key, "aspect_ratio", *OPTIONAL_VARIABLES, "flaps")
    for k in raw:
        if k == other:
            rd.fail(f"[variables] {k}", f"given for a {spec.propulsion.family} study; expected "
                    f"{family_key!r} instead")
        if k not in allowed:
            rd.fail("[variables]", f"unknown key {k!r}{_suggest(k, allowed)}; expected one of: "
                    + ", ".join(allowed))
    out = []
    for k in ("wing_loading", family_key, "aspect_ratio"):
        if k not in raw:
            rd.fail("[variables]", f"missing required key {k!r} ([lower, upper] bounds or a "
                    "single value)")
        column, unit, lo_ok, hi_ok = VARIABLE_UNITS[k]
        lo, hi = _bounds(rd, k, raw[k], unit, lo_ok, hi_ok)
        out.append(Variable(key=k, column=column, lower=lo, upper=hi))
    for k in OPTIONAL_VARIABLES:
        if k in raw:
            column, unit, lo_ok, hi_ok = VARIABLE_UNITS[k]
            lo, hi = _bounds(rd, k, raw[k], unit, lo_ok, hi_ok)
            _check_cruise_mach(rd, f"[variables] {k}", spec.mission, hi,
                               f" {hi:.0f} m (the upper bound)")
            out.append(Variable(key=k, column=column, lower=lo, upper=hi))
    flaps_raw = raw.get("flaps", ["none", "plain", "single_slotted", "fowler"])
    if isinstance(flaps_raw, str):
        flaps_raw = [flaps_raw]
    if not isinstance(flaps_raw, list) or not flaps_raw:
        rd.fail("[variables] flaps", f"got {flaps_raw!r}; expected a non-empty list of flap "
                "types")
    for f in flaps_raw:
        if not isinstance(f, str):
            rd.fail("[variables] flaps", f"got {f!r}; expected flap-type names (strings)")
        try:
            highlift.parse_high_lift_name(f, catalogue)
        except ValueError as exc:
            rd.fail("[variables] flaps", str(exc) + _suggest(f, list(catalogue)))
    if len(set(flaps_raw)) != len(flaps_raw):
        rd.fail("[variables] flaps", f"got {flaps_raw!r}; expected each flap type once")
    return tuple(out), tuple(flaps_raw)


def _read_objectives(rd, raw):
    for k in raw:
        if k != "minimise":
            rd.fail("[objectives]", f"unknown key {k!r}; expected 'minimise'")
    obj = raw.get("minimise", list(DEFAULT_OBJECTIVES))
    if not isinstance(obj, list) or len(obj) < 2:
        rd.fail("[objectives] minimise", f"got {obj!r}; expected a list of two or more of: "
                + ", ".join(OBJECTIVES))
    for o in obj:
        rd.choice("[objectives] minimise", o, tuple(OBJECTIVES))
    if len(set(obj)) != len(obj):
        rd.fail("[objectives] minimise", f"got {obj!r}; expected each objective once")
    return tuple(obj)


def _read_search(rd, raw):
    out = {"population": 100, "generations": 100, "seed": 1}
    for k, v in raw.items():
        if k not in SEARCH_KEYS:
            rd.fail("[search]", f"unknown key {k!r}{_suggest(k, SEARCH_KEYS)}; expected one of: "
                    + ", ".join(SEARCH_KEYS))
        kind, lo, hi = SEARCH_KEYS[k]
        if k == "reliability":
            from .uncertainty import check_reliability
            out[k] = check_reliability(v, lambda m: rd.fail("[search] reliability", m))
            continue
        out[k] = rd.number(f"[search] {k}", v, lo, hi, integer=kind is int)
    return out


def read_text_file(path, what: str, max_bytes: int, error=StudyError) -> str:
    """The UTF-8 text of a study-like file; one-line ``error`` when it cannot be used.

    ``what`` names the file in messages ("study", "campaign").
    """
    p = Path(path)
    try:
        size = p.stat().st_size
    except OSError as exc:
        raise error(f"{path}: cannot read the {what} file ({exc.strerror})") from None
    if p.is_dir():
        raise error(f"{path}: is a folder; expected a {what} file (.toml)")
    if size > max_bytes:
        raise error(f"{path}: the file is {size} bytes; expected a {what} of at most "
                    f"{max_bytes} bytes")
    try:
        data = p.read_bytes()
    except OSError as exc:
        raise error(f"{path}: cannot read the {what} file ({exc.strerror})") from None
    try:
        return data.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise error(f"{path}: byte {exc.start} is not UTF-8; expected a UTF-8 text "
                    "file") from None


def load_study(path) -> Study:
    """Read and validate a study file. Raises :class:`StudyError` (one line) when it cannot."""
    return parse_study(read_text_file(path, "study", MAX_STUDY_BYTES), str(path))


def bundled_study_path(name: str | None = None) -> Path:
    """Path of a bundled demo study (the default study when ``name`` is None); see
    :mod:`optimiser.bundled`."""
    from .bundled import bundled_path
    return bundled_path(name or DEFAULT_STUDY)


DEFAULT_STUDY = "high_strip_utility"
