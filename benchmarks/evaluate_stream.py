"""Time and peak memory of ``optimiser evaluate`` on long designs tables: the streaming path
(the command line, chunks of ``EVALUATE_CHUNK_ROWS``) against the whole-table path it
replaced (read every row, size them in one frame, pandas' ``to_csv``), in one run.

Each measurement is a fresh Python process; its peak resident memory is the kernel's
``ru_maxrss`` of that child (``os.wait4``). The machine is shared: compare the ratios.

    python benchmarks/evaluate_stream.py                 # 10^4 and 10^5 rows both ways, 10^6 streaming
    python benchmarks/evaluate_stream.py --old-up-to 1000000   # the old path at 10^6 too (minutes, ~2 GB)
"""

from __future__ import annotations

import argparse
import filecmp
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

REPO = Path(__file__).resolve().parent.parent
STUDY = REPO / "problems" / "high_strip_utility.toml"

OLD_PATH = """
import sys
from optimiser.designs import read_designs_csv
from optimiser.evaluation import evaluate
from optimiser.study import load_study
study = load_study(sys.argv[1])
frame = evaluate(study, read_designs_csv(study, sys.argv[2]))
frame.to_csv(sys.argv[3], index=False, float_format="%.10g")
"""


def designs_file(path: Path, rows: int, seed: int = 1):
    """Seeded random designs over (and a little beyond) the study's bounds."""
    import pandas as pd
    rng = np.random.default_rng(seed)
    flaps = ["none", "plain", "single_slotted", "fowler", "fowler+slats"]
    pd.DataFrame({"wing_loading_N_m2": rng.uniform(400, 1800, rows),
                  "power_loading_N_kW": rng.uniform(40, 110, rows),
                  "aspect_ratio": rng.uniform(5, 13, rows),
                  "flap": rng.choice(flaps, rows)}).to_csv(path, index=False)


def measure(command: list[str]) -> tuple[float, float]:
    """Wall seconds and peak resident MiB of one child process."""
    env = dict(os.environ, MPLBACKEND="Agg")
    t0 = time.perf_counter()
    proc = subprocess.Popen(command, cwd=REPO, env=env, stdout=subprocess.DEVNULL,
                            stderr=subprocess.PIPE)
    _, status, usage = os.wait4(proc.pid, 0)
    seconds = time.perf_counter() - t0
    proc.returncode = os.waitstatus_to_exitcode(status)
    if proc.returncode != 0:
        raise SystemExit(f"{' '.join(command)} failed:\n{proc.stderr.read().decode()[-2000:]}")
    return seconds, usage.ru_maxrss / 1024.0


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rows", type=int, nargs="+", default=[10_000, 100_000, 1_000_000])
    parser.add_argument("--old-up-to", type=int, default=100_000, dest="old_up_to",
                        help="run the whole-table path only up to this many rows")
    args = parser.parse_args(argv)
    print(f"{'rows':>9} {'new s':>8} {'new MiB':>8} {'old s':>8} {'old MiB':>8} "
          f"{'time old/new':>12} {'memory old/new':>14} {'same bytes':>10}")
    with tempfile.TemporaryDirectory() as tmp:
        for rows in args.rows:
            src = Path(tmp) / f"designs-{rows}.csv"
            designs_file(src, rows)
            new_out, old_out = Path(tmp) / "new.csv", Path(tmp) / "old.csv"
            new_s, new_mb = measure([sys.executable, "-m", "optimiser", "evaluate", str(STUDY),
                                     "--designs", str(src), "--out", str(new_out)])
            if rows <= args.old_up_to:
                old_s, old_mb = measure([sys.executable, "-c", OLD_PATH, str(STUDY), str(src),
                                         str(old_out)])
                same = "yes" if filecmp.cmp(new_out, old_out, shallow=False) else "NO"
                print(f"{rows:>9} {new_s:>8.1f} {new_mb:>8.0f} {old_s:>8.1f} {old_mb:>8.0f} "
                      f"{old_s / new_s:>12.2f} {old_mb / new_mb:>14.2f} {same:>10}", flush=True)
                old_out.unlink()
            else:
                print(f"{rows:>9} {new_s:>8.1f} {new_mb:>8.0f} {'-':>8} {'-':>8} {'-':>12} "
                      f"{'-':>14} {'-':>10}", flush=True)
            new_out.unlink()
            src.unlink()
    return 0


if __name__ == "__main__":
    sys.exit(main())
