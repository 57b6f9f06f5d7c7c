"""Corrections found by an independent recomputation of the outputs and a practitioner's
trial: the jet's static thrust at the airfield, a stall stop that converges, and a
no-feasible-design message that cannot contradict itself.

Sources: U.S. Standard Atmosphere 1976 (troposphere: T = 288.15 - 0.0065 H,
p = 101325 (T / 288.15)^5.255877); Mattingly, Heiser & Pratt, "Aircraft Engine Design",
2nd ed., AIAA 2002, sec. 2.3.2 (high-bypass turbofan lapse at M = 0: alpha = delta0, less
3 (theta0 - TR) / 1.5 when theta0 > TR) [from memory].
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from optimiser.evaluation import evaluate
from optimiser.runs import optimise
from optimiser.study import load_study, parse_study

PROBLEMS = Path(__file__).resolve().parents[1] / "problems"


def test_jet_static_thrust_is_at_the_departure_airfield():
    study = load_study(PROBLEMS / "light_twin_jet.toml")
    frame = evaluate(study, pd.read_csv(PROBLEMS / "light_twin_jet_designs.csv"))
    dep = study.spec.departure
    t = 288.15 - 0.0065 * dep.elevation_m          # pressure altitude = elevation (ISA)
    p = 101325.0 * (t / 288.15) ** 5.255877
    theta0 = (t + dep.temperature_offset_K) / 288.15
    delta0 = p / 101325.0
    tr = study.spec.propulsion.turbofan_throttle_ratio
    lapse = delta0 * (1.0 - (3.0 * (theta0 - tr) / 1.5 if theta0 > tr else 0.0))
    expected = frame["engine_thrust_kN"].to_numpy() * 1e3 * lapse
    assert lapse < 0.95       # a hot airfield at 500 m: well below the sea-level rating
    np.testing.assert_allclose(frame["static_thrust_N"].to_numpy(), expected, rtol=1e-4)


def test_a_converged_run_stops_on_stall(tmp_path):
    study = load_study(PROBLEMS / "high_strip_utility.toml")
    result = optimise(study, out=tmp_path / "run", population=40, generations=400, seed=2,
                      stall_generations=8, plots=False)
    info = json.loads((tmp_path / "run" / "run.json").read_text())
    history = pd.read_csv(tmp_path / "run" / "history.csv")
    assert result.termination == "stall"
    assert len(history) < 400
    assert info["budget"]["stall_tolerance"] == pytest.approx(1e-4)
    # the last 8 generations grew the hypervolume by no more than the tolerance
    hv = history["hypervolume"].to_numpy()
    assert hv[-1] <= hv[-9] * (1 + 1e-4) * (1 + 1e-12)


def test_no_feasible_message_names_a_constraint_the_closest_design_misses(tmp_path):
    text = (PROBLEMS / "high_strip_utility.toml").read_text()
    assert text.count('field_length = "750 m"') == 2
    study = parse_study(text.replace('field_length = "750 m"', 'field_length = "150 m"'),
                        str(PROBLEMS / "high_strip_utility.toml"))
    result = optimise(study, out=tmp_path / "run", population=24, generations=3, seed=1,
                      plots=False)
    least = pd.read_csv(tmp_path / "run" / "least_violating.csv")
    assert len(result.front) == 0 and "still misses" in result.message
    name = result.message.split("still misses ")[1].split(" ")[0]
    quoted = float(result.message.split("(margin ")[1].split("%")[0]) / 100
    assert quoted < 0
    assert least.loc[0, f"margin_{name}"] == pytest.approx(quoted, abs=5e-4)
    margins = least.loc[0, [c for c in least.columns if c.startswith("margin_")]]
    assert least.loc[0, f"margin_{name}"] == margins.min()
