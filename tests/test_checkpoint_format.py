"""Run folders that cannot be turned against their user: the checkpoint carries no code (an
``.npz`` read with ``allow_pickle=False``, a JSON manifest, a SHA-256 checksum), a pickled
checkpoint of an older version is refused without being unpickled, and every folder is bound
to its run (run id, study hash, file lengths and hashes) so that a foreign checkpoint, an
edited study or a truncated table is refused in one line before anything changes.

Source: the project's own rules (one-line errors, exit status 2, nothing
saved is lost or overwritten); what pymoo 0.6.2's NSGA2 keeps between generations was read
in its source (see optimiser.runfolder.checkpoint).
"""

from __future__ import annotations

import io
import json
import pickle
import shutil
import subprocess
import sys
import zipfile
from pathlib import Path

import numpy as np
import pytest

import optimiser
from optimiser import runs
from optimiser.cli import main
from optimiser.errors import shell_command
from optimiser.runfolder import archive, checkpoint
from optimiser.runfolder.names import CHECKPOINT, LEGACY_CHECKPOINT

TINY = dict(population=8, generations=5, checkpoint_every=1)


def one_error_line(capsys) -> str:
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1, err
    assert err[0].startswith("error: ") and "Traceback" not in err[0]
    return err[0]


def interrupted(study, out, at=2, seed=None):
    """A tiny run stopped (as by Ctrl-C) after generation ``at``."""
    def stop(row, state):
        if row["generation"] == at:
            raise KeyboardInterrupt

    with pytest.raises(runs.RunInterrupted):
        optimiser.optimise(study, out=out, plots=False, progress=stop, seed=seed, **TINY)
    return out


def contents(folder: Path) -> dict:
    return {p.name: p.read_bytes() for p in folder.iterdir() if p.is_file()}


@pytest.fixture(scope="module")
def finished(tmp_path_factory):
    """A finished tiny run through the command line (run.json, front.csv, plots)."""
    out = tmp_path_factory.mktemp("finished") / "run"
    assert main(["run", "--out", str(out), "--pop", "8", "--gens", "3", "--seed", "5"]) == 0
    return out


class WritesAMarker:
    """Unpickling this calls ``open(marker, "w")``: the file appears if anything unpickles."""

    def __init__(self, marker: Path):
        self.marker = str(marker)

    def __reduce__(self):
        return (open, (self.marker, "w"))


# --- no code in the checkpoint ----------------------------------------------------------

def test_a_pickled_checkpoint_is_refused_unread_in_one_line(study, tmp_path):
    out = interrupted(study, tmp_path / "run")
    marker = tmp_path / "unpickled.marker"
    (out / CHECKPOINT).unlink()                       # a folder of an older version
    (out / LEGACY_CHECKPOINT).write_bytes(pickle.dumps(WritesAMarker(marker)))
    before = contents(out)
    proc = subprocess.run([sys.executable, "-m", "optimiser", "resume", str(out)],
                          capture_output=True, text=True, timeout=120)
    assert proc.returncode == 2
    lines = proc.stderr.strip().splitlines()
    assert len(lines) == 1 and "Traceback" not in proc.stderr, proc.stderr
    assert f"{LEGACY_CHECKPOINT}: a checkpoint of an older version" in lines[0]
    assert shell_command("optimiser", "run", out / "study.toml", "--out", out,
                         "--force") in lines[0]
    assert not marker.exists()                        # never unpickled
    assert contents(out) == before
    # the same with the new checkpoint beside it: the pickle is still refused, still unread
    (out / CHECKPOINT).write_bytes(b"")
    assert main(["resume", str(out)]) == 2
    assert not marker.exists()
    # the command the message gives starts the run again and removes the pickle
    assert main(["run", str(out / "study.toml"), "--out", str(out), "--force", "--pop", "8",
                 "--gens", "2"]) == 0
    assert not (out / LEGACY_CHECKPOINT).exists() and not marker.exists()


