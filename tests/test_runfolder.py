"""The run folder module: its file names are spelled in one place, and the one archive reader
returns what the file holds.

Source: the project's own run-folder rules (DEVELOPERS.md); no published values."""

from __future__ import annotations

import ast
from pathlib import Path

import numpy as np

from optimiser.runfolder import names, read_archive

PACKAGE = Path(__file__).resolve().parents[1] / "optimiser"


def test_run_file_names_are_spelled_only_in_runfolder_names():
    spelled = {v for k, v in vars(names).items() if k.isupper() and isinstance(v, str)}
    found = []
    for path in PACKAGE.rglob("*.py"):
        if path == PACKAGE / "runfolder" / "names.py":
            continue
        for node in ast.walk(ast.parse(path.read_text("utf-8"))):
            # "plots" and "flaps" are also a campaign folder's figures and a study key
            if isinstance(node, ast.Constant) and node.value in spelled - {"plots", "flaps"}:
                found.append(f"{path.relative_to(PACKAGE)}:{node.lineno}: {node.value!r}")
    assert found == []


def test_read_archive_returns_the_columns_and_the_feasible_rows(tmp_path):
    # a hand-written archive (values ours): three designs, the second infeasible
    (tmp_path / names.ARCHIVE).write_text(
        "generation,wing_loading_N_m2,flap,trip_fuel_kg,feasible\n"
        "1,1000.5,fowler,250.25,true\n"
        "1,1200.0,plain,240.0,false\n"
        "2,1100.0,none,0.1,true\n", encoding="utf-8")
    every = read_archive(tmp_path, ["flap", "trip_fuel_kg", "feasible"])
    assert list(every["flap"]) == ["fowler", "plain", "none"]
    assert list(every["feasible"]) == [True, False, True]
    feasible = read_archive(tmp_path, ["wing_loading_N_m2", "trip_fuel_kg"], feasible_only=True)
    assert list(feasible.columns) == ["wing_loading_N_m2", "trip_fuel_kg"]
    assert np.array_equal(feasible.to_numpy(float), [[1000.5, 250.25], [1100.0, 0.1]])


def test_read_archive_of_an_empty_archive_has_the_columns(tmp_path):
    (tmp_path / names.ARCHIVE).write_text("trip_fuel_kg,feasible\n", encoding="utf-8")
    table = read_archive(tmp_path, ["trip_fuel_kg"], feasible_only=True)
    assert table.to_numpy(float).shape == (0, 1)


def test_the_clock_reads_source_date_epoch_when_set(monkeypatch):
    # reproducible-builds.org SOURCE_DATE_EPOCH: 1798761600 s after 1970 is 2027-01-01 00:00 UTC
    from optimiser.runfolder import files
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1798761600")
    assert files.utc_now() == "2027-01-01T00:00:00Z"
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "not a number")
    assert files.utc_now() != "2027-01-01T00:00:00Z"


def test_every_true_or_false_column_of_a_front_is_read_as_one():
    # the reader converts the schema's boolean columns; a new flag column must be listed
    import numpy as np
    from optimiser.evaluation import evaluate
    from optimiser.runfolder.reader import BOOL_COLUMNS
    from optimiser.study import load_study
    from pathlib import Path
    study = load_study(Path(__file__).resolve().parents[1] / "problems" / "light_twin_jet.toml")
    frame = evaluate(study, {"wing_loading_N_m2": [3000.0], "thrust_to_weight": [0.4],
                             "aspect_ratio": [8.0], "flap": ["fowler"]})
    flags = {c for c in frame.columns if frame[c].dtype == np.bool_}
    assert flags <= set(BOOL_COLUMNS), flags - set(BOOL_COLUMNS)
