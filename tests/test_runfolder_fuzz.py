"""Damaged run folders given to ``pick``, ``flaps`` and ``report``: every run-folder file
truncated, with bytes flipped, emptied, replaced by binary garbage, swapped with another
run's, or deleted. Each command must end with exit status 0 or 2; on 2 with exactly one
stderr line ``error: ...`` and no traceback; and it may change nothing but its own new output
(``pick-knee/``, ``flaps/``, ``report.html``), leaving no temporary folder behind.

The two runs are of different studies (the bundled strip utility, which finds a front, and
the commuter on a mission too long to close, which finds nothing feasible), so most swaps
are caught by the readers' column and key checks. A swap between two runs of the same study
can pass every reader: detecting it is the job of the run folder's manifest (file lengths
and hashes recorded in run.json), not of these readers, so the test asserts clean failure
behaviour and never that a swap is detected.

Also here: the readers' one-line messages for the cases the hostile trial found (front.csv
deleted, a NaN objective, run.json of the wrong shape, an archive missing a column), and the
writers on a failing, full or read-only disk (nothing partial left, the old output kept).

Source: the project's own rules (one-line errors, exit status 2, nothing
saved is lost); no published values.
"""

from __future__ import annotations

import contextlib
import errno
import hashlib
import json
import os
import shutil
import subprocess
from pathlib import Path

import numpy as np
import pytest

import optimiser
from optimiser.cli import main
from optimiser.runfolder import files, names
from optimiser.study import bundled_study_path, load_study

PROBLEMS = Path(__file__).resolve().parents[1] / "problems"
TINY = dict(population=8, generations=3, plots=False)
FUZZED = (names.STUDY, names.RUN_INFO, names.FRONT, names.LEAST_VIOLATING, names.ARCHIVE,
          names.HISTORY)
OUTPUT = {"pick": "pick-knee", "flaps": names.FLAPS_DIR, "report": names.REPORT}
"""Each command and the one output it may create."""


@contextlib.contextmanager
def quick_figures():
    """Figures laid out and drawn as nothing (a few bytes instead of a PNG): the drawing is
    not what this test checks, and it is most of the time of a command that succeeds."""
    import matplotlib.figure

    def savefig(self, target, **kwargs):
        if hasattr(target, "write"):
            target.write(b"figure")
        else:
            Path(target).write_bytes(b"figure")

    with pytest.MonkeyPatch.context() as mp:
        mp.setattr(matplotlib.figure.Figure, "savefig", savefig)
        mp.setattr(matplotlib.figure.Figure, "tight_layout", lambda self, *a, **k: None)
        yield


@pytest.fixture(scope="module")
def runs(tmp_path_factory):
    """Two finished tiny runs: "front" (a front found) and "none" (nothing feasible)."""
    root = tmp_path_factory.mktemp("fuzz-runs")
    optimiser.optimise(load_study(bundled_study_path()), out=root / "front", seed=1, **TINY)
    text = (PROBLEMS / "twin_turboprop_commuter.toml").read_text("utf-8")
    far = root / "far.toml"
    far.write_text(text.replace('range = "600 nmi"', 'range = "8000 nmi"'), encoding="utf-8")
    optimiser.optimise(load_study(far), out=root / "none", seed=1, **TINY)
    assert (root / "front" / names.FRONT).is_file()
    assert (root / "none" / names.LEAST_VIOLATING).is_file()
    return {"front": root / "front", "none": root / "none"}


def hashes(folder: Path) -> dict:
    return {str(p.relative_to(folder)): hashlib.sha256(p.read_bytes()).hexdigest()
            for p in sorted(folder.rglob("*")) if p.is_file()}


def mutations(rng, data: bytes | None, other: bytes | None, n_random: int):
    """(label, new content or None for deleted) of one file; ``other``: the other run's."""
    out = []
    if data is not None:
        out += [("empty", b""), ("garbage", rng.bytes(max(len(data), 64))), ("deleted", None)]
        for _ in range(n_random):
            cut = int(rng.integers(0, len(data)))
            out.append((f"truncated at {cut}", data[:cut]))
            flipped = bytearray(data)
            where = rng.integers(0, len(data), size=int(rng.integers(1, 4)))
            for i in where:
                flipped[i] ^= int(rng.integers(1, 256))
            out.append((f"bytes {sorted(int(i) for i in where)} flipped", bytes(flipped)))
    if other is not None and other != data:
        out.append(("swapped with the other run's", other))
    return out


