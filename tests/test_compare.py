"""``optimiser compare``: the study values that differ, the fronts on a common reference.

Source: the hypervolume of a two-objective front is the area it dominates up to the
reference point (Zitzler & Thiele 1998, "Multiobjective optimization using evolutionary
algorithms - a comparative case study"), computed here independently by sorting; the
common reference (ideal and nadir of the union's non-dominated designs, reference point 1.1
in normalised objectives) is the project's own rule, as for a run's own reference.
"""

from __future__ import annotations

import shutil
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

import optimiser
from optimiser.cli import main
from optimiser.compare import compare_runs
from optimiser.search import nondominated_mask
from optimiser.study import parse_study

PROBLEMS = Path(__file__).resolve().parents[1] / "problems"


def _study(field_length):
    text = (PROBLEMS / "high_strip_utility.toml").read_text("utf-8")
    text = text.replace('field_length = "750 m"', f'field_length = "{field_length}"')
    text = text.replace('minimise = ["trip_fuel", "engine_size", "maintenance"]',
                        'minimise = ["trip_fuel", "engine_size"]')
    return parse_study(text, "s.toml")


@pytest.fixture(scope="module")
def two_runs(tmp_path_factory):
    root = tmp_path_factory.mktemp("compare")
    dirs = []
    for name, length in (("long", "800 m"), ("short", "700 m")):
        out = root / name
        optimiser.optimise(_study(length), out=out, plots=False, population=24, generations=6)
        dirs.append(out)
    return dirs


def _area(F, ref):
    """Area dominated by the 2-objective rows F up to ``ref`` (both minimised)."""
    F = F[np.all(F < ref, axis=1)]
    F = F[nondominated_mask(F)]
    F = F[np.argsort(F[:, 0])]
    xs = np.append(F[:, 0], ref[0])
    return float(sum((xs[i + 1] - xs[i]) * (ref[1] - F[i, 1]) for i in range(len(F))))


def test_changes_name_the_field_length_and_nothing_else(two_runs):
    cmp = compare_runs(two_runs)
    keys = set(zip(cmp.changes["section"], cmp.changes["key"]))
    assert keys == {("departure", "field_length"), ("destination", "field_length")}
    row = cmp.changes[cmp.changes["section"] == "departure"].iloc[0]
    assert row["long"] == "800 m" and row["short"] == "700 m"


def test_hypervolume_on_the_common_reference_matches_the_area_by_hand(two_runs):
    cmp = compare_runs(two_runs)
    ideal = np.asarray(cmp.scales["ideal"])
    span = np.asarray(cmp.scales["nadir"]) - ideal
    for _, r in cmp.summary.iterrows():
        front = pd.read_csv(Path(r["run_dir"]) / "front.csv")
        Fn = (front[cmp.objectives].to_numpy(float) - ideal) / span
        assert r["common_hypervolume"] == pytest.approx(_area(Fn, np.array([1.1, 1.1])),
                                                        rel=1e-9)
    # the union's non-dominated designs set the scale: its ideal is each objective's best
    best = cmp.summary[[f"best_{c}" for c in cmp.objectives]].min().to_numpy(float)
    assert np.allclose(ideal, best)


def test_the_command_writes_its_files_and_refuses_bad_sets(two_runs, tmp_path, capsys):
    out = tmp_path / "cmp"
    assert main(["compare", *map(str, two_runs), "--out", str(out)]) == 0
    assert {p.name for p in out.iterdir()} == {"compare.csv", "study_changes.csv",
                                              "fronts.png", "fronts.svg"}
    assert "[departure] field_length: 800 m | 700 m" in capsys.readouterr().out
    assert main(["compare", *map(str, two_runs), "--out", str(out)]) == 2   # exists
    assert main(["compare", str(two_runs[0]), str(two_runs[0])]) == 2
    assert "given twice" in capsys.readouterr().err
    assert main(["compare", str(two_runs[0])]) == 2
    copy = tmp_path / "copy"
    shutil.copytree(two_runs[0], copy)
    assert main(["compare", str(two_runs[0]), str(copy), "--out", str(tmp_path / "c2")]) == 0
    assert "the resolved studies are identical" in capsys.readouterr().out
