"""Study files: loading, SI conversion, defaults, and refusal of malformed or hostile input.

Every malformed study is built by editing the text of a demo study, so each case differs
from a valid file in exactly one way. Each must raise :class:`StudyError` with ONE line that
names the key and what was expected; a subset also goes through ``optimiser check`` in a
subprocess (exit status 2, no traceback, nothing written to ``results/``).
"""

from __future__ import annotations

import json
import math
import re
import subprocess
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import optimiser
from optimiser import spec as S
from optimiser.physics import highlift, mission, performance
from optimiser.study import Study, StudyError, bundled_study_path, load_study, parse_study

PROBLEMS = Path(__file__).resolve().parents[1] / "problems"
DEFAULT = PROBLEMS / "high_strip_utility.toml"
JET = PROBLEMS / "light_twin_jet.toml"
TURBOPROP = PROBLEMS / "twin_turboprop_commuter.toml"
DEMOS = (DEFAULT, TURBOPROP, JET)

# Exact unit definitions (common practice / exact definitions):
FT = 0.3048                 # m, international foot (1959), exact
NMI = 1852.0                # m, international nautical mile, exact
KN = 1852.0 / 3600.0        # m/s, knot = 1 nmi per hour, exact
LB = 0.45359237             # kg, international avoirdupois pound (1959), exact
G0 = 9.80665                # m/s^2, standard gravity (3rd CGPM 1901), exact; 1 lbf = LB * G0 N
HP = 550.0 * FT * LB * G0   # W, mechanical horsepower = 550 ft lbf/s = 745.69987 W
HOUR = 3600.0               # s


def text_of(path: Path) -> str:
    return path.read_text(encoding="utf-8")


# --- text editing helpers ------------------------------------------------------------------

_HEADER = re.compile(r"^\s*\[([^\[\]]+)\]\s*(#.*)?$")


def edit(text: str, section: str | None, key: str, value: str | None = None) -> str:
    """Set ``key = value`` in ``[section]`` (None: top level), or delete it if value is None.

    A key that is not present is inserted as the first line of the section.
    """
    lines = text.splitlines()
    current, header_at, found = None, None, None
    for i, line in enumerate(lines):
        m = _HEADER.match(line)
        if m:
            current = m.group(1).strip()
            if current == section:
                header_at = i
            continue
        if current == section and re.match(rf"\s*{re.escape(key)}\s*=", line):
            found = i
    if found is not None:
        if value is None:
            del lines[found]
        else:
            lines[found] = f"{key} = {value}"
    else:
        assert value is not None, f"{key} not in [{section}]"
        if section is None:
            lines.insert(0, f"{key} = {value}")
        else:
            assert header_at is not None, f"no [{section}] in the study"
            lines.insert(header_at + 1, f"{key} = {value}")
    out = "\n".join(lines) + "\n"
    assert out != text + ("" if text.endswith("\n") else "\n")
    return out


def drop_section(text: str, section: str) -> str:
    """Remove ``[section]`` and its keys."""
    out, skipping = [], False
    for line in text.splitlines():
        m = _HEADER.match(line)
        if m:
            skipping = m.group(1).strip() == section
        if not skipping:
            out.append(line)
    assert len(out) < len(text.splitlines())
    return "\n".join(out) + "\n"


def replace_once(text: str, old: str, new: str) -> str:
    assert text.count(old) == 1, old
    return text.replace(old, new)


# --- the demo studies ----------------------------------------------------------------------

@pytest.fixture(scope="module")
def default_study() -> Study:
    return load_study(DEFAULT)


@pytest.fixture(scope="module")
def jet_study() -> Study:
    return load_study(JET)


@pytest.fixture(scope="module")
def turboprop_study() -> Study:
    # the commuter demo is a Part 25 study; its Part 23 twin variant covers the Part 23
    # multi-engine rules (commuter category) here
    text = TURBOPROP.read_text(encoding="utf-8")
    assert 'certification = "part25"' in text
    return parse_study(text.replace('certification = "part25"', 'certification = "part23"'),
                       str(TURBOPROP))


@pytest.mark.parametrize("path", DEMOS, ids=lambda p: p.stem)
def test_demo_studies_load(path):
    study = load_study(path)
    assert isinstance(study, Study)
    assert study.path == str(path)
    assert len(study.sha256) == 64
    # three decision variables with a proper range, each flap type once
    assert [v.column for v in study.variables][::2] == ["wing_loading_N_m2", "aspect_ratio"]
    assert all(v.lower < v.upper for v in study.variables)
    assert len(set(study.flaps)) == len(study.flaps) >= 1


def test_bundled_default_is_the_high_strip_study():
    assert bundled_study_path() == DEFAULT.resolve()
    assert load_study(bundled_study_path()).name == "high-strip-utility"


