"""The search: run folder contents, exactness of the front, reproducibility, resume,
refusal to overwrite, an impossible study, and front quality against a dense enumeration."""

from __future__ import annotations

import itertools
import json

import numpy as np
import pandas as pd
import pytest

import optimiser
from optimiser.cli import main
from optimiser.evaluation import design_columns, size_frame
from optimiser.runs import RunInterrupted, resume
from optimiser.runstate import STALL_TOLERANCE
from optimiser.search import flap_indices, hypervolume, nondominated_mask, reference_scales
from optimiser.study import bundled_study_path, parse_study

TINY = dict(population=16, generations=6)


@pytest.fixture(scope="module")
def tiny_run(study, tmp_path_factory):
    out = tmp_path_factory.mktemp("tiny") / "run"
    return optimiser.optimise(study, out=out, plots=optimiser.write_plots, **TINY)


def _dominated_any(F):
    """Brute force: does any row dominate another? (definition of Pareto dominance)"""
    le = np.all(F[:, None, :] <= F[None, :, :], axis=2)
    lt = np.any(F[:, None, :] < F[None, :, :], axis=2)
    dom = le & lt
    np.fill_diagonal(dom, False)
    return dom.any()


def test_tiny_run_writes_every_file(tiny_run):
    d = tiny_run.run_dir
    for name in ("study.toml", "run.json", "front.csv", "evaluations.csv", "history.csv",
                 "checkpoint.npz", "plots/objectives.png", "plots/objectives.svg",
                 "plots/front_view.png", "plots/decision_variables.png",
                 "plots/convergence.svg", "plots/constraint_diagram.png"):
        assert (d / name).is_file(), name
    info = json.loads((d / "run.json").read_text())
    for key in ("versions", "seed", "study_sha256", "started_utc", "ended_utc", "budget",
                "termination", "n_evaluations", "n_feasible", "front_size", "caution",
                "hypervolume"):
        assert key in info, key
    assert info["caution"] == optimiser.CAUTION
    assert info["seed"] == 1  # the study's [search] seed
    assert info["termination"] == "generations"
    # 6 flap options x ceil(16 / 6) = 8 (the minimum) per option x 6 generations
    assert info["n_evaluations"] == 6 * 8 * 6 == tiny_run.n_evaluations
    hist = pd.read_csv(d / "history.csv")
    assert len(hist) == 6 and hist["evaluations"].iloc[-1] == info["n_evaluations"]
    assert np.all(np.diff(hist["hypervolume"]) >= -1e-12)  # archive front never worsens
    archive = pd.read_csv(d / "evaluations.csv")
    assert len(archive) == info["n_evaluations"]
    assert int(archive["feasible"].sum()) == info["n_feasible"]


def test_front_is_feasible_nondominated_and_reproduces(study, tiny_run):
    front = pd.read_csv(tiny_run.run_dir / "front.csv")
    cols = list(study.objective_columns())
    assert len(front) > 0
    assert front["feasible"].all()
    assert not _dominated_any(front[cols].to_numpy(float))
    again = optimiser.evaluate(study, front[list(design_columns(study))])
    assert again["feasible"].all()
    # CSV floats are written in full precision; 1e-12 allows last-bit differences of the
    # vectorised arithmetic (common practice)
    np.testing.assert_allclose(again[cols].to_numpy(float), front[cols].to_numpy(float),
                               rtol=1e-12)


def test_same_seed_same_front(study, tiny_run, tmp_path):
    other = optimiser.optimise(study, out=tmp_path / "again", **TINY)
    a = pd.read_csv(tiny_run.run_dir / "front.csv")
    b = pd.read_csv(other.run_dir / "front.csv")
    pd.testing.assert_frame_equal(a, b, check_exact=True)


def test_interrupted_and_resumed_equals_uninterrupted(study, tiny_run, tmp_path):
    def hook(row, state):
        if row["generation"] == 3:
            raise KeyboardInterrupt

    out = tmp_path / "stopped"
    with pytest.raises(RunInterrupted, match="optimiser resume"):
        optimiser.optimise(study, out=out, progress=hook, **TINY)
    assert len(pd.read_csv(out / "history.csv")) == 3
    result = resume(out)
    assert result.termination == "generations"
    for name in ("front.csv", "evaluations.csv"):
        assert (out / name).read_bytes() == (tiny_run.run_dir / name).read_bytes(), name
    h1 = pd.read_csv(out / "history.csv").drop(columns="elapsed_s")
    h2 = pd.read_csv(tiny_run.run_dir / "history.csv").drop(columns="elapsed_s")
    pd.testing.assert_frame_equal(h1, h2, check_exact=True)