def run_command(command, run_dir, capsys):
    capsys.readouterr()
    try:
        with contextlib.redirect_stdout(None):
            status = main([command, str(run_dir)])
    except SystemExit as exc:
        status = exc.code
    return status, capsys.readouterr().err


def check_case(runs, target, name, label, content, work: Path, capsys):
    case = work / "case"
    shutil.rmtree(case, ignore_errors=True)
    for key, src in runs.items():
        shutil.copytree(src, case / key)
    path = case / target / name
    if content is None:
        path.unlink(missing_ok=True)
    else:
        path.write_bytes(content)
    statuses = []
    for command, output in OUTPUT.items():
        before = hashes(case)
        status, err = run_command(command, case / target, capsys)
        where = f"{command} with {name} of run {target!r} {label}"
        assert status in (0, 2), f"{where}: exit status {status}\n{err}"
        assert "Traceback" not in err, f"{where}:\n{err}"
        after = hashes(case)
        changed = sorted(p for p in before.keys() | after.keys() if before.get(p) != after.get(p))
        if status == 2:
            lines = err.strip().splitlines()
            assert len(lines) == 1 and lines[0].startswith("error: "), f"{where}: {lines}"
            assert changed == [], f"{where}: a failed command changed {changed}"
        else:
            mine = str(Path(target) / output)
            assert all(p == mine or p.startswith(mine + "/") for p in changed), \
                f"{where}: changed {changed}"
        hidden = [p for p in after if any(part.startswith(".") for part in Path(p).parts)]
        assert hidden == [], f"{where}: left {hidden}"
        statuses.append(status)
    return statuses


def fuzz(runs, target, name, n_random, seed, tmp_path, capsys):
    rng = np.random.default_rng(seed)
    own, other_run = runs[target], runs["none" if target == "front" else "front"]
    data = (own / name).read_bytes() if (own / name).is_file() else None
    other = (other_run / name).read_bytes() if (other_run / name).is_file() else None
    cases = mutations(rng, data, other, n_random)
    # an empty or garbage file that some command reads must stop that command (the history
    # of a run without a front is read by none of them)
    read = data is not None and not (name == names.HISTORY and target == "none")
    with quick_figures():
        for label, content in cases:
            statuses = check_case(runs, target, name, label, content, tmp_path, capsys)
            if read and label in ("empty", "garbage"):
                assert 2 in statuses, f"{name} of run {target!r} {label}: {statuses}"
    return len(cases)


@pytest.mark.parametrize("target", ["front", "none"])
@pytest.mark.parametrize("name", FUZZED)
def test_damaged_run_file_fails_cleanly(runs, target, name, tmp_path, capsys):
    # fixed seed per file and run: the same mutations every time
    seed = FUZZED.index(name) * 2 + (target == "none")
    fuzz(runs, target, name, n_random=1, seed=seed, tmp_path=tmp_path, capsys=capsys)


@pytest.mark.slow
@pytest.mark.parametrize("target", ["front", "none"])
@pytest.mark.parametrize("name", FUZZED)
def test_many_damaged_run_files_fail_cleanly(runs, target, name, tmp_path, capsys):
    seed = 1000 + FUZZED.index(name) * 2 + (target == "none")
    fuzz(runs, target, name, n_random=12, seed=seed, tmp_path=tmp_path, capsys=capsys)


# --- the readers' messages -----------------------------------------------------------------

def copy_run(runs, key, tmp_path) -> Path:
    out = tmp_path / key
    shutil.copytree(runs[key], out)
    return out


def one_error(capsys) -> str:
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("error: "), err
    return err[0]


def test_deleted_front_is_named_not_taken_for_an_empty_front(runs, tmp_path, capsys):
    run = copy_run(runs, "front", tmp_path)
    (run / names.FRONT).unlink()
    assert main(["pick", str(run)]) == 2
    line = one_error(capsys)
    # whichever check meets it first (the run.json records, or the reader), it says the
    # file is missing, never that the run found nothing feasible
    assert f"{run / names.FRONT}: missing" in line
    assert "no feasible design" not in line
    none = copy_run(runs, "none", tmp_path)
    assert main(["pick", str(none)]) == 2
    assert "the run found no feasible design" in one_error(capsys)