def test_si_conversions_default_study(default_study):
    sp = default_study.spec
    # "500 nmi": 1 nmi = 1852 m exactly -> 926 000 m
    assert sp.mission.range_m == pytest.approx(926000.0, rel=1e-12)
    assert sp.mission.range_m == pytest.approx(500 * NMI, rel=1e-12)
    # "61 kn": 1 kn = 1852/3600 m/s exactly -> 61 x 1852 / 3600 = 31.38111 m/s
    assert sp.requirements.stall_speed_m_s == pytest.approx(31.38111, abs=5e-6)
    assert sp.requirements.stall_speed_m_s == pytest.approx(61 * KN, rel=1e-12)
    # "125 kn" -> 64.3056 m/s
    assert sp.mission.cruise_speed_m_s == pytest.approx(125 * KN, rel=1e-12)
    # "8000 ft": 1 ft = 0.3048 m exactly -> 2438.4 m
    assert sp.mission.cruise_altitude_m == pytest.approx(2438.4, rel=1e-12)
    # "14000 ft" -> 4267.2 m
    assert sp.requirements.service_ceiling_m == pytest.approx(4267.2, rel=1e-12)
    # "500 ft/min" -> 2.54 m/s
    assert sp.requirements.climb_rate_m_s == pytest.approx(2.54, rel=1e-12)
    # "45 min" -> 2700 s
    assert sp.mission.reserve_time_s == pytest.approx(2700.0, rel=1e-12)
    # "0.44 lb/hp/hour": 0.44 x 0.45359237 kg / (745.69987 W x 3600 s) = 7.4345e-8 kg/J
    assert sp.propulsion.sfc_cruise == pytest.approx(7.4345e-8, rel=1e-4)
    assert sp.propulsion.sfc_cruise == pytest.approx(0.44 * LB / (HP * HOUR), rel=1e-9)
    # "1900 m", "20 K", "750 m", "1.3 m", "1.8 m", "450 kg", "90 kg" pass through unchanged
    assert sp.departure.elevation_m == 1900.0
    assert sp.departure.temperature_offset_K == pytest.approx(20.0, rel=1e-12)
    assert sp.departure.field_length_m == 750.0
    assert sp.aerodynamics.fuselage_diameter_m == pytest.approx(1.3)
    assert sp.aerodynamics.wing_height_m == pytest.approx(1.8)
    assert (sp.weights.payload_kg, sp.weights.crew_kg) == (450.0, 90.0)
    # variable bounds: "500 N/m^2" .. "1600 N/m^2", "45 N/kW" .. "150 N/kW", 6 .. 11
    v = {x.column: (x.lower, x.upper) for x in default_study.variables}
    assert v == {"wing_loading_N_m2": (500.0, 1600.0), "power_loading_N_kW": (45.0, 150.0),
                 "aspect_ratio": (6.0, 11.0)}


def test_si_conversions_jet_and_turboprop(jet_study, turboprop_study):
    j = jet_study.spec
    # "0.72 lb/lbf/hour": lb/lbf = 1/g0 -> 0.72 / (9.80665 x 3600) = 2.0394e-5 kg/(N s)
    assert j.propulsion.tsfc_cruise == pytest.approx(0.72 / (G0 * HOUR), rel=1e-9)
    assert j.propulsion.tsfc_cruise == pytest.approx(2.0394e-5, rel=1e-4)
    assert j.mission.range_m == pytest.approx(1300 * NMI, rel=1e-12)        # 2 407 600 m
    assert j.mission.cruise_altitude_m == pytest.approx(37000 * FT, rel=1e-12)  # 11 277.6 m
    assert j.mission.cruise_speed_m_s == pytest.approx(400 * KN, rel=1e-12)  # 205.78 m/s
    assert j.mission.reserve_range_m == pytest.approx(100 * NMI, rel=1e-12)  # 185 200 m
    assert j.requirements.climb_rate_m_s == pytest.approx(3000 * FT / 60, rel=1e-12)  # 15.24
    # "12 deg" -> 0.20944 rad
    assert j.aerodynamics.sweep_quarter_chord_rad == pytest.approx(math.radians(12), rel=1e-12)
    assert j.speeds.rotation_time_s == 2.0
    t = turboprop_study.spec
    assert t.mission.cruise_speed_m_s == pytest.approx(240 * KN, rel=1e-12)     # 123.47 m/s
    assert t.mission.cruise_altitude_m == pytest.approx(18000 * FT, rel=1e-12)  # 5486.4 m
    assert t.requirements.stall_speed_m_s == pytest.approx(90 * KN, rel=1e-12)  # 46.30 m/s


