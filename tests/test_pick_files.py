"""A pick's design file round-trips: ``design_input.csv`` feeds ``optimiser evaluate`` and
``optimiser robust --front`` and sizes to exactly the chosen design's numbers; a pick with
hard limits goes to its own folder and leaves the unlimited pick alone.

Source: the project's own rules (the model is deterministic per design,
so an exact input gives the same numbers bit for bit).
"""

from __future__ import annotations

from pathlib import Path

import pandas as pd
import pytest

import optimiser
from optimiser.cli import main
from optimiser.evaluation import evaluate
from optimiser.runfolder import names
from optimiser.study import load_study

PROBLEMS = Path(__file__).resolve().parents[1] / "problems"


@pytest.fixture(scope="module")
def run_dir(tmp_path_factory):
    study = load_study(PROBLEMS / "high_strip_utility.toml")
    out = tmp_path_factory.mktemp("pick") / "run"
    optimiser.optimise(study, out=out, plots=False, population=24, generations=5)
    return out


def test_design_input_sizes_to_the_chosen_design_exactly(run_dir, capsys):
    assert main(["pick", str(run_dir)]) == 0
    out = capsys.readouterr().out
    assert f"--designs {run_dir}/pick-knee/{names.PICK_DESIGN_INPUT}" in out
    chosen = pd.read_csv(run_dir / "pick-knee" / "design.csv")
    table = pd.read_csv(run_dir / "pick-knee" / names.PICK_DESIGN_INPUT)
    study = load_study(run_dir / names.STUDY)
    assert list(table.columns) == ["wing_loading_N_m2", "power_loading_N_kW", "aspect_ratio",
                                   "flap"] and len(table) == 1
    front = pd.read_csv(run_dir / names.FRONT)
    import json
    row = json.loads((run_dir / "pick-knee" / names.PICK_CHOICE).read_text())["front_row"]
    again = evaluate(study, table).iloc[0]
    for c in ("takeoff_mass_kg", "trip_fuel_kg", "engine_power_kW", "maintenance_index"):
        assert again[c] == front.iloc[row][c], c                      # bit for bit
    assert not chosen.empty


def test_design_input_feeds_evaluate_and_robust_on_the_command_line(run_dir, tmp_path):
    assert main(["pick", str(run_dir), "--method", "weights", "--weights", "0.6,0.3,0.1"]) == 0
    design = run_dir / "pick-weights" / names.PICK_DESIGN_INPUT
    assert main(["evaluate", str(run_dir / names.STUDY), "--designs", str(design),
                 "--out", str(tmp_path / "sized.csv")]) == 0
    assert len(pd.read_csv(tmp_path / "sized.csv")) == 1
    assert main(["robust", str(run_dir / names.STUDY), "--front", str(design), "--samples",
                 "200", "--out", str(tmp_path / "robust")]) == 0


def test_a_limited_pick_has_its_own_folder(run_dir):
    assert main(["pick", str(run_dir), "--force"]) == 0
    before = (run_dir / "pick-knee" / "design.csv").read_bytes()
    front = pd.read_csv(run_dir / names.FRONT)
    limit = f"engine_power_kW<={front['engine_power_kW'].median():.6g}"
    assert main(["pick", str(run_dir), "--limit", limit]) == 0
    limited = [p for p in run_dir.glob("pick-knee-limited-*") if p.is_dir()]
    assert len(limited) == 1
    assert (run_dir / "pick-knee" / "design.csv").read_bytes() == before
    # the same limits again: the same folder (refused without --force)
    assert main(["pick", str(run_dir), "--limit", limit]) == 2
