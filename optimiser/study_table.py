"""The resolved study as a table a person can check: every requirement and assumption the
sizing uses, as the study gave it (its own units) and in SI, with where each value came from
when the study left it out, and the certification numbers that follow from the basis.

Used by ``optimiser check`` (and open to the report): a field length typed in feet instead of
metres shows here as 228.6 m beside the text "750 ft" before any run starts.
"""

from __future__ import annotations

import tomllib
from dataclasses import dataclass, fields

from . import spec as S
from .study import _SECTIONS, toml_key

ORIGIN_GIVEN = "given"
"""The study file gives the value."""


@dataclass(frozen=True)
class Entry:
    """One requirement or assumption of a resolved study."""

    section: str          # TOML table, e.g. "requirements"
    key: str              # TOML key, e.g. "stall_speed"
    given: str | None     # the value as the study wrote it (TOML text), None if not given
    value: object         # the value the sizing uses, in ``unit`` (SI)
    unit: str | None      # SI unit of ``value`` (None: dimensionless, text or flag)
    origin: str           # ORIGIN_GIVEN, or where the default came from
    doc: str              # one line: what the value is

    @property
    def value_text(self) -> str:
        """The SI value with its unit, for a person."""
        v = self.value
        if isinstance(v, bool) or v is None or isinstance(v, str):
            return str(v)
        if isinstance(v, tuple):
            return ", ".join(str(x[0] if isinstance(x, tuple) else x) for x in v) or "none"
        text = f"{float(v):.6g}"
        return f"{text} {self.unit}" if self.unit else text


RANGE_KEYS = {("mission", "range"), ("mission", "reserve_range")}
"""Study keys that are mission distances (shown in nautical miles in US customary units)."""

COLUMN_OF_KEY = {("requirements", "climb_rate"): "climb_rate_m_s"}
"""Study keys shown like an output column of :mod:`optimiser.columns` (a climb rate in
ft/min in US customary units, not kn)."""


def shown_text(entry: Entry, system=None) -> str:
    """The value of ``entry`` with its unit in the reader's units (:mod:`.display_units`):
    in SI exactly :attr:`Entry.value_text`; in US customary the converted value to six
    significant digits (a field length of 800 m shows as 2624.67 ft)."""
    from .display_units import SI, display_unit, resolve, to_display
    v = entry.value
    if resolve(system) == SI or not entry.unit or isinstance(v, (bool, str, tuple)) or v is None:
        return entry.value_text
    where = (entry.section, entry.key)
    shown, unit = to_display(float(v), entry.unit, system, COLUMN_OF_KEY.get(where),
                             "range" if where in RANGE_KEYS else None)
    return f"{shown:.6g} {display_unit(unit)}" if unit else f"{shown:.6g}"


def _toml_text(value) -> str:
    """A TOML value written back as the study wrote it (strings quoted)."""
    if isinstance(value, str):
        return f'"{value}"'
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, dict):
        return "{ " + ", ".join(f"{k} = {_toml_text(v)}" for k, v in value.items()) + " }"
    if isinstance(value, list):
        return "[" + ", ".join(_toml_text(v) for v in value) + "]"
    return str(value)


_DERIVED = {
    ("requirements", "max_takeoff_mass_kg"): "the certification basis' limit",
    ("departure", "obstacle_height_m"): "the certification basis",
    ("destination", "obstacle_height_m"): "the certification basis",
    ("departure", "rolling_friction"): "the runway surface",
    ("departure", "braking_friction"): "the runway surface",
    ("destination", "rolling_friction"): "the runway surface",
    ("destination", "braking_friction"): "the runway surface",
    ("speeds", "climb_speed_limit"): "the propulsion family (on for jets: 14 CFR 91.117(a))",
}
"""Defaults that another choice of the study sets (see optimiser.study)."""


def _default_origin(section: str, name: str, family: str) -> str:
    if (section, name) in _DERIVED:
        return _DERIVED[(section, name)]
    if name in S.FAMILY_DEFAULTS[family].get(section, {}):
        return f"{family} default"
    if section == "mission" and name.startswith("fraction_"):
        return "segment-fraction table of the class"
    return "built-in default"


def resolved_entries(study) -> list[Entry]:
    """Every value of the study's spec sections, in the order of :mod:`optimiser.spec`.

    ``given`` is the study's own text (its units); ``value`` the SI number the sizing uses;
    ``origin`` says :data:`ORIGIN_GIVEN` or which default applied. Values of another
    propulsion family (None in the spec) are left out. A study without
    ``[destination]`` lands back at its departure: its destination rows say so."""
    raw = tomllib.loads(study.text)
    family = study.spec.propulsion.family
    out = []
    for section in _SECTIONS:
        values = getattr(study.spec, section)
        table = raw.get(section, {})
        for f in fields(type(values)):
            unit = f.metadata.get("unit")
            key = toml_key(f.name, unit)
            value = getattr(values, f.name)
            if value is None:  # a value of another propulsion family: not used
                continue
            if key in table:
                given, origin = _toml_text(table[key]), ORIGIN_GIVEN
            elif section == "destination" and "destination" not in raw:
                given, origin = None, "the departure (the study lands back where it left)"
            else:
                given, origin = None, _default_origin(section, f.name, family)
            out.append(Entry(section, key, given, value, unit, origin,
                             f.metadata.get("doc", "")))
    return out


CERTIFICATION_DOCS = {
    "aeo_climb_gradient_min": ("all-engines climb gradient required", None),
    "oei_climb_gradient_min": ("one-engine-inoperative climb gradient required", None),
    "oei_climb_altitude_m": ("height above the airfield of the one-engine-out check", "m"),
    "oei_flaps_takeoff": ("one-engine-out check with takeoff flaps", None),
    "aeo_climb_altitude_m": ("height above the airfield of the all-engines check", "m"),
    "balanced_field": ("takeoff field length is the balanced field length", None),
    "field_length_factor": ("factor on the all-engines takeoff distance", None),
    "landing_rule": ("rule for the landing field length required", None),
}
"""What each number of :class:`~optimiser.spec.Certification` means (its SI unit)."""


def certification_entries(study) -> list[tuple[str, object, str | None, str]]:
    """(name, value, SI unit or None, meaning) of each certification number of the study."""
    cert = study.spec.certification
    return [(f.name, getattr(cert, f.name), CERTIFICATION_DOCS[f.name][1],
             CERTIFICATION_DOCS[f.name][0]) for f in fields(cert) if f.name != "basis"]