def test_family_defaults_fill_omitted_values(default_study, turboprop_study, jet_study):
    p = default_study.spec.propulsion
    # piston: omitted propeller efficiencies from the family table (Roskam Pt I Tbl 2.2,
    # from memory): 0.80 cruise, 0.75 climb; engine mass 1.35 kg/kW installed (common practice)
    assert p.propeller_efficiency_cruise == pytest.approx(0.80)
    assert p.propeller_efficiency_climb == pytest.approx(0.75)
    assert p.engine_specific_mass == pytest.approx(1.35)
    # propeller rpm 2400 cruise, 2700 takeoff (direct-drive piston, common practice)
    assert (p.propeller_rpm_cruise, p.propeller_rpm_takeoff) == (2400.0, 2700.0)
    assert default_study.spec.weights.ultimate_load_factor == pytest.approx(5.7)  # 1.5 x 3.8
    # a value the study gives is NOT replaced by the family default (0.44 lb/hp/h != 7.5e-8)
    assert p.sfc_cruise != pytest.approx(S.FAMILY_DEFAULTS["piston"]["propulsion"]["sfc_cruise"])
    # turboprop: sfc not given -> 0.30 kg/kWh = 8.33e-8 kg/J (family table)
    tp = turboprop_study.spec.propulsion
    assert tp.sfc_cruise == pytest.approx(8.33e-8, rel=1e-9)
    assert tp.sfc_cruise == pytest.approx(0.30 / 3.6e6, rel=1e-3)
    assert tp.propeller_efficiency_cruise == pytest.approx(0.85)
    # fixed equipment by mass method and family (spec.FIXED_EQUIPMENT_DEFAULTS, common
    # practice): components (the default) 850 kg for a turboprop
    assert turboprop_study.spec.weights.mass_method == "components"
    assert turboprop_study.spec.weights.fixed_equipment_kg == pytest.approx(850.0)
    # turbofan: engine T/W 5.0, installation factor 1.3, n_ult 3.75 = 1.5 x 2.5 (14 CFR 25.337)
    jp = jet_study.spec.propulsion
    assert jp.engine_thrust_to_weight == pytest.approx(5.0)
    assert jp.engine_installation_factor == pytest.approx(1.3)
    assert jet_study.spec.weights.ultimate_load_factor == pytest.approx(3.75)
    # nothing is left as None in a loaded spec (the sizing layer needs plain floats)
    for study in (default_study, turboprop_study, jet_study):
        sp = study.spec
        for part in (sp.propulsion, sp.aerodynamics, sp.weights, sp.mission, sp.departure,
                     sp.destination):
            for name, value in vars(part).items():
                if name in ("sfc_cruise", "tsfc_cruise", "propeller_efficiency_cruise",
                            "propeller_efficiency_climb", "propeller_rpm_cruise", "propeller_rpm_takeoff",
                            "engine_specific_mass", "engine_thrust_to_weight",
                            "engine_installation_factor", "engine_dry_specific_mass"):
                    continue  # the other family's keys stay None
                assert value is not None, f"{study.name}: {type(part).__name__}.{name}"


def test_mission_fractions_default_by_class(default_study, turboprop_study, jet_study):
    # Roskam, Airplane Design Part I, Table 2.1: single-engine prop startup 0.995 ... landing 0.993
    ms = default_study.spec.mission
    assert (ms.fraction_startup, ms.fraction_taxi, ms.fraction_takeoff, ms.fraction_climb,
            ms.fraction_descent, ms.fraction_landing) == pytest.approx(
        (0.995, 0.997, 0.998, 0.992, 0.993, 0.993))
    assert turboprop_study.spec.mission.fraction_climb == pytest.approx(
        mission.SEGMENT_FRACTIONS["regional_turboprop"][3])
    assert jet_study.spec.mission.fraction_climb == pytest.approx(0.980)  # business jet, Tbl 2.1


def test_obstacle_and_destination_defaults(default_study, turboprop_study, jet_study):
    # obstacle (screen) height: 50 ft = 15.24 m Part 23, 35 ft = 10.668 m Part 25
    # (14 CFR 23 / 25.113, from memory)
    assert default_study.spec.departure.obstacle_height_m == pytest.approx(15.24, rel=1e-12)
    assert turboprop_study.spec.departure.obstacle_height_m == pytest.approx(15.24, rel=1e-12)
    assert jet_study.spec.departure.obstacle_height_m == pytest.approx(10.668, rel=1e-12)
    assert performance.OBSTACLE_HEIGHT == {"part23": pytest.approx(50 * FT),
                                           "part25": pytest.approx(35 * FT)}
    # no [destination]: the destination is the departure airfield with a 50 ft landing screen
    for study in (turboprop_study, jet_study):
        dep, dst = study.spec.departure, study.spec.destination
        assert dst.obstacle_height_m == pytest.approx(50 * FT, rel=1e-12)
        for name in ("elevation_m", "temperature_offset_K", "runway", "field_length_m",
                     "rolling_friction", "braking_friction"):
            assert getattr(dst, name) == getattr(dep, name), name
    # the runway surface fills the friction coefficients: short grass 0.06 rolling, 0.25
    # braking (Gudmundsson 2014 ch. 17 / Torenbeek 1982 ch. 5, from memory)
    dep = default_study.spec.departure
    assert (dep.rolling_friction, dep.braking_friction) == pytest.approx((0.06, 0.25))
    jd = jet_study.spec.departure  # paved dry: 0.03 rolling, 0.40 braking
    assert (jd.rolling_friction, jd.braking_friction) == pytest.approx((0.03, 0.40))


def test_explicit_obstacle_height_and_friction_override():
    text = edit(text_of(DEFAULT), "departure", "obstacle_height", '"35 ft"')
    text = edit(text, "departure", "rolling_friction", "0.08")
    sp = parse_study(text).spec
    assert sp.departure.obstacle_height_m == pytest.approx(10.668, rel=1e-12)  # 35 ft
    assert sp.departure.rolling_friction == pytest.approx(0.08)
    assert sp.departure.braking_friction == pytest.approx(0.25)  # still the surface's


