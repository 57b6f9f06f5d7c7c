"""One writer at a time, and no writes through links.

The lock of a run folder (optimiser/runfolder/lock.py): two ``optimiser resume`` of one folder
started together through the real command line (exactly one proceeds, the other exits 2 with
one line, and the archive holds exactly the rows of one run); a live holder refuses ``run
--force`` and ``resume``; a stale lock (a process that has ended) is taken over with a note;
a lock of another host is refused saying its liveness cannot be checked; the lock is removed
on every way a run ends (finished, an error, Ctrl-C, SIGTERM, an exception); runs of
different folders in threads of one process do not disturb each other.

Links (optimiser/runfolder/files.py): a run file that is a symbolic link, a named pipe or a
folder is refused with one line before anything is written, and the file a link points to is
left byte for byte as it was.

Source: the project's own rules (one-line errors with exit status 2,
nothing saved is lost or overwritten); the POSIX semantics of ``open(O_CREAT | O_EXCL)``,
``O_NOFOLLOW``, ``flock`` and ``rename`` (a rename replaces a link, never its target) are
those of the operating system (POSIX.1-2017, open() and rename(); Linux flock(2)).
"""

from __future__ import annotations

import json
import os
import signal
import socket
import subprocess
import sys
import threading
import time
from pathlib import Path

import pytest

import optimiser
from optimiser import runs
from optimiser.cli import main
from optimiser.errors import RunError
from optimiser.runfolder import files, lock, names
from optimiser.runfolder.checkpoint import TEST_PAUSE_ENV, load_checkpoint

sys.path.insert(0, str(Path(__file__).resolve().parent))
from test_faults import TINY  # noqa: E402  (the same tiny budget and interrupted run)
from test_faults import _interrupted_at_generation_2 as interrupted  # noqa: E402
WAIT_S = 120.0  # a child that takes longer has hung: a failure


@pytest.fixture(scope="module")
def reference(study, tmp_path_factory):
    """An uninterrupted tiny run: what every resumed run must end with."""
    out = tmp_path_factory.mktemp("reference") / "run"
    optimiser.optimise(study, out=out, plots=False, **TINY)
    return out


def cli(*args, pause=None):
    env = dict(os.environ, MPLBACKEND="Agg")
    env.pop(TEST_PAUSE_ENV, None)
    if pause is not None:
        env[TEST_PAUSE_ENV] = str(pause)
    return subprocess.Popen([sys.executable, "-m", "optimiser", *map(str, args)], env=env,
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)


def one_error_line(capsys) -> str:
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1, err
    assert err[0].startswith("error: ") and "Traceback" not in err[0]
    return err[0]


def snapshot(folder: Path) -> dict:
    return {p.name: p.read_bytes() for p in folder.iterdir() if p.is_file()}


def dead_pid() -> int:
    """The id of a process that has ended (a child waited for)."""
    proc = subprocess.Popen([sys.executable, "-c", "pass"])
    proc.wait()
    return proc.pid


def write_lock(run_dir: Path, **holder) -> Path:
    path = run_dir / names.LOCK
    path.write_text(json.dumps({"started_utc": "2026-01-02T03:04:05Z", "command": "resume",
                                **holder}), encoding="utf-8")
    return path


# --- one writer at a time -------------------------------------------------------------------

def test_two_resumes_started_together_exactly_one_proceeds(study, reference, tmp_path):
    out = interrupted(study, tmp_path / "run")
    # each checkpoint write pauses 1.5 s: the one that proceeds stays inside the folder for
    # several seconds (three generations and the final checkpoint), the other one starts at
    # the same moment
    procs = [cli("resume", out, pause=1.5), cli("resume", out, pause=1.5)]
    done = [p.communicate(timeout=WAIT_S) for p in procs]
    codes = [p.returncode for p in procs]
    assert sorted(codes) == [0, 2], (codes, [e for _, e in done])
    winner, loser = (0, 1) if codes[0] == 0 else (1, 0)
    err = done[loser][1].strip().splitlines()
    assert len(err) == 1 and "Traceback" not in err[0], err
    line = err[0]
    assert line.startswith(f"error: {out}: in use by another optimiser process")
    assert f"pid {procs[winner].pid} on host {socket.gethostname()}" in line
    assert "started 20" in line and "'resume'" in line
    # the archive holds exactly the rows of one run: those of the uninterrupted run
    for name in (names.ARCHIVE, names.FRONT):
        assert (out / name).read_bytes() == (reference / name).read_bytes(), name
    assert not (out / names.LOCK).exists()


