"""Operating and certification rules through the model: the landing field length required,
the Part 23 all-engines gradient by mass and engine type, and the Part 25 climb segments.

Sources (rule text from memory unless marked): 14 CFR 121.195(b) (landing distance within
60 % of the runway) and (d) (wet runway: 115 % of the dry requirement); 14 CFR 135.385(b)
(the same 60 % for commuters); 14 CFR 23.65(a), (b) before Amdt 23-64 (8.3 % reciprocating up
to 6000 lb, else 4 %; checked in METHODS.md sec. 4); 14 CFR 25.121(a), (c), (d) and 25.119
(gradients for twins: positive, 1.2 %, 2.1 %, 3.2 %); Mattingly, Heiser & Pratt, "Aircraft
Engine Design", 2nd ed., AIAA 2002, sec. 2.3.2 (turbofan lapse, from memory); U.S. Standard
Atmosphere 1976.
"""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from optimiser.errors import StudyError
from optimiser.evaluation import evaluate
from optimiser.physics import G0, propulsion
from optimiser.physics import atmosphere as atm
from optimiser.study import parse_study

PROBLEMS = Path(__file__).resolve().parents[1] / "problems"
SEGMENTS = ("first_segment_climb", "final_takeoff_climb", "approach_climb", "landing_climb")


def _frame(name, text=None):
    text = text if text is not None else (PROBLEMS / f"{name}.toml").read_text()
    study = parse_study(text, f"{name}.toml")
    return study, evaluate(study, pd.read_csv(PROBLEMS / f"{name}_designs.csv"))


def _with(name, section, line):
    """The study text with ``line`` added at the top of ``[section]``."""
    text = (PROBLEMS / f"{name}.toml").read_text()
    assert f"[{section}]\n" in text
    return text.replace(f"[{section}]\n", f"[{section}]\n{line}\n", 1)


def test_part25_landing_distance_fits_in_60_percent_of_the_runway():
    # 14 CFR 121.195(b): landing distance at most 60 % of the effective runway length
    study, f = _frame("light_twin_jet")
    np.testing.assert_allclose(f["landing_field_required_m"], f["landing_distance_m"] / 0.6,
                               rtol=1e-12)
    np.testing.assert_allclose(
        f["margin_landing_field"],
        1.0 - f["landing_field_required_m"] / study.spec.destination.field_length_m, rtol=1e-12)


def test_part25_wet_runway_raises_the_dry_requirement_by_15_percent():
    # 14 CFR 121.195(d): wet runway at least 115 % of the dry requirement; the dry distance
    # (dry braking, paved_dry 0.40) is the one multiplied
    _, dry = _frame("light_twin_jet")
    # no [destination]: the jet lands back at its departure airfield
    text = (PROBLEMS / "light_twin_jet.toml").read_text()
    assert "[destination]" not in text
    study, wet = _frame("light_twin_jet", text.replace('runway = "paved_dry"',
                                                       'runway = "paved_wet"', 1))
    assert study.spec.destination.braking_friction == pytest.approx(0.40, abs=1e-12)
    np.testing.assert_allclose(wet["landing_distance_m"], dry["landing_distance_m"], rtol=1e-12)
    np.testing.assert_allclose(wet["landing_field_required_m"],
                               dry["landing_distance_m"] * 1.15 / 0.6, rtol=1e-12)


def test_part23_landing_field_is_the_distance_unless_the_operator_applies_60_percent():
    # Part 23 airworthiness rules carry no factor; 14 CFR 135.385(b) 60 % when applied
    _, plain = _frame("high_strip_utility")
    np.testing.assert_allclose(plain["landing_field_required_m"], plain["landing_distance_m"],
                               rtol=1e-12)
    _, ops = _frame("high_strip_utility", _with("high_strip_utility", "requirements",
                                                 "landing_dispatch_factor = true"))
    np.testing.assert_allclose(ops["landing_field_required_m"], ops["landing_distance_m"] / 0.6,
                               rtol=1e-12)


def test_part23_wet_runway_without_dispatch_uses_wet_braking():
    # RUNWAY_SURFACES paved_wet braking 0.22 (Gudmundsson 2014 ch. 17, from memory), no 115 %
    text = (PROBLEMS / "high_strip_utility.toml").read_text()
    start = text.index("[destination]")
    text = text[:start] + text[start:].replace('runway = "short_grass"', 'runway = "paved_wet"', 1)
    study, f = _frame("high_strip_utility", text)
    assert study.spec.destination.braking_friction == pytest.approx(0.22, abs=1e-12)
    np.testing.assert_allclose(f["landing_field_required_m"], f["landing_distance_m"],
                               rtol=1e-12)


def test_part23_aeo_gradient_by_mass_and_engine_type():
    # 14 CFR 23.65(a): 8.3 % for reciprocating airplanes of 6000 lb (2721.554 kg) or less;
    # 23.65(b): 4 % above 6000 lb and for turbine airplanes
    _, f = _frame("high_strip_utility")
    light = f["takeoff_mass_kg"] <= 6000 * 0.45359237
    assert light.any()
    np.testing.assert_allclose(f["climb_gradient_required"], np.where(light, 0.083, 0.04))
    np.testing.assert_allclose(f["margin_climb_gradient"],
                               f["climb_gradient"] / f["climb_gradient_required"] - 1.0,
                               rtol=1e-12)
    text = (PROBLEMS / "twin_turboprop_commuter.toml").read_text().replace(
        'certification = "part25"', 'certification = "part23"')
    study, tp = _frame("twin_turboprop_commuter", text)
    assert study.spec.certification.basis == "part23"
    np.testing.assert_allclose(tp["climb_gradient_required"], 0.04)  # turbine, 23.65(b)
    assert not any(f"margin_{c}" in tp for c in SEGMENTS)