def test_certification_numbers_follow_the_basis(default_study, turboprop_study, jet_study):
    # 14 CFR 23.65 (Amdt 23-62, from memory): AEO gradient 8.3 % reciprocating, 4 % turbine
    assert default_study.spec.certification.aeo_climb_gradient_min == pytest.approx(0.083)
    assert turboprop_study.spec.certification.aeo_climb_gradient_min == pytest.approx(0.04)
    # 14 CFR 23.67: one engine out 1.5 % at 5000 ft; 14 CFR 25.121(b): 2.4 % for twins
    assert turboprop_study.spec.certification.oei_climb_gradient_min == pytest.approx(0.015)
    assert turboprop_study.spec.certification.oei_climb_altitude_m == pytest.approx(5000 * FT)
    assert jet_study.spec.certification.oei_climb_gradient_min == pytest.approx(0.024)
    # 14 CFR 25.113: 115 % of the all-engines distance
    assert jet_study.spec.certification.field_length_factor == pytest.approx(1.15)
    assert jet_study.spec.certification.balanced_field is True
    assert default_study.spec.certification.field_length_factor == pytest.approx(1.0)


# --- malformed and hostile studies ---------------------------------------------------------

def _t(base: Path, fn):
    return lambda: ("text", fn(text_of(base)))


H, J = DEFAULT, JET
CATALOGUE_FULL = dict(section_cl_increment=1.1, chord_extension=1.1, takeoff_fraction=0.6,
                      cd0_factor_takeoff=0.9, cd0_factor_landing=1.0, mass_per_area_kg_m2=16.0,
                      elements=1, supports=2, actuators=1, slots=1, support_spacing_m=1.4)

