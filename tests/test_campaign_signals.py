"""Ctrl-C and SIGTERM during ``optimiser sweep``, serial and on a local Dask cluster, through
the real command line.

Source: the project's own rules (DEVELOPERS.md, campaigns): an interrupted
campaign exits with status 130 within seconds, keeps every finished run, leaves each running
run with its checkpoint (marked "interrupted" in summary.csv, never "failed") and prints one
command, quoted for the shell, that finishes it. A resumed run equals an uninterrupted one
(same seed; the checkpoint holds the random state), so the continued campaign's summary.csv
equals that of a sweep that was never stopped.
"""

import os
import shlex
import signal
import subprocess
import sys
import time
from pathlib import Path

import pandas as pd
import pytest

from optimiser.runfolder import names

ROOT = Path(__file__).resolve().parent.parent
STOP_WITHIN_S = 30.0
"""Seconds from the signal to the exit, generous for a shared 2-core machine (a run stops
after its generation in hand: milliseconds here, plus closing a Dask cluster)."""


def _campaign(folder: Path) -> Path:
    """The bundled strip campaign cut to 2 x 2 combinations of a small budget."""
    text = (ROOT / "problems" / "strip_requirements.campaign.toml").read_text()
    base = (ROOT / "problems" / "high_strip_utility.toml").as_posix()
    text = text.replace('base_study = "high_strip_utility.toml"', f'base_study = "{base}"')
    text = text.replace("population = 60", "population = 24")
    text = text.replace("generations = 30", "generations = 40")
    text = text.replace('values = ["500 m", "600 m", "700 m", "800 m", "900 m"]',
                        'values = ["600 m", "800 m"]')
    text = text.replace('values = ["60 m/s", "65 m/s", "70 m/s"]', 'values = ["60 m/s", "70 m/s"]')
    assert text.count('values = [') == 2 and "generations = 40" in text
    path = folder / "strip.campaign.toml"
    path.write_text(text, encoding="utf-8")
    return path


def _cli(words):
    return [sys.executable, "-m", "optimiser", *map(str, words)]


ENV = dict(os.environ, MPLBACKEND="Agg")


@pytest.fixture(scope="module")
def reference(tmp_path_factory):
    """summary.csv of the same campaign swept without interruption."""
    folder = tmp_path_factory.mktemp("reference")
    _campaign(folder)
    done = subprocess.run(_cli(["sweep", "strip.campaign.toml", "--out", "camp", "--serial",
                                "--no-plots"]), cwd=folder, env=ENV, capture_output=True,
                          text=True, timeout=600)
    assert done.returncode == 0, done.stderr
    summary = pd.read_csv(folder / "camp" / "summary.csv")
    assert (summary["status"] == "finished").all() and len(summary) == 4
    return summary


CASES = {
    "serial-SIGINT": (["--serial"], signal.SIGINT, False),
    "serial-SIGTERM": (["--serial"], signal.SIGTERM, False),
    # SIGTERM to the parent alone (a job scheduler, kill PID): it shuts the cluster down
    "dask-SIGTERM": (["--workers", "2"], signal.SIGTERM, False),
    # Ctrl-C in a terminal: SIGINT to the whole process group, workers included
    "dask-Ctrl-C": (["--workers", "2"], signal.SIGINT, True),
}


@pytest.mark.parametrize("case", list(CASES))
def test_signal_stops_the_sweep_and_the_printed_command_finishes_it(case, tmp_path, reference):
    way, sig, group = CASES[case]
    if "--workers" in way:
        pytest.importorskip("distributed")
    _campaign(tmp_path)
    out = tmp_path / "camp out"           # a space: the printed command must quote it
    proc = subprocess.Popen(_cli(["sweep", "strip.campaign.toml", "--out", out.name, *way,
                                  "--no-plots"]), cwd=tmp_path, env=ENV,
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
                            start_new_session=True)
    try:
        deadline = time.monotonic() + 300
        while not list((out / "runs").glob("*/history.csv")):   # the first run is running
            assert proc.poll() is None, proc.communicate()
            assert time.monotonic() < deadline, "no run started"
            time.sleep(0.05)
        t0 = time.monotonic()
        if group:
            os.killpg(proc.pid, sig)
        else:
            proc.send_signal(sig)
        stdout, stderr = proc.communicate(timeout=120)
        took = time.monotonic() - t0
    finally:
        if proc.poll() is None:
            os.killpg(proc.pid, signal.SIGKILL)
            proc.wait()
    assert proc.returncode == 130, stderr
    assert took < STOP_WITHIN_S, f"took {took:.1f} s to stop"
    assert "Traceback" not in stderr
    summary = pd.read_csv(out / "summary.csv")
    statuses = set(summary["status"])
    assert "interrupted" in statuses and statuses <= {"interrupted", "finished", "not run"}
    assert not list(out.rglob("error.txt"))
    for _, row in summary[summary["status"] == "interrupted"].iterrows():
        run = out / row["run_folder"]
        assert (run / names.CHECKPOINT).is_file() and not (run / names.RUN_INFO).exists()
    assert not (out / ".stop-requested").exists()
    marker = "continue with: "
    commands = [line.split(marker, 1)[1] for line in stderr.splitlines() if marker in line]
    assert len(commands) == 1, stderr
    words = shlex.split(commands[0])
    assert words[:2] == ["optimiser", "sweep"] and words[words.index("--out") + 1] == out.name
    done = subprocess.run(_cli(words[1:]), cwd=tmp_path, env=ENV, capture_output=True,
                          text=True, timeout=600)
    assert done.returncode == 0, done.stderr
    assert "4 of 4 runs finished" in done.stdout
    again = pd.read_csv(out / "summary.csv")
    pd.testing.assert_frame_equal(again, reference, check_exact=False, rtol=1e-12)
