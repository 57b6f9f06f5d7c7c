"""Memory checked before work starts: a run (or an evaluate) that the available memory cannot
hold is refused in one line, before any folder or file is created.

Source: the project's own rules (DEVELOPERS.md "Tests and benchmarks", the fault rules of
optimiser/runs.py); the expected estimates are the documented formula with its measured
constants (optimiser.runs.RUN_BYTES_PER_DESIGN, DUPLICATE_CHECK_BYTES_PER_PAIR,
optimiser.evaluation.SIZING_PEAK_BYTES_PER_DESIGN, MEMORY_SAFETY_FACTOR); /proc/meminfo
gives kB of 1024 bytes (Linux proc(5)).
"""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import pytest

import optimiser.evaluation as evaluation
from optimiser.cli import main
from optimiser.errors import RunError
from optimiser.runs import start
from optimiser.study import load_study

PROBLEMS = Path(__file__).resolve().parents[1] / "problems"
UTILITY = PROBLEMS / "high_strip_utility.toml"  # six flap options


@pytest.fixture
def one_gigabyte(monkeypatch):
    monkeypatch.setattr(evaluation, "available_memory_bytes", lambda: 1_000_000_000)


def test_a_population_too_large_for_memory_is_refused_before_the_folder(one_gigabyte,
                                                                          tmp_path):
    study = load_study(UTILITY)
    out = tmp_path / "run"
    # 60 000 over 6 options: 10 000 each; (9 000 x 60 000 + 18 x 10 000^2) x 2 = 4.68e9 bytes
    with pytest.raises(RunError) as info:
        start(study, out=out, population=60_000, generations=1)
    message = str(info.value)
    assert message.startswith("--pop 60000: the run needs an estimated 4.7 GB; only 1.0 GB "
                              "of memory is available (60000 designs a generation, 10000 per "
                              "flap option")
    assert "\n" not in message
    assert not out.exists()


def test_a_population_that_fits_starts(one_gigabyte, tmp_path):
    # 600 over 6 options: (9 000 x 600 + 18 x 100^2) x 2 = 11.2 MB, well inside 1 GB
    state, run_dir = start(load_study(UTILITY), out=tmp_path / "run", population=600,
                           generations=1)
    assert run_dir.is_dir() and state.budget.option_population == 100


def test_the_command_line_refuses_it_with_exit_2(one_gigabyte, tmp_path, capsys):
    out = tmp_path / "run"
    code = main(["run", str(UTILITY), "--pop", "60000", "--gens", "1", "--out", str(out)])
    err = capsys.readouterr().err
    assert code == 2
    assert err.startswith("error: --pop 60000: the run needs an estimated 4.7 GB; only 1.0 GB")
    assert err.count("\n") == 1
    assert list(tmp_path.iterdir()) == []


def test_no_check_where_the_available_memory_is_unknown(monkeypatch):
    monkeypatch.setattr(evaluation, "available_memory_bytes", lambda: None)
    assert evaluation.memory_shortfall(10 ** 30) is None


def test_a_huge_population_through_the_real_command_line(tmp_path):
    # 10 million over 6 options, 1 666 667 each: (9 000 x 10 000 002 + 18 x 1 666 667^2) x 2
    # = 1.002e14 bytes, more than any machine running these tests has
    out = tmp_path / "run"
    done = subprocess.run([sys.executable, "-m", "optimiser", "run", str(UTILITY), "--pop",
                           "10000000", "--gens", "1", "--out", str(out)],
                          capture_output=True, text=True, cwd=tmp_path, timeout=120)
    assert done.returncode == 2 and "Traceback" not in done.stderr
    assert done.stderr.startswith("error: --pop 10000000: the run needs an estimated 100.2 TB")
    assert "of memory is available" in done.stderr and done.stderr.count("\n") == 1
    assert list(tmp_path.iterdir()) == []


def test_evaluate_refuses_a_table_too_large_for_memory(monkeypatch, tmp_path, capsys):
    monkeypatch.setattr(evaluation, "available_memory_bytes", lambda: 20_000)
    designs = tmp_path / "d.csv"
    designs.write_text("wing_loading_N_m2,power_loading_N_kW,aspect_ratio,flap\n"
                       + "1000,70,8,fowler\n" * 10)
    out = tmp_path / "out.csv"
    code = main(["evaluate", str(UTILITY), "--designs", str(designs), "--out", str(out)])
    err = capsys.readouterr().err
    # the smallest chunk, 1 000 designs x 1 510 x 2 = 3.02 MB > 20 000 bytes
    assert code == 2
    assert err == (f"error: --designs {designs}: sizing 1000 designs at once needs an "
                   "estimated 3.0 MB; only 20.0 kB of memory is available (3020 bytes a "
                   "design, with head-room); expected a table that fits in memory (split it "
                   "into smaller files)\n")
    assert not out.exists()


def test_evaluate_sizes_smaller_chunks_where_memory_is_short(monkeypatch):
    study = load_study(UTILITY)
    monkeypatch.setattr(evaluation, "available_memory_bytes", lambda: 3020 * 5000)
    assert evaluation.evaluate_chunk_rows(study) == 5000
    monkeypatch.setattr(evaluation, "available_memory_bytes", lambda: None)
    assert evaluation.evaluate_chunk_rows(study) == evaluation.EVALUATE_CHUNK_ROWS


def test_design_bytes_estimate_by_family():
    assert evaluation.design_bytes_estimate(load_study(UTILITY)) == 3020
    jet = load_study(PROBLEMS / "light_twin_jet.toml")
    assert evaluation.design_bytes_estimate(jet) == 3460


@pytest.mark.parametrize("name", ["high_strip_utility", "twin_turboprop_commuter",
                                  "light_twin_jet"])
def test_the_measured_sizing_peak_is_within_its_constant(name):
    # the constant's own measurement (tracemalloc over one size_frame call of 2 000 random
    # designs inside the study's bounds): the peak per design is at most the constant and
    # not far below it (a model that grows its memory, or a stale constant, fails)
    import tracemalloc

    import numpy as np

    from optimiser.evaluation import size_frame
    from optimiser.search import design_arrays
    study = load_study(PROBLEMS / f"{name}.toml")
    rng = np.random.default_rng(0)
    n = 2000
    X = np.column_stack([rng.uniform(v.lower, v.upper, n) for v in study.variables])
    names = study.spec.high_lift_names
    flap = rng.choice([names.index(f) for f in study.flaps], n)
    ws, load, ar = design_arrays(study, X)
    size_frame(study, ws, load, ar, flap)
    tracemalloc.start()
    try:
        size_frame(study, ws, load, ar, flap)
        peak = tracemalloc.get_traced_memory()[1]
    finally:
        tracemalloc.stop()
    constant = evaluation.SIZING_PEAK_BYTES_PER_DESIGN[study.spec.propulsion.family]
    assert 0.85 * constant <= peak / n <= constant


@pytest.mark.skipif(not Path("/proc/meminfo").exists(), reason="Linux /proc/meminfo only")
def test_available_memory_is_read_from_proc_meminfo():
    line = [x for x in Path("/proc/meminfo").read_text().splitlines()
            if x.startswith("MemAvailable:")][0]
    expected = int(line.split()[1]) * 1024
    got = evaluation.available_memory_bytes()
    assert got == pytest.approx(expected, rel=0.2)  # other processes move it a little


def test_memory_text_units():
    assert [evaluation.memory_text(x) for x in (999, 28_800, 4.68e9, 1e14, 3e15)] == \
        ["999 bytes", "28.8 kB", "4.7 GB", "100.0 TB", "3000.0 TB"]