# (id, builder, regex the message must match). The regex names the key and what was expected.
BAD = [
    ("toml-syntax", _t(H, lambda s: replace_once(s, 'range = "500 nmi"', 'range = "500 nmi')),
     r"not valid TOML"),
    ("toml-integer-5000-digits", _t(H, lambda s: edit(s, "propulsion", "engine_count", "9" * 5000)),
     r"not valid TOML.*4300 digits"),
    ("unknown-top-level-key", _t(H, lambda s: edit(s, None, "colour", '"red"')),
     r"top level: unknown key 'colour'; expected one of: .*'?aerodynamics"),
    ("misspelt-table", _t(H, lambda s: replace_once(s, "[requirements]", "[requirement]")),
     r"top level: unknown key 'requirement' \(did you mean 'requirements'\?\); expected one of"),
    ("misspelt-key", _t(H, lambda s: replace_once(s, "cruise_altitude =", "cruise_altitud =")),
     r"\[mission\]: unknown key 'cruise_altitud' \(did you mean 'cruise_altitude'\?\); "
     r"expected one of: .*cruise_altitude"),
    ("missing-required-key", _t(H, lambda s: edit(s, "weights", "payload")),
     r"\[weights\]: missing required key 'payload' \(a mass with its unit\)"),
    ("missing-required-table", _t(H, lambda s: drop_section(s, "requirements")),
     r"top level: missing required table \[requirements\]"),
    ("section-not-a-table",
     _t(H, lambda s: edit(drop_section(s, "mission"), None, "mission", "3")),
     r"\[mission\]: got 3; expected a table \(\[mission\]\)"),
    ("wrong-dimension", _t(H, lambda s: edit(s, "departure", "field_length", '"600 kg"')),
     r"\[departure\] field_length: got '600 kg', which is not a length; expected a length"),
    ("bare-number-for-quantity", _t(H, lambda s: edit(s, "departure", "field_length", "750")),
     r"\[departure\] field_length: got 750 \(a bare number\); expected a length with its unit"),
    ("unitless-string", _t(H, lambda s: edit(s, "mission", "range", '"500"')),
     r"\[mission\] range: got '500' \(no unit\); expected a length with its unit"),
    ("unknown-unit", _t(H, lambda s: edit(s, "mission", "range", '"500 leagues_of_gold"')),
     r"\[mission\] range: got '500 leagues_of_gold', which is not a quantity with a known "
     r"unit; expected a length"),
    ("string-for-number", _t(H, lambda s: edit(s, "aerodynamics", "cl_max_clean", '"1.5"')),
     r"\[aerodynamics\] cl_max_clean: got '1\.5' \(a string\); expected a number \(drop the "
     r"quotes"),
    ("boolean-for-number", _t(H, lambda s: edit(s, "aerodynamics", "cd0_clean", "true")),
     r"\[aerodynamics\] cd0_clean: got True \(bool\); expected a number"),
    ("toml-nan", _t(H, lambda s: edit(s, "aerodynamics", "cd0_clean", "nan")),
     r"\[aerodynamics\] cd0_clean: got nan; expected a finite number"),
    ("toml-inf", _t(H, lambda s: edit(s, "weights", "wing_mass_factor", "-inf")),
     r"\[weights\] wing_mass_factor: got -inf; expected a finite number"),
    ("quantity-nan", _t(H, lambda s: edit(s, "mission", "range", '"nan nmi"')),
     r"\[mission\] range: got 'nan nmi'; expected a finite value"),
    ("quantity-overflow", _t(H, lambda s: edit(s, "departure", "field_length", '"1e400 m"')),
     r"\[departure\] field_length: got '1e400 m'; expected a finite value"),
    ("negative", _t(H, lambda s: edit(s, "weights", "payload", '"-450 kg"')),
     r"\[weights\] payload: got -450 kg; expected at least 1 kg"),
    ("zero-where-positive", _t(H, lambda s: edit(s, "requirements", "climb_rate", '"0 ft/min"')),
     r"\[requirements\] climb_rate: got 0 m/s; expected greater than 0 m/s"),
    ("above-range", _t(H, lambda s: edit(s, "departure", "elevation", '"6000 m"')),
     r"\[departure\] elevation: got 6000 m; expected at most 5000 m"),
    ("absurdly-large", _t(H, lambda s: edit(s, "mission", "range", '"1e30 nmi"')),
     r"\[mission\] range: got 1\.852e\+33 m; expected at most 2e\+07 m"),
    ("absurdly-tiny", _t(H, lambda s: edit(s, "weights", "payload", '"1e-30 kg"')),
     r"\[weights\] payload: got 1e-30 kg; expected at least 1 kg"),
    ("dimensionless-out-of-range", _t(H, lambda s: edit(s, "aerodynamics", "taper_ratio", "1.7")),
     r"\[aerodynamics\] taper_ratio: got 1\.7; expected at most 1"),
    ("integer-400-digits", _t(H, lambda s: edit(s, "propulsion", "engine_count", "9" * 400)),
     r"\[propulsion\] engine_count: got inf; expected a finite number"),
    ("quantity-400-digit-integer",
     _t(H, lambda s: edit(s, "mission", "cruise_altitude", '"1' + "0" * 400 + ' ft"')),
     r"\[mission\] cruise_altitude: got '10+ ft'; expected a finite value"),
    ("fractional-engine-count", _t(H, lambda s: edit(s, "propulsion", "engine_count", "1.5")),
     r"\[propulsion\] engine_count: got 1\.5; expected a whole number"),
    ("power-tower-in-unit-string", _t(H, lambda s: edit(s, "mission", "range", '"9**9**9 nmi"')),
     r"\[mission\] range: got '9\*\*9\*\*9 nmi', which is not a quantity with a known unit; "
     r"expected a length"),
    ("absolute-temperature",
     _t(H, lambda s: edit(s, "departure", "temperature_offset", '"20 degC"')),
     r"\[departure\] temperature_offset: got '20 degC', an absolute temperature; expected a "
     r"temperature difference"),
    ("inverted-bounds",
     _t(H, lambda s: edit(s, "variables", "wing_loading", '["1600 N/m^2", "500 N/m^2"]')),
     r"\[variables\] wing_loading: lower bound '1600 N/m\^2' is greater than upper bound "
     r"'500 N/m\^2'"),
    ("empty-bounds", _t(H, lambda s: edit(s, "variables", "aspect_ratio", "[8, 8]")),
     r"\[variables\] aspect_ratio: lower and upper bound are both 8 \(an empty range\); give a "
     r"single value"),
    ("three-bound-values", _t(H, lambda s: edit(s, "variables", "aspect_ratio", "[6, 8, 11]")),
     r"\[variables\] aspect_ratio: got 3 values; expected \[lower, upper\]"),
    ("bound-outside-model-range",
     _t(H, lambda s: edit(s, "variables", "power_loading", '["1 N/kW", "150 N/kW"]')),
     r"\[variables\] power_loading \(lower\): got 1 N/kW; expected at least 10 N/kW"),
    ("unknown-flap", _t(H, lambda s: edit(s, "variables", "flaps", '["none", "flaperon"]')),
     r"\[variables\] flaps: unknown flap type 'flaperon': expected one of .*fowler"),
    ("duplicate-flap", _t(H, lambda s: edit(s, "variables", "flaps", '["plain", "fowler", "plain"]')),
     r"\[variables\] flaps: got \['plain', 'fowler', 'plain'\]; expected each flap type once"),
    ("power-loading-in-turbofan-study",
     _t(J, lambda s: replace_once(s, "thrust_to_weight = [0.2, 0.6]",
                                  'power_loading = ["25 N/kW", "90 N/kW"]')),
     r"\[variables\] power_loading: given for a turbofan study; expected 'thrust_to_weight'"),
    ("thrust-to-weight-in-propeller-study",
     _t(H, lambda s: edit(edit(s, "variables", "power_loading"), "variables",
                          "thrust_to_weight", "[0.2, 0.4]")),
     r"\[variables\] thrust_to_weight: given for a piston study; expected 'power_loading'"),
    ("three-pistons", _t(H, lambda s: edit(s, "propulsion", "engine_count", "3")),
     r"\[propulsion\] engine_count: got 3; a piston study expects 1 to 2 engines"),
    ("part25-single-engine", _t(H, lambda s: edit(s, None, "certification", '"part25"')),
     r"\[propulsion\] engine_count: got 1 under certification 'part25'; expected 2 to 4"),
    ("piston-key-in-turbofan-study",
     _t(J, lambda s: edit(s, "propulsion", "sfc_cruise", '"0.44 lb/hp/hour"')),
     r"\[propulsion\] sfc_cruise: given for a turbofan study; expected it only for piston or "
     r"turboprop"),
    ("turbofan-key-in-piston-study",
     _t(H, lambda s: edit(s, "propulsion", "tsfc_cruise", '"0.7 lb/lbf/hour"')),
     r"\[propulsion\] tsfc_cruise: given for a piston study; expected it only for turbofan"),
    ("unknown-runway", _t(H, lambda s: edit(s, "departure", "runway", '"gravel"')),
     r"\[departure\] runway: got 'gravel'; expected one of: 'paved_dry'.*'short_grass'"),
    ("misspelt-runway", _t(H, lambda s: edit(s, "destination", "runway", '"short_gras"')),
     r"\[destination\] runway: got 'short_gras'; expected one of: .*\(did you mean "
     r"'short_grass'\?\)"),
    ("unknown-certification", _t(H, lambda s: edit(s, None, "certification", '"part27"')),
     r"certification: got 'part27'; expected one of: 'part23', 'part25'"),
    ("unknown-family", _t(H, lambda s: edit(s, "propulsion", "family", '"electric"')),
     r"\[propulsion\] family: got 'electric'; expected one of: 'piston', 'turboprop', "
     r"'turbofan'"),
    ("one-objective", _t(H, lambda s: edit(s, "objectives", "minimise", '["trip_fuel"]')),
     r"\[objectives\] minimise: got \['trip_fuel'\]; expected a list of two or more of: "
     r"trip_fuel"),
    ("unknown-objective",
     _t(H, lambda s: edit(s, "objectives", "minimise", '["trip_fuel", "noise"]')),
     r"\[objectives\] minimise: got 'noise'; expected one of: 'trip_fuel'"),
    ("search-population-too-small", _t(H, lambda s: edit(s, "search", "population", "2")),
     r"\[search\] population: got 2; expected at least 4"),
    ("search-fractional-generations", _t(H, lambda s: edit(s, "search", "generations", "6.5")),
     r"\[search\] generations: got 6\.5; expected a whole number"),
    ("search-misspelt-key", _t(H, lambda s: replace_once(s, "seed = 1", "seeds = 1")),
     r"\[search\]: unknown key 'seeds' \(did you mean 'seed'\?\); expected one of"),
    ("catalogue-unknown-field",
     _t(H, lambda s: s + "\n[flap_catalogue.fowler]\ncl_boost = 0.5\n"),
     r"\[flap_catalogue\.fowler\]: unknown key 'cl_boost'; expected one of: "
     r"section_cl_increment"),
    ("catalogue-new-type-incomplete",
     _t(H, lambda s: s + "\n[flap_catalogue.krueger]\nsection_cl_increment = 0.5\n"),
     r"\[flap_catalogue\.krueger\]: a new flap type needs every field; missing: "
     r"chord_extension"),
    ("catalogue-value-out-of-range",
     _t(H, lambda s: s + "\n[flap_catalogue.plain]\ntakeoff_fraction = 1.5\n"),
     r"\[flap_catalogue\.plain\] takeoff_fraction: got 1\.5; expected at most 1"),
    ("catalogue-name-with-newline",
     _t(H, lambda s: s + '\n[flap_catalogue."a\\nb"]\nsection_cl_increment = 0.5\n'),
     r"\[flap_catalogue\]: got the name 'a\\nb'; expected letters, digits and '_' only"),
    ("name-path-traversal", _t(H, lambda s: edit(s, None, "name", '"../../etc"')),
     r"name: got '\.\./\.\./etc'; expected at most 80 letters, digits"),
    ("cruise-below-stall", _t(H, lambda s: edit(s, "mission", "cruise_speed", '"60 kn"')),
     r"\[mission\] cruise_speed: got 30\.9 m/s; expected well above the stall-speed limit "
     r"31\.4 m/s"),
    ("cruise-above-mach-limit", _t(J, lambda s: edit(s, "mission", "cruise_speed", '"520 kn"')),
     r"\[mission\] cruise_speed: got Mach 0\.9\d\d at the cruise altitude; expected at most "
     r"Mach 0\.82"),  # 520 kn at FL370 (a = 295.07 m/s, ISA): M 0.907
    ("flare-faster-than-approach",
     _t(H, lambda s: s + "\n[speeds]\nflare_speed_factor = 1.4\napproach_speed_factor = 1.3\n"),
     r"\[speeds\] flare_speed_factor: got 1\.4; expected at most the approach_speed_factor 1\.3"),
    ("not-utf8",
     lambda: ("bytes", text_of(H).replace("# Invented", "# Inv\udcffented", 1)
              .encode("utf-8", "surrogateescape")),
     r"byte \d+ is not UTF-8; expected a UTF-8 text file"),
    ("larger-than-1MB", lambda: ("bytes", (text_of(H) + "#" * 1_000_001 + "\n").encode()),
     r"the file is 100\d{4} bytes; expected a study of at most 1000000 bytes"),
    ("a-folder", lambda: ("folder", None), r"is a folder; expected a study file \(\.toml\)"),
    ("missing-file", lambda: ("missing", None),
     r"cannot read the study file \(No such file or directory\)"),
]
BAD_IDS = [b[0] for b in BAD]
# These also run through the command line (a subprocess each, so only a few).
CLI_SUBSET = ("toml-syntax", "toml-integer-5000-digits", "misspelt-key", "wrong-dimension",
              "integer-400-digits", "quantity-400-digit-integer", "power-tower-in-unit-string",
              "catalogue-name-with-newline", "not-utf8", "a-folder", "missing-file")