def test_live_holder_refuses_resume_and_run_force(study, tmp_path, capsys):
    out = interrupted(study, tmp_path / "run")
    before = snapshot(out)
    with lock.acquire(out, "resume") as held:  # a second open file: conflicts like a process
        info = json.loads((out / names.LOCK).read_text("utf-8"))
        assert info["pid"] == os.getpid() and info["host"] == socket.gethostname()
        assert info["command"] == "resume" and info["started_utc"] == held.holder["started_utc"]
        assert main(["resume", str(out)]) == 2
        line = one_error_line(capsys)
        assert f"{out}: in use by another optimiser process (pid {os.getpid()}" in line
        assert info["started_utc"] in line
        assert main(["run", "--out", str(out), "--force", "--pop", "8", "--gens", "1"]) == 2
        assert "in use by another optimiser process" in one_error_line(capsys)
        assert snapshot(out) == {**before, names.LOCK: (out / names.LOCK).read_bytes()}
    assert not (out / names.LOCK).exists()
    assert snapshot(out) == before


def test_stale_lock_of_an_ended_process_is_taken_over(study, reference, tmp_path, capsys):
    out = interrupted(study, tmp_path / "run")
    pid = dead_pid()
    write_lock(out, pid=pid, host=socket.gethostname())
    assert main(["resume", str(out)]) == 0
    err = capsys.readouterr().err
    assert f"took over a stale lock (pid {pid} on host {socket.gethostname()}" in err
    assert not (out / names.LOCK).exists()
    assert (out / names.ARCHIVE).read_bytes() == (reference / names.ARCHIVE).read_bytes()


def test_lock_not_flocked_is_stale_even_if_its_pid_was_reused(tmp_path, capsys):
    # the parent of this process is alive, but holds no flock on the file: the holder ended
    # and its pid went to another process
    write_lock(tmp_path, pid=os.getppid(), host=socket.gethostname())
    with lock.acquire(tmp_path, "run") as held:
        assert held.holder["pid"] == os.getpid()
    assert "took over a stale lock" in capsys.readouterr().err


def test_lock_file_without_details_is_stale_once_old(tmp_path, capsys):
    (tmp_path / names.LOCK).write_bytes(b"")  # died between creating and filling it
    old = time.time() - 10 * lock.SETTLE_S
    os.utime(tmp_path / names.LOCK, (old, old))
    with lock.acquire(tmp_path, "run"):
        pass
    assert "took over a stale lock (a lock without details" in capsys.readouterr().err
    assert list(tmp_path.iterdir()) == []


def test_lock_of_another_host_is_refused_saying_how_to_remove_it(study, tmp_path, capsys):
    out = interrupted(study, tmp_path / "run")
    path = write_lock(out, pid=4242, host="some-other-host.invalid")
    before = snapshot(out)
    assert main(["resume", str(out)]) == 2
    line = one_error_line(capsys)
    assert "locked by pid 4242 on host some-other-host.invalid" in line
    assert f"cannot be checked from host {socket.gethostname()}" in line
    assert f"remove the lock (rm {path})" in line
    assert snapshot(out) == before


def test_folder_holding_only_a_stale_lock_counts_as_empty(study, tmp_path, capsys):
    out = tmp_path / "run"
    out.mkdir()
    write_lock(out, pid=dead_pid(), host=socket.gethostname())
    optimiser.optimise(study, out=out, population=8, generations=1, plots=False)
    assert "took over a stale lock" in capsys.readouterr().err
    assert sorted(p.name for p in out.iterdir()) == sorted(
        [names.STUDY, names.RUN_INFO, names.FRONT, names.ARCHIVE, names.HISTORY,
         names.CHECKPOINT])


def test_lock_is_held_while_the_run_writes_and_removed_when_it_ends(study, tmp_path):
    seen = []

    def look(row, state):
        seen.append(json.loads((tmp_path / "run" / names.LOCK).read_text("utf-8")))

    optimiser.optimise(study, out=tmp_path / "run", plots=False, progress=look, **TINY)
    assert len(seen) == 5 and all(s["pid"] == os.getpid() and s["command"] == "run"
                                  for s in seen)
    assert not (tmp_path / "run" / names.LOCK).exists()


