"""Faults: hostile studies given to ``optimiser run``, a mission that cannot close, physically
impossible designs, a full disk, an unwritable results folder, a disk that fills during the
run, and damaged or half-finished run folders.

The hostile study cases themselves live in tests/test_study.py (``BAD``); here they go through
``optimiser run`` instead of ``check``, which must refuse them the same way and create nothing.
Real full and read-only file systems are small tmpfs mounts (needs root and mount rights;
those tests are skipped where mounting is not allowed, and the same code paths are also
driven by monkeypatched functions that always run).

Source of the expectations: the project's own rules (one-line errors, exit status 2, nothing
saved is lost); the physics of the impossible designs (thrust below drag and friction cannot
accelerate; a structure-plus-fuel fraction above one cannot close) is common practice.
"""

from __future__ import annotations

import errno
import json
import os
import re
import shutil
import subprocess
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

import optimiser
from optimiser import runs
from optimiser.runfolder import checkpoint, files, place
from optimiser.cli import main
from optimiser.runs import RunError, load_checkpoint, resume
from optimiser.study import bundled_study_path, load_study, parse_study

sys.path.insert(0, str(Path(__file__).resolve().parent))
from test_study import BAD, BAD_IDS, materialise  # noqa: E402  (the hostile cases, not copied)

PROBLEMS = Path(__file__).resolve().parents[1] / "problems"
TINY = dict(population=8, generations=5, checkpoint_every=1)


@pytest.fixture(scope="module")
def reference(study, tmp_path_factory):
    """An uninterrupted tiny run: the front every interrupted run must end with."""
    out = tmp_path_factory.mktemp("reference") / "run"
    optimiser.optimise(study, out=out, plots=False, **TINY)
    return out


def one_error_line(capsys) -> str:
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1, err
    assert err[0].startswith("error: ") and "Traceback" not in err[0]
    return err[0]


def same_run_outputs(a: Path, b: Path):
    for name in ("front.csv", "evaluations.csv"):
        assert (a / name).read_bytes() == (b / name).read_bytes(), name
    h1 = pd.read_csv(a / "history.csv").drop(columns="elapsed_s")
    h2 = pd.read_csv(b / "history.csv").drop(columns="elapsed_s")
    pd.testing.assert_frame_equal(h1, h2, check_exact=True)


# --- hostile studies through `optimiser run` ------------------------------------------------

@pytest.mark.parametrize("case", BAD, ids=BAD_IDS)
def test_hostile_study_given_to_run_writes_nothing(case, tmp_path, monkeypatch, capsys):
    _, builder, pattern = case
    path = materialise(tmp_path, builder)
    cwd = tmp_path / "work"
    cwd.mkdir()
    monkeypatch.chdir(cwd)
    assert main(["run", str(path), "--pop", "8", "--gens", "1"]) == 2
    line = one_error_line(capsys)
    assert re.search(pattern, line), line
    assert list(cwd.iterdir()) == []  # no results/ folder, nothing at all


def test_hostile_study_run_in_a_subprocess_has_no_traceback(tmp_path):
    bad = (bundled_study_path().read_text("utf-8").replace('range = "500 nmi"',
                                                           'range = "500 kg"'))
    path = tmp_path / "bad.toml"
    path.write_text(bad, encoding="utf-8")
    cwd = tmp_path / "work"
    cwd.mkdir()
    proc = subprocess.run([sys.executable, "-m", "optimiser", "run", str(path)], cwd=cwd,
                          capture_output=True, text=True, timeout=120)
    assert proc.returncode == 2
    assert "Traceback" not in proc.stderr
    lines = proc.stderr.strip().splitlines()
    assert len(lines) == 1 and "[mission] range" in lines[0] and "500 kg" in lines[0]
    assert "expected a length" in lines[0]
    assert list(cwd.iterdir()) == []


# --- a mission that cannot close ------------------------------------------------------------