def materialise(tmp_path: Path, builder) -> Path:
    kind, payload = builder()
    path = tmp_path / "study.toml"
    if kind == "text":
        path.write_text(payload, encoding="utf-8")
    elif kind == "bytes":
        path.write_bytes(payload)
    elif kind == "folder":
        path.mkdir()
    elif kind == "missing":
        pass
    return path


def test_bad_cases_are_many_and_distinct():
    assert len(BAD) >= 30
    assert len(set(BAD_IDS)) == len(BAD_IDS)
    assert set(CLI_SUBSET) <= set(BAD_IDS)


@pytest.mark.parametrize("case", BAD, ids=BAD_IDS)
def test_bad_study_is_refused_with_one_line(case, tmp_path):
    _, builder, pattern = case
    path = materialise(tmp_path, builder)
    with pytest.raises(StudyError, match=pattern) as info:
        load_study(path)
    message = str(info.value)
    assert "\n" not in message and "\r" not in message, message
    assert message.startswith(str(path)), message  # every message names the file
    # ... and says what was expected (or what is missing)
    assert re.search(r"expected|expects|missing|needs|reversed|give a single|not valid TOML|cannot read", message)


def run_cli(args, cwd: Path, timeout=120):
    """``python -m optimiser ARGS`` in ``cwd`` (the installed package of this interpreter)."""
    return subprocess.run([sys.executable, "-m", "optimiser", *map(str, args)], cwd=cwd,
                          capture_output=True, text=True, timeout=timeout)


