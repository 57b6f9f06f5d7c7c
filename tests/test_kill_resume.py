"""A run killed with SIGKILL again and again, at seeded random moments and inside a checkpoint
write, always resumes from its last checkpoint and ends with the same files as an
uninterrupted run with the same seed; after every kill the folder holds no truncated CSV
beyond what the checkpoint records and a checkpoint that loads.

The kill inside a checkpoint write is made deterministic by the test hook
``OPTIMISER_TEST_PAUSE_IN_CHECKPOINT`` (optimiser.runfolder.checkpoint.TEST_PAUSE_ENV): the child
process sleeps after the temporary checkpoint file is complete and before it replaces
checkpoint.npz, and the test kills it while the temporary file is there.

Source of the expectation: exact resume is this project's own requirement (same seed, same
front); each per-algorithm random generator's state is saved with its population
(common practice; what pymoo keeps between generations was read in its source, see
optimiser.runfolder.checkpoint).
"""

from __future__ import annotations

import io
import os
import random
import signal
import subprocess
import sys
import time
from pathlib import Path

import pandas as pd

import optimiser
from optimiser.cli import main
from optimiser.runfolder.checkpoint import TEST_PAUSE_ENV, load_checkpoint
from optimiser.runfolder.names import CHECKPOINT
from optimiser.study import bundled_study_path, load_study

SEED = 11
POP, GENS = 8, 40             # 6 flap options x 8 designs x 40 generations; the kills use
                              # about 15 of them (measured), so the run never ends early
RANDOM_KILLS = 9              # kills at random moments ...
CHECKPOINT_KILLS = (2, 6)     # ... and inside a checkpoint write (0-based trials): 11 kills,
                              # the issue asks for at least 10 in one test
WAIT_S = 60.0                 # give up waiting for a child after this long (a hang is a failure)


def _cli(args, env_extra=None, cwd=None):
    env = dict(os.environ)
    env.pop(TEST_PAUSE_ENV, None)
    env.update(env_extra or {})
    return subprocess.Popen([sys.executable, "-m", "optimiser", *map(str, args)], cwd=cwd,
                            env=env, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)


def _lines(path: Path) -> int:
    try:
        return path.read_bytes().count(b"\n")
    except FileNotFoundError:
        return 0


def _wait_for(predicate, proc):
    """Poll until ``predicate()`` holds; False if the child ended first."""
    deadline = time.monotonic() + WAIT_S
    while time.monotonic() < deadline:
        if predicate():
            return True
        if proc.poll() is not None:
            return predicate()
        time.sleep(0.005)
    proc.kill()
    proc.wait()
    raise AssertionError("the child made no progress in time")


def _kill(proc) -> bool:
    """SIGKILL the child; True if it was still running (a real kill)."""
    alive = proc.poll() is None
    if alive:
        os.kill(proc.pid, signal.SIGKILL)
    proc.wait(timeout=WAIT_S)
    proc.stderr.close()
    return alive and proc.returncode == -signal.SIGKILL


def _check_folder(run_dir: Path):
    """After a kill: the checkpoint loads and every CSV parses completely up to the length
    the checkpoint records (resume truncates the rest); other CSVs are whole. Returns the
    state."""
    state = load_checkpoint(run_dir)
    assert state.termination is None or not (run_dir / "run.json").exists()
    for name, length, rows in (("evaluations.csv", state.archive_bytes, state.n_evaluations),
                               ("history.csv", state.history_bytes, state.generation)):
        data = (run_dir / name).read_bytes()
        assert len(data) >= length, name
        head = data[:length]
        assert head.endswith(b"\n"), name
        frame = pd.read_csv(io.BytesIO(head))
        assert len(frame) == rows, name
        if rows:
            assert frame["generation"].iloc[-1] == state.generation, name
        assert not frame.isna().all(axis=1).any(), name
    for other in ("front.csv", "least_violating.csv"):  # written atomically, whole or absent
        if (run_dir / other).exists():
            pd.read_csv(run_dir / other)
    return state