def test_mission_that_cannot_close_finishes_and_says_so(tmp_path, capsys):
    # 10 500 nmi with 4 t of payload for the 19-seat commuter: on a 12^3 grid over the bounds
    # for every flap option not one design closes its mass (best closure margin -6.7 %,
    # computed by us)
    text = (PROBLEMS / "twin_turboprop_commuter.toml").read_text("utf-8")
    assert text.count('range = "600 nmi"') == 1
    path = tmp_path / "far.toml"
    path.write_text(text.replace('range = "600 nmi"', 'range = "10500 nmi"')
                    .replace('payload = "1800 kg"', 'payload = "4000 kg"'), encoding="utf-8")
    out = tmp_path / "run"
    assert main(["run", str(path), "--out", str(out), "--pop", "10", "--gens", "3"]) == 0
    printed = capsys.readouterr().out
    assert "the mission cannot close" in printed and "mass_closure" in printed
    assert optimiser.CAUTION in printed
    info = json.loads((out / "run.json").read_text())
    assert info["feasible_found"] is False and info["front_size"] == 0
    assert info["best_margin_reached"]["mass_closure"] < 0
    assert "mission cannot close" in info["message"]
    assert not (out / "front.csv").exists()
    least = pd.read_csv(out / "least_violating.csv")
    assert 0 < len(least) <= runs.LEAST_VIOLATING_ROWS
    assert (least["margin_mass_closure"] < 0).all() and (~least["feasible"]).all()
    assert np.isfinite(least.select_dtypes("number").to_numpy()).all()


# --- physically impossible designs ----------------------------------------------------------

def _one(study, **design):
    frame = optimiser.evaluate(study, pd.DataFrame({k: [v] for k, v in design.items()}))
    row = frame.iloc[0]
    numbers = frame.select_dtypes("number").to_numpy(float)
    assert np.isfinite(numbers).all(), "no NaN or inf for a finite input"
    assert not row["feasible"]
    return row


@pytest.mark.parametrize("name, design", [
    # at the weak end of the model's valid ranges (W/P 500 N/kW, T/W 0.05: MODEL_RANGES of
    # optimiser/sizing/inputs.py); beyond them a design is flagged outside_model_range instead
    ("high_strip_utility", dict(wing_loading_N_m2=1000.0, power_loading_N_kW=500.0)),
    ("twin_turboprop_commuter", dict(wing_loading_N_m2=2600.0, power_loading_N_kW=500.0)),
    ("light_twin_jet", dict(wing_loading_N_m2=3500.0, thrust_to_weight=0.05)),
])
def test_tiny_engine_cannot_accelerate_on_the_runway(name, design):
    # far too little power or thrust: at some speed below lift-off, thrust is below drag plus
    # rolling friction, so the acceleration goes negative (Newton's second law)
    study = load_study(PROBLEMS / f"{name}.toml")
    row = _one(study, aspect_ratio=8.0 if "jet" in name else 10.0, flap="plain", **design)
    assert row["min_runway_acceleration_m_s2"] < 0
    assert row["margin_runway_acceleration"] < 0
    assert row["most_violated"] in ("runway_acceleration", "takeoff_field")
    # the run is charged at the acceleration floor, so the field needed is far beyond the
    # runway (more than ten times its length)
    assert row["margin_takeoff_field"] < -10
    assert row["within_bounds"] == False  # noqa: E712  (outside the study's bounds: flagged)


def test_no_lift_off_within_the_field():
    # a heavily loaded wing without flaps lifts off at 67 m/s at a hot, high strip: it needs
    # several times the 750 m field although it accelerates well
    study = load_study(PROBLEMS / "high_strip_utility.toml")
    row = _one(study, wing_loading_N_m2=3000.0, power_loading_N_kW=70.0, aspect_ratio=8.0,
               flap="none")
    assert row["min_runway_acceleration_m_s2"] > 0 and row["margin_runway_acceleration"] > 0
    assert row["most_violated"] == "takeoff_field"
    assert row["takeoff_field_required_m"] > 2 * study.spec.departure.field_length_m