def _rerecord(run, name):
    """Make run.json record ``name`` as it is now (a folder edited by hand, records and
    all), so that the file's own reader, not the records check, meets the damage."""
    from optimiser.runfolder import manifest
    path = run / names.RUN_INFO
    info = json.loads(path.read_text())
    rows = sum(1 for _ in open(run / name, "rb")) - 1
    if name in (names.ARCHIVE, names.HISTORY):
        info["files"][name] = manifest.appended_record(run / name, (run / name).stat().st_size,
                                                       rows)
    else:
        info["files"][name] = manifest.file_record(run / name, rows=rows)
    path.write_text(json.dumps(info))


def test_nan_objective_is_refused_before_anything_is_written(runs, tmp_path, capsys):
    import pandas as pd
    run = copy_run(runs, "front", tmp_path)
    front = pd.read_csv(run / names.FRONT)
    front.loc[1, "trip_fuel_kg"] = float("nan")
    front.to_csv(run / names.FRONT, index=False)
    _rerecord(run, names.FRONT)
    assert main(["pick", str(run)]) == 2
    assert one_error(capsys) == (f"error: {run / names.FRONT}: row 2, column 'trip_fuel_kg': "
                                 "got an empty cell; expected a finite number")
    assert not (run / "pick-knee").exists()


@pytest.mark.parametrize("content, message", [
    ("[1, 2]", "the content is a list, not an object"),
    ('{"study": "x"', "not JSON (Expecting ',' delimiter at line 1 column 14)"),
    (b"\xff\xfe\x00{", "not UTF-8 text (byte 0)"),
])
def test_run_info_of_the_wrong_shape_is_one_line(runs, tmp_path, capsys, content, message):
    run = copy_run(runs, "front", tmp_path)
    path = run / names.RUN_INFO
    path.write_bytes(content if isinstance(content, bytes) else content.encode())
    assert main(["report", str(run)]) == 2
    line = one_error(capsys)
    assert line.startswith(f"error: {path}: {message}; expected "), line


def test_run_info_missing_a_key_or_with_a_wrong_type(runs, tmp_path, capsys):
    run = copy_run(runs, "front", tmp_path)
    path = run / names.RUN_INFO
    info = json.loads(path.read_text())
    del info["hypervolume"]["ideal"]
    path.write_text(json.dumps(info))
    assert main(["flaps", str(run)]) == 2
    assert f"{path}: no key 'hypervolume.ideal'; expected " in one_error(capsys)
    info = json.loads((runs["front"] / names.RUN_INFO).read_text())
    info["front_size"] = "2"
    path.write_text(json.dumps(info))
    assert main(["pick", str(run)]) == 2
    assert f"{path}: key 'front_size' is \"2\"; expected a whole number" in one_error(capsys)


def test_archive_missing_a_column_is_one_line(runs, tmp_path, capsys):
    run = copy_run(runs, "front", tmp_path)
    path = run / names.ARCHIVE
    lines = path.read_text().splitlines(keepends=True)
    header = lines[0].rstrip("\n").split(",")
    k = header.index("trip_fuel_kg")
    path.write_text("".join(",".join(c for i, c in enumerate(line.rstrip("\n").split(","))
                                     if i != k) + "\n" for line in lines))
    _rerecord(run, names.ARCHIVE)
    assert main(["flaps", str(run)]) == 2
    line = one_error(capsys)
    assert line.startswith(f"error: {path}: no column 'trip_fuel_kg'; expected "), line
    assert not (run / names.FLAPS_DIR).exists()