def test_evaluation_budget_and_stall_stop_the_run(study, tmp_path):
    # evaluations are checked after each whole generation (6 options x 8 = 48 per generation)
    r = optimiser.optimise(study, out=tmp_path / "e", population=16, generations=50,
                           evaluations=100, plots=False)
    assert r.termination == "evaluations" and r.n_evaluations == 144
    s = optimiser.optimise(study, out=tmp_path / "s", population=16, generations=10_000,
                           stall_generations=3, plots=False)
    assert s.termination == "stall"
    hv = s.history["hypervolume"].to_numpy()
    # the stall rule (loop.py): no generation of the last three grew the best hypervolume by
    # more than the relative tolerance (growth below it does not count as progress)
    from optimiser.runstate import STALL_TOLERANCE
    assert (hv[-3:] <= hv[:-3].max() * (1 + STALL_TOLERANCE) * (1 + 1e-12)).all()


def test_existing_run_folder_is_not_overwritten(tmp_path, capsys):
    out = tmp_path / "taken"
    out.mkdir()
    (out / "front.csv").write_text("precious\n")
    code = main(["run", "--out", str(out), "--pop", "8", "--gens", "1"])
    assert code == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "--force" in err[0] and str(out) in err[0]
    assert (out / "front.csv").read_text() == "precious\n"
    assert sorted(p.name for p in out.iterdir()) == ["front.csv"]


@pytest.mark.parametrize("argv, word", [
    (["--time", "5x"], "--time"), (["--pop", "0"], "--pop"), (["--gens", "-1"], "--gens")])
def test_bad_run_options_exit_2_with_one_line(tmp_path, capsys, argv, word):
    code = main(["run", "--out", str(tmp_path / "r"), *argv])
    assert code == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and word in err[0]
    assert not (tmp_path / "r").exists()


def test_impossible_study_writes_least_violating(tmp_path, capsys):
    text = bundled_study_path().read_text().replace('field_length = "750 m"',
                                                   'field_length = "60 m"')
    path = tmp_path / "impossible.toml"
    path.write_text(text)
    out = tmp_path / "run"
    code = main(["run", str(path), "--out", str(out), "--pop", "12", "--gens", "3"])
    assert code == 0
    printed = capsys.readouterr().out
    assert "no feasible design found" in printed and optimiser.CAUTION in printed
    info = json.loads((out / "run.json").read_text())
    assert info["feasible_found"] is False and info["front_size"] == 0
    assert "no feasible design" in info["message"]
    assert not (out / "front.csv").exists()
    least = pd.read_csv(out / "least_violating.csv")
    assert 0 < len(least) <= 20
    assert (least["total_violation"] > 0).all()
    assert np.all(np.diff(least["total_violation"]) >= 0)
    # a 60 m field cannot be met: the best landing-field margin reached stays negative
    assert info["best_margin_reached"]["landing_field"] < 0


def test_nondominated_mask_matches_brute_force():
    rng = np.random.default_rng(5)
    F = np.round(rng.random((300, 3)), 1)  # coarse values: many ties and duplicates
    mask = nondominated_mask(F)
    kept = F[mask]
    assert not _dominated_any(kept)
    assert len(np.unique(kept, axis=0)) == len(kept)
    # every dropped row is dominated by, or equal to, a kept row
    for f in F[~mask]:
        assert np.any(np.all(kept <= f, axis=1))


def test_reference_point_is_fixed_by_the_study(study):
    a, b = reference_scales(study), reference_scales(parse_study(study.text, study.path))
    assert a == b
    assert a["reference_point_normalised"] == [1.1, 1.1, 1.1]


def _dense_reference(study, n):
    """Non-dominated feasible set of an n^3 grid over the bounds for every flap option."""
    cols = list(study.objective_columns())
    axes = [np.linspace(v.lower, v.upper, n) for v in study.variables]
    X = np.array(list(itertools.product(*axes)))
    Fs = []
    for i in flap_indices(study):
        f = size_frame(study, X[:, 0], X[:, 1], X[:, 2], np.full(len(X), i))
        Fs.append(f.loc[f["feasible"], cols].to_numpy(float))
    F = np.vstack(Fs)
    return F[nondominated_mask(F)]