@pytest.mark.parametrize("case", [b for b in BAD if b[0] in CLI_SUBSET],
                         ids=[i for i in BAD_IDS if i in CLI_SUBSET])
def test_bad_study_through_the_command_line(case, tmp_path):
    _, builder, pattern = case
    path = materialise(tmp_path, builder)
    cwd = tmp_path / "work"
    cwd.mkdir()
    proc = run_cli(["check", path], cwd)
    assert proc.returncode == 2, proc.stderr
    assert "Traceback" not in proc.stderr
    lines = proc.stderr.strip().splitlines()
    assert len(lines) == 1, proc.stderr
    assert lines[0].startswith("error: ")
    assert re.search(pattern, lines[0]), lines[0]
    assert proc.stdout == ""
    assert not (cwd / "results").exists()
    assert list(cwd.iterdir()) == []


def test_check_accepts_the_default_study(tmp_path):
    proc = run_cli(["check"], tmp_path)
    assert proc.returncode == 0, proc.stderr
    assert "study is valid" in proc.stdout
    assert "power_loading_N_kW: 45 to 150" in proc.stdout
    assert optimiser.CAUTION in proc.stdout
    assert not (tmp_path / "results").exists()


# --- the flap catalogue --------------------------------------------------------------------

COS_HINGE_A8 = math.cos(math.atan(-(4.0 / 8.0) * 0.45 * 0.4 / 1.6))
"""cos of the hinge-line sweep (x/c = 0.7) of the default study's wing at A 8 (trapezoidal
planform, tan L_x = tan L_c/4 - (4/A)(x - 1/4)(1 - taper)/(1 + taper), derived)."""


def _config(study, name):
    return next(h for h in study.spec.high_lift if h.name == name)


def test_flap_catalogue_override_changes_the_increments(default_study):
    text = text_of(DEFAULT) + "\n[flap_catalogue.fowler]\nsection_cl_increment = 1.6\n"
    study = parse_study(text)
    new, old = _config(study, "fowler"), _config(default_study, "fowler")
    # dCLmax = 0.9 dc_lmax (c'/c) (S_f/S) (highlift module docstring, common practice):
    # default 0.9 x 1.3 x 1.25 x 0.6 = 0.8775; with 1.6: 0.9 x 1.6 x 1.25 x 0.6 = 1.08
    assert old.cl_increment_landing == pytest.approx(0.8775, rel=1e-12)
    assert new.cl_increment_landing == pytest.approx(1.08, rel=1e-12)
    assert new.cl_increment_takeoff == pytest.approx(0.62 * 1.08, rel=1e-12)
    # the other fields and the other flaps are untouched
    assert new.cd0_increment_landing == old.cd0_increment_landing
    assert _config(study, "plain") == _config(default_study, "plain")
    # ... and the sized airplane sees it: CLmax landing = 1.5 + 1.08 cos(hinge sweep), the
    # hinge at x/c 0.7 of the unswept (c/4), taper 0.6, A 8 wing: tan = -(4/8) 0.45 (0.4/1.6)
    d = {"wing_loading_N_m2": [1000.0], "power_loading_N_kW": [70.0], "aspect_ratio": [8.0],
         "flap": ["fowler"]}
    assert optimiser.evaluate(study, d)["cl_max_landing"].iloc[0] == pytest.approx(
        1.5 + 1.08 * COS_HINGE_A8)
    assert optimiser.evaluate(default_study, d)["cl_max_landing"].iloc[0] == pytest.approx(
        1.5 + 0.8775 * COS_HINGE_A8)