def test_checkpoint_is_an_npz_that_loads_without_pickle(study, tmp_path):
    out = interrupted(study, tmp_path / "run")
    with np.load(out / CHECKPOINT, allow_pickle=False) as npz:
        members = {name: npz[name] for name in npz.files}
    assert all(a.dtype != object for a in members.values())
    record = json.loads(bytes(members["manifest"]).decode("utf-8"))
    assert record["format"] == "optimiser-checkpoint" and record["format_version"] == 3
    assert record["state"]["generation"] == 2 and len(record["state"]["run_id"]) == 32
    assert len(record["algorithms"]) == len(study.flaps)
    first = record["algorithms"][0]
    assert first["n_iter"] == 3 and first["is_initialized"] is True   # pymoo counts ahead
    assert first["random_state"]["bit_generator"] == "PCG64"
    assert members["algo0.X"].shape == (first["population"]["size"], 3)
    assert set(record["files"]) == {"study.toml", "evaluations.csv", "history.csv"}
    assert record["files"]["evaluations.csv"]["rows"] == record["state"]["n_evaluations"]
    # a zip of plain .npy members, nothing else
    with zipfile.ZipFile(out / CHECKPOINT) as z:
        assert all(n.endswith(".npy") for n in z.namelist())


def test_loaded_algorithms_hold_exactly_what_pymoo_held(study, tmp_path):
    # every individual's arrays, cached violation, evaluated set and data entries (with
    # their types), and every counter and random generator state, as in the live run
    state, run_dir = runs.start(study, out=tmp_path / "run", seed=9, **TINY)
    pending = archive.Pending(study)
    from optimiser.loop import _one_generation
    for _ in range(3):
        _one_generation(study, state, pending)
    pending.write(study, state, run_dir)
    checkpoint.save_checkpoint(run_dir, state)
    loaded = checkpoint.load_checkpoint(run_dir)
    for live, back in zip(state.algos, loaded.algos):
        assert back.n_iter == live.n_iter == 4 and back.is_initialized
        assert back.evaluator.n_eval == live.evaluator.n_eval
        assert back.random_state.bit_generator.state == live.random_state.bit_generator.state
        assert len(back.pop) == len(live.pop) and len(back.opt) == len(live.opt)
        for a, b in zip(live.pop, back.pop):
            for attr in ("_X", "_F", "_G", "_H", "_CV"):
                x, y = getattr(a, attr), getattr(b, attr)
                assert x.dtype == y.dtype and x.shape == y.shape and np.array_equal(x, y)
            assert a.evaluated == b.evaluated
            assert a.data == b.data and [type(v) for v in a.data.values()] == \
                [type(v) for v in b.data.values()]
    for name in ("generation", "n_evaluations", "best_hv", "elapsed_s", "best_margin",
                 "scales", "run_id", "archive_bytes", "history_bytes", "budget"):
        assert getattr(loaded, name) == getattr(state, name), name
    assert np.array_equal(loaded.front.F, state.front.F)
    assert np.array_equal(loaded.front.generation, state.front.generation)