def test_sigkill_at_random_moments_then_resume_gives_the_uninterrupted_front(tmp_path):
    study = load_study(bundled_study_path())
    reference = tmp_path / "reference"
    optimiser.optimise(study, out=reference, seed=SEED, population=POP, generations=GENS,
                       checkpoint_every=1, plots=False)
    rng = random.Random(20240611)
    run_dir = tmp_path / "killed"
    kills, in_checkpoint, finished = 0, 0, False
    generations_at_kill = []
    for trial in range(RANDOM_KILLS + len(CHECKPOINT_KILLS)):
        if trial == 0:
            done = 0
            args = ["run", "--out", run_dir, "--seed", SEED, "--pop", POP, "--gens", GENS,
                    "--checkpoint-every", 1]
        else:
            done = load_checkpoint(run_dir).generation
            args = ["resume", run_dir]
        if trial in CHECKPOINT_KILLS:
            # pause 30 s inside the first checkpoint write of this process; kill in it
            proc = _cli(args, {TEST_PAUSE_ENV: "30"})
            tmp = run_dir / f".{CHECKPOINT}.tmp-{proc.pid}"
            assert _wait_for(tmp.exists, proc), "never reached a checkpoint write"
            time.sleep(0.05)
            assert _kill(proc)
            assert tmp.exists()  # killed between the complete temporary file and the replace
            state = _check_folder(run_dir)
            assert state.generation == done  # the old checkpoint stands
            in_checkpoint += 1
            kills += 1
            generations_at_kill.append(state.generation)
            continue
        proc = _cli(args)
        # wait for 1 to 3 new generations in history.csv, then kill at a random moment of
        # the next generation (sizing, appending, checkpointing)
        target = 1 + done + rng.randint(1, 3)
        reached = _wait_for(lambda: _lines(run_dir / "history.csv") >= target, proc)
        time.sleep(rng.uniform(0.0, 0.06))
        if not _kill(proc):
            assert proc.returncode == 0, "the run ended before it could be killed"
            finished = True
            break
        assert reached
        kills += 1
        generations_at_kill.append(_check_folder(run_dir).generation)
    assert kills >= 10 and in_checkpoint >= 1 and not finished, (kills, generations_at_kill)
    assert generations_at_kill == sorted(generations_at_kill)  # never lost a checkpoint
    assert generations_at_kill[-1] < GENS
    final = _cli(["resume", run_dir])
    _, err = final.communicate(timeout=120)
    assert final.returncode == 0, err.decode()
    assert not list(run_dir.glob(".*.tmp-*"))  # temporaries of killed writes cleaned up
    for name in ("front.csv", "evaluations.csv"):
        assert (run_dir / name).read_bytes() == (reference / name).read_bytes(), name
    h1 = pd.read_csv(run_dir / "history.csv").drop(columns="elapsed_s")
    h2 = pd.read_csv(reference / "history.csv").drop(columns="elapsed_s")
    pd.testing.assert_frame_equal(h1, h2, check_exact=True)
    front = pd.read_csv(run_dir / "front.csv")
    assert len(front) > 0 and front["feasible"].all()


def test_killed_before_the_first_checkpoint_is_refused_clearly_and_rerun_with_force(
        tmp_path, capsys):
    # killed while the first checkpoint is being written: nothing to resume from, the folder
    # is not silently reused, and --force starts it again
    run_dir = tmp_path / "run"
    proc = _cli(["run", "--out", run_dir, "--pop", POP, "--gens", 2],
                {TEST_PAUSE_ENV: "30"})
    tmp = run_dir / f".{CHECKPOINT}.tmp-{proc.pid}"
    assert _wait_for(tmp.exists, proc)
    assert _kill(proc)
    assert not (run_dir / CHECKPOINT).exists()
    assert main(["resume", str(run_dir)]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and f"no {CHECKPOINT}" in err[0]
    assert main(["run", "--out", str(run_dir), "--pop", str(POP), "--gens", "2"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "--force" in err[0]
    assert main(["run", "--out", str(run_dir), "--pop", str(POP), "--gens", "2",
                 "--force"]) == 0
    assert not list(run_dir.glob(".*.tmp-*"))
    assert len(pd.read_csv(run_dir / "history.csv")) == 2