def test_lock_is_removed_on_interrupt_error_and_exception(study, tmp_path, monkeypatch):
    out = interrupted(study, tmp_path / "a")  # Ctrl-C: RunInterrupted
    assert not (out / names.LOCK).exists()

    def refuse(path, text):
        raise OSError(28, "No space left on device", str(path))

    monkeypatch.setattr(files, "append", refuse)  # an error: RunError
    with pytest.raises(RunError, match="cannot write evaluations.csv"):
        runs.resume(out, plots=False)
    assert not (out / names.LOCK).exists()
    monkeypatch.undo()

    def broken(*args, **kwargs):
        raise ZeroDivisionError("a bug")

    monkeypatch.setattr(runs, "finish", broken)  # any other exception
    with pytest.raises(ZeroDivisionError):
        runs.resume(out, plots=False)
    assert not (out / names.LOCK).exists()
    with pytest.raises(ZeroDivisionError):
        optimiser.optimise(study, out=tmp_path / "b", plots=False, **TINY)
    assert not (tmp_path / "b" / names.LOCK).exists()


def test_sigterm_ends_the_run_and_removes_the_lock(tmp_path):
    out = tmp_path / "run"
    proc = cli("run", "--out", out, "--pop", 8, "--gens", 40, "--checkpoint-every", 1,
               pause=0.5)
    deadline = time.monotonic() + WAIT_S
    while not (out / names.HISTORY).exists() or \
            (out / names.HISTORY).read_bytes().count(b"\n") < 3:
        assert proc.poll() is None and time.monotonic() < deadline, proc.stderr.read()
        time.sleep(0.01)
    assert (out / names.LOCK).exists()
    proc.send_signal(signal.SIGTERM)
    _, err = proc.communicate(timeout=WAIT_S)
    assert proc.returncode == 130, err
    assert "resume it with" in err
    assert not (out / names.LOCK).exists()
    assert load_checkpoint(out).termination is None


def test_runs_of_different_folders_in_threads_and_one_folder_refused(study, tmp_path):
    inside, tried = threading.Event(), threading.Event()
    results, errors = {}, {}

    def wait_for_the_other(row, state):
        if row["generation"] == 1:
            inside.set()
            assert tried.wait(WAIT_S)

    def first():
        results["a"] = optimiser.optimise(study, out=tmp_path / "a", plots=False,
                                          progress=wait_for_the_other, **TINY)

    def other_folder():
        results["b"] = optimiser.optimise(study, out=tmp_path / "b", plots=False, **TINY)

    threads = [threading.Thread(target=first), threading.Thread(target=other_folder)]
    for t in threads:
        t.start()
    assert inside.wait(WAIT_S)
    try:  # the same folder from a third thread while the first writes it: refused
        optimiser.optimise(study, out=tmp_path / "a", force=True, plots=False, **TINY)
    except RunError as exc:
        errors["same"] = str(exc)
    finally:
        tried.set()
    for t in threads:
        t.join(WAIT_S)
    assert "in use by another optimiser process" in errors["same"]
    assert (tmp_path / "a" / names.ARCHIVE).read_bytes() == \
        (tmp_path / "b" / names.ARCHIVE).read_bytes()  # same seed, undisturbed
    assert results["a"].termination == results["b"].termination == "generations"
    assert not (tmp_path / "a" / names.LOCK).exists()
    assert not (tmp_path / "b" / names.LOCK).exists()


def test_lock_file_that_is_a_link_is_refused(study, tmp_path, capsys):
    out = interrupted(study, tmp_path / "run")
    target = tmp_path / "elsewhere.txt"
    target.write_text("not a lock\n")
    (out / names.LOCK).symlink_to(target)
    assert main(["resume", str(out)]) == 2
    line = one_error_line(capsys)
    assert f"{out / names.LOCK}: is a symbolic link (to {target})" in line
    assert target.read_text() == "not a lock\n" and (out / names.LOCK).is_symlink()


# --- no writes through links ----------------------------------------------------------------

def test_symlinked_archive_is_refused_and_its_target_unchanged(study, tmp_path, capsys):
    out = interrupted(study, tmp_path / "run")
    outside = tmp_path / "outside.csv"
    (out / names.ARCHIVE).rename(outside)
    (out / names.ARCHIVE).symlink_to(outside)
    target = outside.read_bytes()
    before = snapshot(out)
    assert main(["resume", str(out)]) == 2
    line = one_error_line(capsys)
    assert f"{out / names.ARCHIVE}: is a symbolic link (to {outside})" in line
    assert "expected a regular file" in line
    assert outside.read_bytes() == target  # byte for byte: not truncated, not appended
    assert snapshot(out) == before and (out / names.ARCHIVE).is_symlink()