def test_front_reaches_dense_reference_and_beats_random(study, tmp_path):
    cols = list(study.objective_columns())
    scales = reference_scales(study)
    hv_ref = hypervolume(_dense_reference(study, 25), scales)
    # 30 generations: with 10 the threshold held only at the default seed (0.94 of the
    # dense hypervolume; 0.78 and 0.73 at seeds 2 and 3 on the same model); with the class
    # II component masses 20 generations reach 0.79, 30 reach 0.93 and 40 reach 0.95
    result = optimiser.optimise(study, out=tmp_path / "q", population=60, generations=30,
                                plots=False)
    hv = hypervolume(result.front[cols].to_numpy(float), scales)
    rng = np.random.default_rng(12345)
    n = result.n_evaluations
    lo = np.array([v.lower for v in study.variables])
    hi = np.array([v.upper for v in study.variables])
    X = lo + (hi - lo) * rng.random((n, 3))
    flaps = np.array(flap_indices(study))[rng.integers(0, len(study.flaps), n)]
    f = size_frame(study, X[:, 0], X[:, 1], X[:, 2], flaps)
    Fr = f.loc[f["feasible"], cols].to_numpy(float)
    hv_random = hypervolume(Fr[nondominated_mask(Fr)], scales)
    # 0.9 of a dense enumeration's hypervolume: the threshold set for this project
    assert hv >= 0.9 * hv_ref
    assert hv > hv_random


def test_readme_first_command_on_a_small_budget(tmp_path):
    # the README's quick start runs `optimiser run` on the bundled default study; here the
    # same command with a 3-generation budget, from an empty folder, as a user would
    import subprocess
    import sys

    from optimiser.evaluation import CAUTION
    proc = subprocess.run([sys.executable, "-m", "optimiser", "run", "--gens", "3"],
                          cwd=tmp_path, capture_output=True, text=True, timeout=300)
    assert proc.returncode == 0, proc.stderr
    runs = list((tmp_path / "results").glob("high-strip-utility-*"))
    assert len(runs) == 1
    front = pd.read_csv(runs[0] / "front.csv")
    assert len(front) >= 1 and front["feasible"].all()
    assert CAUTION in proc.stdout
    # 3 generations of the default study's budget: population 240 split over its 6 flap
    # options (40 each, the study's own numbers)
    info = json.loads((runs[0] / "run.json").read_text())
    assert info["n_evaluations"] == 3 * 240


def test_archive_reads_back_every_number_exactly(study):
    # every number of evaluations.csv reads back to the same float (the archive can stand in
    # for the sized values, and any row can be sized again from its inputs)
    import io
    from optimiser.runfolder.archive import archive_columns, archive_rows
    from optimiser.sizing import size_designs
    rng = np.random.default_rng(11)
    n = 300
    cols = [rng.uniform(v.lower * 0.5, v.upper * 2.0, n) for v in study.variables]
    flap = rng.integers(0, len(study.spec.high_lift), n)
    sized = size_designs(study.spec, *cols, flap)
    header = archive_columns(study)
    text = ",".join(header) + "\n" + archive_rows(study, 4, *cols, flap, sized).decode()
    back = pd.read_csv(io.StringIO(text))
    assert len(back) == n and list(back.columns) == header
    assert (back["generation"] == 4).all()
    for c, x in zip(design_columns(study)[:3], cols):
        assert np.array_equal(back[c].to_numpy(float), x)
    assert list(back["flap"]) == [study.spec.high_lift_names[i] for i in flap]
    assert back["feasible"].dtype == bool
    assert np.array_equal(back["feasible"].to_numpy(bool), sized["feasible"])
    assert 0 < sized["feasible"].sum() < n  # both values occur
    numbers = [c for c in header[5:] if c not in ("feasible", "limiting_constraint")]
    assert "takeoff_mass_kg" in numbers and "margin_takeoff_field" in numbers
    for c in numbers:
        assert np.array_equal(back[c].to_numpy(float), sized[c]), c


def test_sizing_a_design_does_not_depend_on_its_batch(study):
    # the run keeps only the inputs of its front and sizes them again at the end: every
    # number of a design must be the same, bit for bit, in any batch and at any position
    from optimiser.sizing import size_designs
    rng = np.random.default_rng(5)
    n = 500
    cols = [rng.uniform(v.lower, v.upper, n) for v in study.variables]
    flap = rng.integers(0, len(study.spec.high_lift), n)
    whole = size_designs(study.spec, *cols, flap)
    pick = rng.permutation(n)[:37]
    part = size_designs(study.spec, *(c[pick] for c in cols), flap[pick])
    for key, values in whole.items():
        assert np.array_equal(part[key], values[pick]), key