def test_mass_that_does_not_close_is_the_reason():
    # a huge wing (200 N/m^2 for a 19-seat commuter) weighs more than it can carry: no takeoff
    # mass up to the cap (payload + crew) x mass_limit_ratio closes
    study = load_study(PROBLEMS / "twin_turboprop_commuter.toml")
    row = _one(study, wing_loading_N_m2=200.0, power_loading_N_kW=45.0, aspect_ratio=10.0,
               flap="plain")
    wt = study.spec.weights
    assert row["margin_mass_closure"] < 0
    assert row["most_violated"] == "mass_closure"
    assert row["takeoff_mass_kg"] == pytest.approx((wt.payload_kg + wt.crew_kg)
                                                   * wt.mass_limit_ratio, rel=1e-12)


# --- a full disk ----------------------------------------------------------------------------

def _fake_free(free):
    def disk_usage(path):
        return shutil._ntuple_diskusage(10 ** 12, 10 ** 12 - free, free)
    return disk_usage


def test_full_disk_is_refused_before_the_search(study, tmp_path, monkeypatch):
    monkeypatch.setattr(place.shutil, "disk_usage", _fake_free(300_000))
    out = tmp_path / "run"
    with pytest.raises(RunError) as info:
        optimiser.optimise(study, out=out, population=8, generations=40, plots=False)
    msg = str(info.value)
    assert "\n" not in msg and str(out) in msg
    assert "only 300.0 kB free" in msg and "needs an estimated" in msg
    # the estimate: 40 generations x 6 flap options x 8 designs = 1920 rows
    assert "1920 rows of evaluations.csv" in msg and "expected at least" in msg
    need = float(re.search(r"needs an estimated ([\d.]+) MB", msg).group(1)) * 1e6
    # a run of this budget wrote 2.27 MB in all (measured by us, plots included): the estimate
    # must not be below it (or a full disk is found hours later), nor so far above it that
    # runs that fit are refused (five times, our limit)
    assert 2.27e6 < need < 5 * 2.27e6
    assert not out.exists()


def test_full_disk_through_the_command_line_keeps_the_old_run(tmp_path, monkeypatch,
                                                              capsys):
    monkeypatch.setattr(place.shutil, "disk_usage", _fake_free(1000))
    monkeypatch.chdir(tmp_path)
    assert main(["run", "--pop", "8", "--gens", "2"]) == 2
    line = one_error_line(capsys)
    assert "only 1.0 kB free" in line and "results" in line
    assert list(tmp_path.iterdir()) == []  # not even results/
    old = tmp_path / "old"
    old.mkdir()
    (old / "front.csv").write_text("precious\n")
    assert main(["run", "--out", str(old), "--force", "--pop", "8", "--gens", "2"]) == 2
    assert "only 1.0 kB free" in one_error_line(capsys)
    assert sorted(p.name for p in old.iterdir()) == ["front.csv"]
    assert (old / "front.csv").read_text() == "precious\n"


def test_time_budget_estimate_uses_the_sizing_rate(study, tmp_path, monkeypatch):
    # 10^7 generations would need half a terabyte, but 5 s of sizing cannot write that much: the
    # estimate takes the smaller of the two and the run is allowed
    monkeypatch.setattr(place.shutil, "disk_usage", _fake_free(10 ** 11))
    with pytest.raises(RunError, match="needs an estimated"):
        runs.start(study, out=tmp_path / "a", population=8, generations=10 ** 7)
    state, run_dir = runs.start(study, out=tmp_path / "b", population=8,
                                generations=10 ** 7, time_budget_s=5.0)
    assert load_checkpoint(run_dir).budget.time_s == 5.0


# --- an unwritable results folder -----------------------------------------------------------

def test_out_under_a_regular_file_is_refused(tmp_path, capsys):
    blocker = tmp_path / "afile"
    blocker.write_text("x")
    out = blocker / "run"
    assert main(["run", "--out", str(out), "--pop", "8", "--gens", "1"]) == 2
    line = one_error_line(capsys)
    assert str(out) in line and "not a folder" in line and "expected a path" in line
    assert blocker.read_text() == "x" and sorted(os.listdir(tmp_path)) == ["afile"]