def test_new_flap_type_with_every_field_is_usable(default_study):
    assert set(CATALOGUE_FULL) == set(highlift.FLAP_FIELDS)
    block = "\n[flap_catalogue.slotted_plain]\n" + "".join(
        f"{k} = {v}\n" for k, v in CATALOGUE_FULL.items())
    text = edit(text_of(DEFAULT), "variables", "flaps", '["plain", "slotted_plain"]') + block
    study = parse_study(text)
    assert study.flaps == ("plain", "slotted_plain")
    cfg = _config(study, "slotted_plain")
    # 0.9 x 1.1 x 1.1 x 0.6 = 0.6534; takeoff 0.6 of it; CD0 0.065 x 1.0 and 0.015 x 0.9
    assert cfg.cl_increment_landing == pytest.approx(0.6534, rel=1e-12)
    assert cfg.cl_increment_takeoff == pytest.approx(0.6 * 0.6534, rel=1e-12)
    assert cfg.cd0_increment_landing == pytest.approx(0.065, rel=1e-12)
    assert cfg.cd0_increment_takeoff == pytest.approx(0.0135, rel=1e-12)
    assert "slotted_plain+slats" in study.spec.high_lift_names
    frame = optimiser.evaluate(study, pd.DataFrame({
        "wing_loading_N_m2": [1000.0, 1000.0], "power_loading_N_kW": [70.0, 70.0],
        "aspect_ratio": [8.0, 8.0], "flap": ["slotted_plain", "plain"]}))
    assert frame["cl_max_landing"].tolist() == pytest.approx(
        [1.5 + 0.6534 * COS_HINGE_A8, 1.5 + 0.486 * COS_HINGE_A8])
    assert frame["within_bounds"].tolist() == [True, True]
    assert np.isfinite(frame.select_dtypes("number").to_numpy()).all()


# --- fuzzing -------------------------------------------------------------------------------

_DEFAULT_TEXT = text_of(DEFAULT)
_VALUE_LINES = [i for i, line in enumerate(_DEFAULT_TEXT.splitlines())
                if re.match(r"\s*[A-Za-z_]+\s*=", line)]
_UNITS = ["m", "ft", "nmi", "kn", "m/s", "kg", "lb", "K", "degC", "delta_degC", "s", "min",
          "hour", "deg", "rad", "N/m^2", "N/kW", "lb/hp/hour", "lb/lbf/hour", "kg/kW", "W",
          "", "furlong", "m**2", "1/s", "m^99", "dimensionless"]


def _toml_string(s: str) -> str:
    return json.dumps(s, ensure_ascii=False)


def _toml_float(x: float) -> str:
    if math.isnan(x):
        return "nan"
    if math.isinf(x):
        return "inf" if x > 0 else "-inf"
    return repr(x)


_numbers = st.one_of(
    st.integers(min_value=-10**30, max_value=10**30),
    st.floats(allow_nan=True, allow_infinity=True),
    st.sampled_from([0, 1, 2, 3, 4, 5, -1, 10**400]))
_quantity_strings = st.builds(
    lambda x, u: f"{_toml_float(float(x)) if not isinstance(x, int) else x} {u}".strip(),
    _numbers, st.sampled_from(_UNITS))
_scalars = st.one_of(
    _numbers.map(lambda x: str(x) if isinstance(x, int) else _toml_float(x)),
    st.booleans().map(lambda b: "true" if b else "false"),
    st.text(max_size=30).map(_toml_string),
    _quantity_strings.map(_toml_string),
    st.sampled_from(['"none"', '"fowler"', '"part25"', '"turbofan"', '"paved_wet"', "[]",
                     "{}", '["trip_fuel"]', "[1, 2]", '["1 m", "2 m"]', "1979-05-27",
                     '{x = 1}', '"plain+slats"']),
)
_arrays = st.lists(_scalars, max_size=3).map(lambda xs: "[" + ", ".join(xs) + "]")


def _check_parses_or_refuses(text: str):
    try:
        study = parse_study(text, "fuzz.toml")
    except StudyError as exc:
        assert "\n" not in str(exc), str(exc)
        return
    assert isinstance(study, Study)


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.text(max_size=300))
def test_fuzz_arbitrary_text(text):
    _check_parses_or_refuses(text)


@settings(max_examples=250, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(st.tuples(st.sampled_from(_VALUE_LINES), st.one_of(_scalars, _arrays)),
                min_size=1, max_size=3))
def test_fuzz_mutated_default_study(mutations):
    lines = _DEFAULT_TEXT.splitlines()
    for index, value in mutations:
        key = lines[index].split("=", 1)[0].strip()
        lines[index] = f"{key} = {value}"
    _check_parses_or_refuses("\n".join(lines) + "\n")


@settings(max_examples=100, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.sampled_from(_VALUE_LINES), st.text(max_size=40))
def test_fuzz_raw_text_in_place_of_a_value(index, raw):
    lines = _DEFAULT_TEXT.splitlines()
    key = lines[index].split("=", 1)[0].strip()
    lines[index] = f"{key} = {raw}"
    _check_parses_or_refuses("\n".join(lines) + "\n")