def test_merging_into_a_front_equals_sorting_the_union():
    # merge_nondominated is the run loop's fast path of nondominated_mask on front + new rows
    from optimiser.search import merge_nondominated
    rng = np.random.default_rng(3)
    for trial in range(200):
        m = int(rng.integers(2, 4))
        grid = trial % 2 == 1  # coarse values: ties and identical rows
        draw = (lambda k: np.round(rng.random((k, m)) * 4) / 4) if grid else \
            (lambda k: rng.random((k, m)))
        pool = draw(int(rng.integers(1, 150)))
        old = pool[nondominated_mask(pool)]
        new = draw(int(rng.integers(0, 60)))
        if len(new) and trial % 3 == 0:
            new[0] = old[0]  # a new row identical to a front row goes
        keep_old, keep_new = merge_nondominated(old, new)
        union = np.vstack([old, new])
        assert np.array_equal(np.concatenate([keep_old, keep_new]), nondominated_mask(union))




@pytest.mark.parametrize("interval_s, expected", [(0.0, [1, 2, 3]), (1e9, [0, 0, 0])])
def test_default_checkpoints_follow_the_running_time(study, tmp_path, monkeypatch, interval_s,
                                                     expected):
    # without --checkpoint-every a checkpoint is due once CHECKPOINT_INTERVAL_S of running
    # has passed since the last one (and at the end); the generation on disk tells which
    from optimiser import loop
    from optimiser.runfolder import load_checkpoint
    monkeypatch.setattr(loop, "CHECKPOINT_INTERVAL_S", interval_s)
    out = tmp_path / "run"
    seen = []
    # the checkpoint of generation g is written after the progress call of generation g, so
    # the hook at g + 1 sees it
    optimiser.optimise(study, out=out, population=16, generations=4, plots=False,
                       progress=lambda row, state: seen.append(load_checkpoint(out).generation))
    assert seen[1:] == expected
    assert load_checkpoint(out).generation == 4  # the final checkpoint


def test_front_table_writer_reads_back_exactly_and_quotes_when_needed(tiny_run):
    # front.csv and least_violating.csv go through Arrow's writer: every float back exactly,
    # text unquoted; a cell with a comma falls back to pandas' quoting
    import io
    from optimiser.runfolder.files import csv_bytes as _csv_bytes
    front = tiny_run.front
    back = pd.read_csv(io.BytesIO(_csv_bytes(front)))
    assert list(back.columns) == list(front.columns)
    for c in front.columns:
        if front[c].dtype.kind == "f":
            assert np.array_equal(back[c].to_numpy(float), front[c].to_numpy(float)), c
    assert list(back["flap"]) == list(front["flap"])
    odd = pd.DataFrame({"name": ["a,b", "c"], "x": [0.1, 1e-17]})
    text = _csv_bytes(odd).decode()
    assert text.splitlines()[1] == '"a,b",0.1'
    assert pd.read_csv(io.StringIO(text))["x"].tolist() == [0.1, 1e-17]


def test_archive_rows_wait_in_memory_at_most_the_buffer_limit(study, tmp_path, monkeypatch):
    # between checkpoints the archive rows are written in batches once ARCHIVE_BUFFER_ROWS
    # are pending; the file never lags by more than that plus one generation, and ends whole
    from optimiser import loop
    from optimiser.runfolder import archive
    monkeypatch.setattr(archive, "ARCHIVE_BUFFER_ROWS", 100)
    monkeypatch.setattr(loop, "CHECKPOINT_INTERVAL_S", 1e9)
    out = tmp_path / "run"
    lag = []

    def hook(row, state):
        on_disk = len(pd.read_csv(out / "evaluations.csv"))
        lag.append(state.n_evaluations - on_disk)

    result = optimiser.optimise(study, out=out, population=24, generations=12, plots=False,
                                progress=hook)
    per_generation = result.n_evaluations // 12
    assert max(lag) < 100 + 2 * per_generation
    assert min(lag[4:]) < max(lag)  # it was written part-way, not only at the end
    archive = pd.read_csv(out / "evaluations.csv")
    assert len(archive) == result.n_evaluations
    assert np.all(np.diff(archive["generation"].to_numpy()) >= 0)