def test_a_flipped_byte_is_refused(study, tmp_path, capsys):
    out = interrupted(study, tmp_path / "run")
    data = bytearray((out / CHECKPOINT).read_bytes())
    data[len(data) // 2] ^= 0x01
    (out / CHECKPOINT).write_bytes(bytes(data))
    before = contents(out)
    assert main(["resume", str(out)]) == 2
    line = one_error_line(capsys)
    assert f"{CHECKPOINT}: " in line and "checkpoint" in line
    assert contents(out) == before


def _rewrite(path: Path, change):
    """Rewrite a checkpoint as a valid zip after ``change(members)``: only the SHA-256 of
    the content (or the manifest's version) can tell."""
    with np.load(path, allow_pickle=False) as npz:
        members = {name: npz[name].copy() for name in npz.files}
    change(members)
    buf = io.BytesIO()
    np.savez(buf, **members)
    path.write_bytes(buf.getvalue())


def test_a_changed_number_is_refused_by_the_checksum(study, tmp_path, capsys):
    out = interrupted(study, tmp_path / "run")

    def nudge(members):
        x = members["algo0.X"]
        x[0, 0] = np.nextafter(x[0, 0], np.inf)     # one ulp: a valid file, another state
    _rewrite(out / CHECKPOINT, nudge)
    before = contents(out)
    assert main(["resume", str(out)]) == 2
    line = one_error_line(capsys)
    assert "damaged checkpoint (its SHA-256 checksum does not match" in line
    assert contents(out) == before


def test_an_older_format_version_is_refused_with_the_restart_command(study, tmp_path,
                                                                     capsys):
    out = interrupted(study, tmp_path / "run")

    def older(members):
        record = json.loads(bytes(members["manifest"]))
        record["format_version"] = 2
        members["manifest"] = np.frombuffer(json.dumps(record).encode(), dtype=np.uint8)
    _rewrite(out / CHECKPOINT, older)
    assert main(["resume", str(out)]) == 2
    line = one_error_line(capsys)
    assert "another version of optimiser (format 2, this version reads 3)" in line
    assert "--force" in line


# --- the folder bound to its run ------------------------------------------------------------

def test_a_checkpoint_of_another_run_is_refused_and_the_archive_kept(study, tmp_path, capsys):
    mine = interrupted(study, tmp_path / "mine", at=3, seed=1)
    other = interrupted(study, tmp_path / "other", at=2, seed=2)   # same study, other seed
    shutil.copy(mine / CHECKPOINT, tmp_path / "mine.npz")
    shutil.copy(other / CHECKPOINT, mine / CHECKPOINT)
    before = contents(mine)
    assert main(["resume", str(mine)]) == 2
    line = one_error_line(capsys)
    assert "evaluations.csv: its rows differ from those the checkpoint records" in line
    assert contents(mine) == before                                 # byte for byte
    # a longer run's checkpoint into a shorter folder: refused by the lengths
    shutil.copy(tmp_path / "mine.npz", other / CHECKPOINT)
    before = contents(other)
    assert main(["resume", str(other)]) == 2
    assert "evaluations.csv: shorter than the checkpoint records" in one_error_line(capsys)
    assert contents(other) == before


def test_a_checkpoint_copied_into_a_finished_run_is_refused_by_the_run_id(finished, study,
                                                                       tmp_path, capsys):
    out = tmp_path / "run"
    shutil.copytree(finished, out)
    # a copy of the run made before it finished: same study, same files, another run id
    again = tmp_path / "again"
    assert main(["run", "--out", str(again), "--pop", "8", "--gens", "3", "--seed", "5"]) == 0
    capsys.readouterr()
    shutil.copy(again / CHECKPOINT, out / CHECKPOINT)
    before = contents(out)
    assert main(["resume", str(out)]) == 2
    line = one_error_line(capsys)
    assert f"{CHECKPOINT}: belongs to run" in line and "run.json is of run" in line
    assert contents(out) == before


def test_run_json_records_the_run_id_and_the_files(finished):
    info = json.loads((finished / "run.json").read_text())
    assert len(info["run_id"]) == 32
    files = info["files"]
    assert files["front.csv"]["rows"] == info["front_size"] > 0
    assert files["front.csv"]["bytes"] == (finished / "front.csv").stat().st_size
    assert files["evaluations.csv"]["rows"] == info["n_evaluations"]
    assert files["history.csv"]["rows"] == info["generations_run"] == 3
    assert files["study.toml"]["sha256"] == info["study_sha256"]


@pytest.mark.parametrize("command", ["pick", "flaps", "report"])
def test_study_edited_after_the_run_is_refused_naming_the_file(finished, tmp_path, capsys,
                                                               command):
    out = tmp_path / "run"
    shutil.copytree(finished, out)
    text = (out / "study.toml").read_text("utf-8")
    (out / "study.toml").write_text(text + "\n# edited\n", encoding="utf-8")
    before = contents(out)
    assert main([command, str(out)]) == 2
    line = one_error_line(capsys)
    assert f"{out / 'study.toml'}: not the study this run used" in line
    assert "run.json records" in line
    assert contents(out) == before and not (out / "report.html").exists()


@pytest.mark.parametrize("name, command", [("front.csv", "pick"),
                                           ("evaluations.csv", "report"),
                                           ("history.csv", "report")])
def test_a_truncated_table_is_refused(finished, tmp_path, capsys, name, command):
    out = tmp_path / "run"
    shutil.copytree(finished, out)
    data = (out / name).read_bytes()
    cut = data[: data.rindex(b"\n", 0, len(data) - 1) + 1]     # the last row removed
    (out / name).write_bytes(cut)
    assert main([command, str(out)]) == 2
    line = one_error_line(capsys)
    recorded = json.loads((out / "run.json").read_text())["files"][name]
    assert f"{out / name}: " in line and f"{recorded['bytes']} bytes" in line
    assert f"{recorded['rows']} rows" in line and "run.json records" in line


def test_a_run_json_without_records_is_of_an_older_version(finished, tmp_path, capsys):
    out = tmp_path / "run"
    shutil.copytree(finished, out)
    info = json.loads((out / "run.json").read_text())
    del info["files"], info["run_id"]
    (out / "run.json").write_text(json.dumps(info, indent=2) + "\n")
    assert main(["pick", str(out)]) == 2
    line = one_error_line(capsys)
    assert "records no run id and file hashes" in line and "--force" in line


def test_estimate_covers_the_checkpoint_written(study, tmp_path):
    # the checkpoint part of the output estimate bounds the final checkpoint's size
    out = tmp_path / "run"
    state, _ = runs.start(study, out=out, population=40, generations=4)
    initial = len(checkpoint.checkpoint_bytes(state))
    per_gen = state.budget.option_population * len(study.flaps)
    n_obj = len(list(study.objective_columns()))
    from optimiser.sizing import active_constraints
    bound = initial + checkpoint.population_bytes_bound(
        len(study.flaps), state.budget.option_population, 3, n_obj,
        len(active_constraints(study.spec))) + (min(4 * per_gen, 20 * 40) + 20) * 8 * (6 + n_obj)
    optimiser.optimise(study, out=tmp_path / "full", population=40, generations=4,
                       plots=False)
    written = (tmp_path / "full" / CHECKPOINT).stat().st_size
    assert initial < written <= bound



CAMPAIGN = """name = "bound"
base_study = "{base}"
[budget]
population = 8
generations = 2
seed = 3
[[axis]]
key = "departure.field_length"
values = ["600 m", "900 m"]
tighter = "smaller"
"""


def test_sweep_names_the_file_that_does_not_match_and_never_unpickles(tmp_path):
    from optimiser.campaign import gather, run_campaign
    from optimiser.campaign_file import load_campaign
    base = Path(__file__).resolve().parents[1] / "problems" / "high_strip_utility.toml"
    path = tmp_path / "bound.campaign.toml"
    path.write_text(CAMPAIGN.format(base=base.as_posix()), encoding="utf-8")
    campaign = load_campaign(path)
    out = tmp_path / "camp"
    result = run_campaign(campaign, out, serial=True)
    assert not result.failed and len(result.ran) == 2
    first, second = (out / "runs" / c.name for c in campaign.combinations)
    # a truncated front.csv: the summary says which file and what run.json records
    data = (first / "front.csv").read_bytes()
    (first / "front.csv").write_bytes(data[:-5])
    summary, _ = gather(campaign, out)
    row = summary.iloc[0]
    assert row["status"] == "failed"
    assert f"{first / 'front.csv'}: {len(data) - 5} bytes, but run.json records " \
           f"{len(data)} bytes" in row["note"]
    assert summary.iloc[1]["status"] == "finished"
    # an unfinished run holding a pickled checkpoint is run again, the pickle never loaded
    marker = tmp_path / "unpickled.marker"
    (second / "run.json").unlink()
    (second / CHECKPOINT).unlink()
    (second / LEGACY_CHECKPOINT).write_bytes(pickle.dumps(WritesAMarker(marker)))
    again = run_campaign(campaign, out, serial=True)
    assert [r["how"] for r in again.ran] == ["new"] and not again.failed
    assert not marker.exists() and not (second / LEGACY_CHECKPOINT).exists()
    assert again.summary.iloc[1]["status"] == "finished"
