"""``optimiser check`` says what it read: every value as the study gave it and in SI, the
defaults applied, the certification numbers, and a coarse-grid warning for a requirement that
no design in the bounds meets (a unit slip shows before a run).

Source: for the expected values, exact unit definitions (1 ft = 0.3048 m, 1 kn = 1852/3600
m/s, NIST SP 811 Appendix B); the 50 ft screen height of 14 CFR 23.53 (part23 takeoff
distance, as optimiser.physics.performance.OBSTACLE_HEIGHT has it); the rest are the
project's own rules (one line per value, exit status 0 for a valid study).
"""

from __future__ import annotations

from pathlib import Path

import pytest

from optimiser.cli import main
from optimiser.preflight import findings, grid_margins
from optimiser.study import load_study, parse_study
from optimiser.study_table import ORIGIN_GIVEN, resolved_entries

PROBLEMS = Path(__file__).resolve().parents[1] / "problems"
DEFAULT = PROBLEMS / "high_strip_utility.toml"


def _feet_study(tmp_path) -> Path:
    text = DEFAULT.read_text("utf-8").replace('field_length = "750 m"', 'field_length = "750 ft"')
    assert text.count('"750 ft"') == 2
    path = tmp_path / "feet.toml"
    path.write_text(text, "utf-8")
    return path


def _entry(study, section, key):
    (e,) = [e for e in resolved_entries(study) if (e.section, e.key) == (section, key)]
    return e


def test_given_values_keep_the_study_text_and_their_exact_si_value():
    study = load_study(DEFAULT)
    stall = _entry(study, "requirements", "stall_speed")
    assert stall.origin == ORIGIN_GIVEN and stall.given == '"61 kn"'
    assert stall.value == pytest.approx(61 * 1852 / 3600, rel=1e-12)   # 1 kn = 1852/3600 m/s
    ceiling = _entry(study, "requirements", "service_ceiling")
    assert ceiling.value == pytest.approx(14000 * 0.3048, rel=1e-12)   # 1 ft = 0.3048 m


def test_defaults_say_where_they_came_from():
    study = load_study(DEFAULT)
    screen = _entry(study, "departure", "obstacle_height")
    assert screen.given is None and screen.origin == "the certification basis"
    assert screen.value == pytest.approx(50 * 0.3048, rel=1e-12)       # 14 CFR 23.53: 50 ft
    sfc_eff = _entry(study, "propulsion", "propeller_efficiency_cruise")
    assert sfc_eff.origin == "piston default"
    # values of another propulsion family are not listed for a piston study
    assert not [e for e in resolved_entries(study) if e.key == "tsfc_cruise"]


def test_every_spec_value_is_listed_once():
    study = load_study(DEFAULT)
    keys = [(e.section, e.key) for e in resolved_entries(study)]
    assert len(keys) == len(set(keys))
    assert ("aerodynamics", "taper_ratio") in keys and ("speeds", "rotation_time") in keys


def test_a_field_length_in_feet_is_flagged_with_its_key_and_both_values(tmp_path, capsys):
    assert main(["check", str(_feet_study(tmp_path))]) == 0
    out = capsys.readouterr().out
    warnings = [line for line in out.splitlines() if line.startswith("warning:")]
    assert len(warnings) == 2, out
    assert '[departure] field_length = "750 ft" (= 228.6 m)' in warnings[0]
    assert "takeoff field length" in warnings[0]
    assert "[destination] field_length" in warnings[1]
    assert "study is valid; 2 warnings above" in out
    assert '[departure] field_length = "750 ft" -> 228.6 m' in out


@pytest.mark.parametrize("name", ["high_strip_utility", "twin_turboprop_commuter",
                                  "light_twin_jet"])
def test_bundled_studies_pass_the_grid_check(name, capsys):
    assert main(["check", str(PROBLEMS / f"{name}.toml")]) == 0
    out = capsys.readouterr().out
    assert "warning:" not in out
    assert "grid designs over the bounds meet every requirement" in out
    assert "certification " in out and "defaults applied (SI):" in out


def test_grid_margins_agree_with_the_findings(tmp_path):
    study = load_study(_feet_study(tmp_path))
    best, share = grid_margins(study)
    assert share == 0.0
    found, _ = findings(study)
    assert {f.constraint for f in found} == {c for c, m in best.items() if m < 0}
    assert {"takeoff_field", "landing_field"} <= {f.constraint for f in found}


def test_a_stall_limit_in_the_wrong_unit_is_flagged(tmp_path):
    # 61 "m/s" typed as 61 "km/h" (16.9 m/s): no wing loading in the bounds stalls that slowly
    text = DEFAULT.read_text("utf-8").replace('stall_speed = "61 kn"', 'stall_speed = "61 km/h"')
    study = parse_study(text, "slow.toml")
    found, _ = findings(study)
    assert "stall_speed" in {f.constraint for f in found}
    (f,) = [f for f in found if f.constraint == "stall_speed"]
    assert '"61 km/h" (= 16.9444 m/s)' in f.where