def test_probe_failure_is_one_line_and_removes_the_new_folders(study, tmp_path, monkeypatch):
    real_open = open

    def refusing_open(file, *args, **kwargs):
        if ".write-probe-" in str(file):
            raise OSError(errno.EROFS, "Read-only file system", str(file))
        return real_open(file, *args, **kwargs)

    monkeypatch.setattr("builtins.open", refusing_open)
    out = tmp_path / "new" / "deeper" / "run"
    with pytest.raises(RunError, match=r"cannot write in the folder \(Read-only file system\);"
                                       r" expected a writable folder"):
        runs.start(study, out=out, population=8, generations=2)
    assert list(tmp_path.iterdir()) == []


def test_read_only_file_system_is_refused(tmpfs, capsys):
    ro = tmpfs("ro", "size=64m,ro")  # room enough: the refusal is for read-only
    assert main(["run", "--out", str(ro / "run"), "--pop", "8", "--gens", "1"]) == 2
    line = one_error_line(capsys)
    assert "cannot create the folder (Read-only file system)" in line
    assert main(["run", "--out", str(ro), "--pop", "8", "--gens", "1"]) == 2  # empty, ro
    assert "cannot write in the folder (Read-only file system)" in one_error_line(capsys)


def test_real_small_disk_is_refused(tmpfs, capsys):
    small = tmpfs("small", "size=1m")
    assert main(["run", "--out", str(small / "run"), "--pop", "8", "--gens", "40"]) == 2
    line = one_error_line(capsys)
    assert "free on" in line and "needs an estimated" in line
    assert list(small.iterdir()) == []


def test_real_disk_filling_during_the_run(study, reference, tmpfs):
    disk = tmpfs("disk", "size=12m")
    out = disk / "run"

    def fill_the_disk(row, state):
        if row["generation"] == 3:  # before generation 3's checkpoint is written
            try:
                with open(disk / "ballast", "wb", buffering=0) as fh:
                    while True:
                        fh.write(b"\0" * 65536)
            except OSError:
                pass

    with pytest.raises(RunError) as info:
        optimiser.optimise(study, out=out, plots=False, progress=fill_the_disk, **TINY)
    msg = str(info.value)
    assert "\n" not in msg and "(the disk is full)" in msg
    assert f"optimiser resume {out}" in msg
    saved = load_checkpoint(out)
    # the generation's archive rows are written just before its checkpoint: the full disk
    # stops that write first
    assert "cannot write evaluations.csv" in msg
    assert "checkpoint (generation 2)" in msg and saved.generation == 2
    (disk / "ballast").unlink()
    resume(out, plots=False)
    same_run_outputs(out, reference)


# --- ENOSPC during a run (simulated) --------------------------------------------------------