@pytest.mark.parametrize("name", ["light_twin_jet", "twin_turboprop_commuter"])
def test_part25_segment_margins_against_the_twin_gradients(name):
    # twins: 25.121(a) positive, 25.121(c) 1.2 %, 25.121(d) 2.1 %, 25.119 3.2 %
    _, f = _frame(name)
    np.testing.assert_allclose(f["margin_final_takeoff_climb"],
                               f["final_takeoff_gradient"] / 0.012 - 1.0, rtol=1e-12)
    np.testing.assert_allclose(f["margin_approach_climb"],
                               f["approach_climb_gradient"] / 0.021 - 1.0, rtol=1e-12)
    np.testing.assert_allclose(f["margin_landing_climb"],
                               f["landing_climb_gradient"] / 0.032 - 1.0, rtol=1e-12)
    # positive gradient required: the margin's sign is the gradient's
    assert ((f["margin_first_segment_climb"] >= 0) == (f["first_segment_gradient"] >= 0)).all()
    # one engine out, gear down at V_LOF climbs worse than gear up at V2 (second segment)
    assert (f["first_segment_gradient"] < f["oei_climb_gradient"]).all()


def test_jet_landing_climb_by_hand():
    # 25.119 all engines, landing flaps and gear, V_REF = 1.3 V_S, landing mass, takeoff thrust:
    # sin(gamma) = T/W - (q CD0 / (W/S) + K (W/S) / q), T = T_SL x Mattingly lapse at the
    # destination (sea level ISA for this study unless given)
    study, f = _frame("light_twin_jet")
    sp = study.spec
    dst = sp.destination
    t = float(atm.isa_temperature(dst.elevation_m, dst.temperature_offset_K))
    p = float(atm.isa_pressure(dst.elevation_m))
    rho = p / (287.05287 * t)
    m_land = f["takeoff_mass_kg"].to_numpy() * sp.mission.landing_mass_ratio
    ws = m_land * G0 / f["wing_area_m2"].to_numpy()
    v = 1.3 * np.sqrt(2 * ws / (rho * f["cl_max_landing"].to_numpy()))
    mach = v / np.sqrt(1.4 * 287.05287 * t)
    thrust = f["engine_thrust_kN"].to_numpy() * 1e3 * propulsion.turbofan_thrust_lapse_mattingly(
        t, p, mach, sp.propulsion.turbofan_throttle_ratio)
    q = 0.5 * rho * v**2
    k = 1.0 / (np.pi * f["aspect_ratio"].to_numpy() * f["oswald_e"].to_numpy())
    grad = thrust / (m_land * G0) - (q * f["cd0_landing"].to_numpy() / ws + k * ws / q)
    np.testing.assert_allclose(f["landing_climb_gradient"], grad, rtol=1e-6)


def test_skip_checks_switch_a_segment_off_with_its_reason(tmp_path):
    text = _with("twin_turboprop_commuter", "requirements",
                 'skip_checks = { approach_climb = "approach flaps of the type certificate '
                 'give more margin than the takeoff setting" }')
    study, f = _frame("twin_turboprop_commuter", text)
    assert "margin_approach_climb" not in f
    assert {"margin_first_segment_climb", "margin_final_takeoff_climb",
            "margin_landing_climb"} <= set(f.columns)
    path = tmp_path / "skip.toml"
    path.write_text(text)
    out = subprocess.run([sys.executable, "-m", "optimiser", "check", str(path)],
                         capture_output=True, text=True)
    assert out.returncode == 0, out.stderr
    assert "check approach_climb switched off: approach flaps of the type certificate" \
        in out.stdout


@pytest.mark.parametrize("line, words", [
    ('skip_checks = { approach_clim = "reason" }',
     ["[requirements] skip_checks.approach_clim", "approach_climb"]),
    ('skip_checks = { landing_climb = "" }',
     ["[requirements] skip_checks.landing_climb", "reason"]),
    ('skip_checks = "approach_climb"', ["[requirements] skip_checks", "table"]),
])
def test_skip_checks_errors_name_the_key(line, words):
    with pytest.raises(StudyError) as err:
        parse_study(_with("twin_turboprop_commuter", "requirements", line), "s.toml")
    message = str(err.value)
    assert "\n" not in message
    for w in words:
        assert w in message


def test_constraint_diagram_grid_draws_landing_at_the_required_length():
    # the diagram contours margin_landing_field = 0 over a grid of sized designs, so its line
    # is where the landing distance is 60 % of the runway (14 CFR 121.195(b))
    from optimiser.report.plots import constraint_grid
    study, f = _frame("light_twin_jet")
    _, _, grid = constraint_grid(study, f.iloc[0], n=12)
    field = study.spec.destination.field_length_m
    np.testing.assert_allclose(grid["margin_landing_field"],
                               1.0 - grid["landing_distance_m"] / 0.6 / field, rtol=1e-12)
    assert (grid["margin_landing_field"] < 0).any() and (grid["margin_landing_field"] > 0).any()