def test_symlinked_front_survives_run_force_and_pick(study, tmp_path, capsys):
    out = tmp_path / "run"
    optimiser.optimise(study, out=out, plots=False, **TINY)
    outside = tmp_path / "front_elsewhere.csv"
    (out / names.FRONT).rename(outside)
    (out / names.FRONT).symlink_to(outside)
    target = outside.read_bytes()
    assert main(["run", "--out", str(out), "--force", "--pop", "8", "--gens", "2"]) == 2
    assert f"{out / names.FRONT}: is a symbolic link" in one_error_line(capsys)
    assert outside.read_bytes() == target and (out / names.FRONT).is_symlink()
    assert load_checkpoint(out).generation == 5  # the run folder as it was
    assert main(["pick", str(out)]) == 0  # reads the front through the link, writes beside
    capsys.readouterr()
    assert (out / "pick-knee" / "design.csv").is_file()
    assert outside.read_bytes() == target


def test_symlinked_pick_folder_is_refused(study, tmp_path, capsys):
    out = tmp_path / "run"
    optimiser.optimise(study, out=out, plots=False, **TINY)
    elsewhere = tmp_path / "elsewhere"
    elsewhere.mkdir()
    (out / "pick-knee").symlink_to(elsewhere, target_is_directory=True)
    assert main(["pick", str(out)]) == 2
    assert f"{out / 'pick-knee'}: is a symbolic link; expected a folder" in \
        one_error_line(capsys)
    assert list(elsewhere.iterdir()) == []


@pytest.mark.parametrize("kind", ["fifo", "folder"])
def test_pipe_or_folder_in_place_of_history_is_refused_not_hung(study, tmp_path, kind):
    out = interrupted(study, tmp_path / "run")
    (out / names.HISTORY).unlink()
    if kind == "fifo":
        os.mkfifo(out / names.HISTORY)
    else:
        (out / names.HISTORY).mkdir()
    proc = cli("resume", out)
    _, err = proc.communicate(timeout=WAIT_S)  # a hang is a failure (timeout)
    assert proc.returncode == 2
    lines = err.strip().splitlines()
    what = "a named pipe" if kind == "fifo" else "a folder"
    assert len(lines) == 1 and f"{out / names.HISTORY}: is {what}, not a regular file" in lines[0]
    assert not (out / names.LOCK).exists()


def test_symlinked_plots_folder_is_refused(study, tmp_path, capsys):
    out = interrupted(study, tmp_path / "run")
    elsewhere = tmp_path / "elsewhere"
    elsewhere.mkdir()
    (out / names.PLOTS_DIR).symlink_to(elsewhere, target_is_directory=True)
    assert main(["resume", str(out)]) == 2
    assert f"{out / names.PLOTS_DIR}: is a symbolic link" in one_error_line(capsys)
    assert list(elsewhere.iterdir()) == []


def test_run_folder_itself_may_be_a_link(study, tmp_path):
    real = tmp_path / "real"
    real.mkdir()
    (tmp_path / "link").symlink_to(real, target_is_directory=True)
    optimiser.optimise(study, out=tmp_path / "link", plots=False, population=8, generations=1)
    assert (real / names.RUN_INFO).is_file() and not (real / names.LOCK).exists()


def test_primitives_never_write_through_a_link(tmp_path):
    target = tmp_path / "target.csv"
    target.write_bytes(b"keep me\n")
    link = tmp_path / "link.csv"
    link.symlink_to(target)
    for write in (lambda: files.write_atomic(link, b"new\n"), lambda: files.append(link, "x"),
                  lambda: files.truncate(link, 0), lambda: files.sync(link)):
        with pytest.raises(RunError, match="is a symbolic link"):
            write()
        files.close_appended()
        assert target.read_bytes() == b"keep me\n" and link.is_symlink()
    assert sorted(p.name for p in tmp_path.iterdir()) == ["link.csv", "target.csv"]


def test_link_planted_during_an_atomic_write_is_not_followed(tmp_path):
    # the final name turns into a link between the complete temporary file and the rename
    target = tmp_path / "target.csv"
    target.write_bytes(b"keep me\n")
    path = tmp_path / "front.csv"
    path.write_bytes(b"old\n")

    def plant():
        path.unlink()
        path.symlink_to(target)

    with pytest.raises(RunError, match="is a symbolic link"):
        files.write_atomic(path, b"new\n", before_replace=plant)
    assert target.read_bytes() == b"keep me\n"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["front.csv", "target.csv"]
    # and the rename itself replaces a link, never its target (POSIX rename())
    tmp = tmp_path / "tmp"
    tmp.write_bytes(b"new\n")
    os.replace(tmp, path)
    assert not path.is_symlink() and path.read_bytes() == b"new\n"
    assert target.read_bytes() == b"keep me\n"