def test_repeated_column_and_wrong_cell_in_the_front(runs, tmp_path, capsys):
    run = copy_run(runs, "front", tmp_path)
    path = run / names.FRONT
    text = (runs["front"] / names.FRONT).read_text()
    head, rest = text.split("\n", 1)
    path.write_text(head.replace("span_m", "cd0") + "\n" + rest)
    _rerecord(run, names.FRONT)
    assert main(["pick", str(run)]) == 2
    assert f"{path}: column 'cd0' appears 2 times; expected each column once" \
        in one_error(capsys)
    cols = head.split(",")
    row = rest.split("\n", 1)[0].split(",")
    row[cols.index("flap")] = "barn_door"
    path.write_text(head + "\n" + ",".join(row) + "\n" + rest.split("\n", 1)[1])
    _rerecord(run, names.FRONT)
    assert main(["pick", str(run)]) == 2
    assert f"{path}: row 1, column 'flap': got 'barn_door'; expected one of " \
        in one_error(capsys)


def test_damaged_choice_is_one_line_for_the_report(runs, tmp_path, capsys):
    run = copy_run(runs, "front", tmp_path)
    with quick_figures():
        assert main(["pick", str(run)]) == 0
    path = run / "pick-knee" / names.PICK_CHOICE
    info = json.loads(path.read_text())
    info["limits"] = [3]
    path.write_text(json.dumps(info))
    capsys.readouterr()
    assert main(["report", str(run)]) == 2
    assert f"{path}: key 'limits' is [3]; expected a list of texts" in one_error(capsys)


# --- the writers ---------------------------------------------------------------------------

def failing_after(n_calls, error):
    """A write_atomic that fails on its ``n_calls``-th call (after writing part of it)."""
    real, calls = files.write_atomic, []

    def write(path, data, before_replace=None):
        calls.append(path)
        if len(calls) == n_calls:
            Path(path).with_name(".partial").write_bytes(data[:10])
            raise OSError(error, os.strerror(error), str(path))
        return real(path, data, before_replace)
    return write


def test_full_disk_during_a_pick_leaves_nothing_partial_and_keeps_the_old(runs, tmp_path,
                                                                         monkeypatch, capsys):
    from optimiser.report import picks
    run = copy_run(runs, "front", tmp_path)
    with quick_figures():
        assert main(["pick", str(run)]) == 0
        old = hashes(run / "pick-knee")
        monkeypatch.setattr(picks, "write_atomic", failing_after(3, errno.ENOSPC))
        capsys.readouterr()
        assert main(["pick", str(run), "--force"]) == 2
    line = one_error(capsys)
    assert "cannot write the pick folder (No space left on device); expected a writable " \
           "folder with free space" in line
    assert hashes(run / "pick-knee") == old
    assert sorted(p.name for p in run.iterdir() if p.name.startswith(".")) == []


def test_force_replaces_the_old_folder_only_when_the_new_one_is_complete(runs, tmp_path,
                                                                          capsys):
    run = copy_run(runs, "front", tmp_path)
    with quick_figures():
        assert main(["flaps", str(run)]) == 0
        (run / names.FLAPS_DIR / "stale.txt").write_text("from before")
        assert main(["flaps", str(run)]) == 2
        assert main(["flaps", str(run), "--force"]) == 0
    assert sorted(p.name for p in (run / names.FLAPS_DIR).iterdir()) == \
        ["flaps.csv", "flaps.md", "flaps.png", "flaps.svg"]
    assert [p.name for p in run.iterdir() if p.name.startswith(".")] == []


def test_real_read_only_and_full_disks(runs, tmpfs, capsys):
    ro = tmpfs("ro", "size=16m")
    shutil.copytree(runs["front"], ro / "run")
    proc = subprocess.run(["mount", "-o", "remount,ro", str(ro)], capture_output=True)
    if proc.returncode != 0:
        pytest.skip("cannot remount read-only here")
    before = hashes(ro)
    for command in OUTPUT:
        assert main([command, str(ro / "run")]) == 2
        assert "(Read-only file system)" in one_error(capsys)
    assert hashes(ro) == before
    size = sum(p.stat().st_size for p in runs["front"].iterdir())
    full = tmpfs("full", f"size={(size // 4096 + 12) * 4}k")  # ~48 kB to spare
    shutil.copytree(runs["front"], full / "run")
    before = hashes(full)
    assert main(["pick", str(full / "run")]) == 2  # real figures: more than 48 kB
    assert "(No space left on device)" in one_error(capsys)
    assert hashes(full) == before
    assert [p.name for p in (full / "run").iterdir() if p.name.startswith(".")] == []