def test_disk_full_while_appending_ends_with_one_line_and_resumes(reference, tmp_path,
                                                                  monkeypatch, capsys):
    real_append = files.append
    calls = {"n": 0}

    def append(path, text):
        calls["n"] += 1
        if calls["n"] == 2 + 2 * 3 + 1:  # 2 headers, 3 generations (archive + history) done
            data = text if isinstance(text, bytes) else text.encode("utf-8")
            with open(path, "ab") as fh:
                fh.write(data[: len(data) // 2])  # half a generation reached the disk
            raise OSError(errno.ENOSPC, "No space left on device", str(path))
        return real_append(path, text)

    monkeypatch.setattr(files, "append", append)
    out = tmp_path / "run"
    assert main(["run", "--out", str(out), "--pop", "8", "--gens", "5",
                 "--checkpoint-every", "1"]) == 2
    line = one_error_line(capsys)
    assert "cannot write evaluations.csv (No space left on device) (the disk is full)" in line
    assert "last checkpoint (generation 3)" in line and f"optimiser resume {out}" in line
    state = load_checkpoint(out)
    assert state.generation == 3 and state.termination is None
    assert (out / "evaluations.csv").stat().st_size > state.archive_bytes  # the half row
    monkeypatch.setattr(files, "append", real_append)
    resume(out, plots=False)
    same_run_outputs(out, reference)


def test_disk_full_while_writing_a_checkpoint_keeps_the_old_one(study, reference, tmp_path,
                                                                 monkeypatch):
    calls = {"n": 0}

    def failing_pause():
        def before_replace():
            calls["n"] += 1
            if calls["n"] == 4:  # start's checkpoint, generations 1 and 2, then generation 3
                raise OSError(errno.ENOSPC, "No space left on device",
                              str(out / f".checkpoint.npz.tmp-{os.getpid()}"))
        return before_replace

    monkeypatch.setattr(checkpoint, "_test_pause", failing_pause)
    out = tmp_path / "run"
    with pytest.raises(RunError,
                       match=r"cannot write checkpoint\.npz \(No space .*generation 2\)"):
        optimiser.optimise(study, out=out, plots=False, **TINY)
    assert load_checkpoint(out).generation == 2
    assert [p.name for p in out.iterdir() if p.name.startswith(".")] == []  # temp removed
    monkeypatch.undo()
    resume(out, plots=False)
    same_run_outputs(out, reference)


# --- damaged or half-finished run folders ---------------------------------------------------

def test_killed_after_the_last_checkpoint_is_finished_by_resume(study, reference, tmp_path,
                                                                monkeypatch):
    def killed(*args, **kwargs):
        raise KeyboardInterrupt  # stands for a kill between the last checkpoint and run.json

    monkeypatch.setattr(runs, "finish", killed)
    out = tmp_path / "run"
    with pytest.raises(KeyboardInterrupt):
        optimiser.optimise(study, out=out, plots=False, **TINY)
    assert load_checkpoint(out).termination == "generations"
    assert not (out / "run.json").exists()
    monkeypatch.undo()
    result = resume(out, plots=False)
    assert result.termination == "generations"
    same_run_outputs(out, reference)
    with pytest.raises(RunError, match="already finished"):
        resume(out)  # now run.json is there: finished for good


def test_damaged_checkpoint_is_one_line(reference, tmp_path, capsys):
    out = tmp_path / "run"
    shutil.copytree(reference, out)
    data = (out / "checkpoint.npz").read_bytes()
    (out / "checkpoint.npz").write_bytes(data[: len(data) // 2])
    before = {p.name: p.read_bytes() for p in out.iterdir() if p.is_file()}
    assert main(["resume", str(out)]) == 2
    line = one_error_line(capsys)
    assert "cannot read the checkpoint" in line and "expected a checkpoint" in line
    assert {p.name: p.read_bytes() for p in out.iterdir() if p.is_file()} == before


def _interrupted_at_generation_2(study, out):
    """A tiny run of ``study`` stopped (as by Ctrl-C) after its second generation."""
    def stop(row, state):
        if row["generation"] == 2:
            raise KeyboardInterrupt

    with pytest.raises(runs.RunInterrupted):
        optimiser.optimise(study, out=out, plots=False, progress=stop, **TINY)
    return out


def test_archive_shorter_than_the_checkpoint_is_one_line(study, tmp_path, capsys):
    out = _interrupted_at_generation_2(study, tmp_path / "run")
    data = (out / "evaluations.csv").read_bytes()
    (out / "evaluations.csv").write_bytes(data[:-10])
    assert main(["resume", str(out)]) == 2
    line = one_error_line(capsys)
    assert "evaluations.csv: shorter than the checkpoint records" in line
    assert (out / "evaluations.csv").read_bytes() == data[:-10]  # left as it was


def test_study_edited_after_an_interruption_is_refused_and_the_checkpoint_study_used(
        study, reference, tmp_path, capsys):
    # editing study.toml in the run folder after an interruption does not change the run:
    # resume refuses the folder (the study's hash differs from the checkpoint's record) and
    # touches nothing; with the file restored it resumes with the study of the checkpoint
    out = _interrupted_at_generation_2(study, tmp_path / "run")
    original = (out / "study.toml").read_bytes()
    (out / "study.toml").write_text("this is not a study\n")
    before = {p.name: p.read_bytes() for p in out.iterdir() if p.is_file()}
    assert main(["resume", str(out)]) == 2
    line = one_error_line(capsys)
    assert "study.toml: not the study this run used" in line and "checkpoint" in line
    assert {p.name: p.read_bytes() for p in out.iterdir() if p.is_file()} == before
    (out / "study.toml").write_bytes(original)
    resume(out, plots=False)
    same_run_outputs(out, reference)
    assert parse_study(load_checkpoint(out).study_text).name == study.name
