"""Model throughput: designs per second of the vectorised sizing model.

Prints a table (and writes benchmarks/model_speed.csv): for each demo study and batch size, the
median wall time of several runs and designs per second, beside a per-design Python loop over
the same function (a batch of one design at a time) measured in the same run.

    python benchmarks/model_speed.py [--repeats 5] [--loop-designs 200]
"""

from __future__ import annotations

import argparse
import os
import platform
import statistics
import time
from pathlib import Path

os.environ.setdefault("OMP_NUM_THREADS", "1")
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")

import numpy as np  # noqa: E402

from optimiser.sizing import size_designs  # noqa: E402
from optimiser.study import load_study  # noqa: E402

ROOT = Path(__file__).resolve().parent.parent
STUDIES = ("high_strip_utility", "twin_turboprop_commuter", "light_twin_jet")


def random_designs(study, n, seed=0):
    rng = np.random.default_rng(seed)
    cols = [rng.uniform(v.lower, v.upper, n) for v in study.variables]
    names = study.spec.high_lift_names
    flap = rng.choice([names.index(f) for f in study.flaps], n)
    return (*cols, flap)


def median_time(fn, repeats):
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return statistics.median(times)


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeats", type=int, default=5)
    ap.add_argument("--loop-designs", type=int, default=200)
    ap.add_argument("--max-batch", type=int, default=1_000_000)
    args = ap.parse_args()
    rows = []
    for name in STUDIES:
        study = load_study(ROOT / "problems" / f"{name}.toml")
        spec = study.spec
        size_designs(spec, *random_designs(study, 100))  # warm-up
        d = random_designs(study, args.loop_designs, seed=1)
        t_loop = median_time(lambda: [size_designs(spec, *(np.atleast_1d(x[i]) for x in d))
                                      for i in range(args.loop_designs)], max(1, args.repeats // 2))
        loop_rate = args.loop_designs / t_loop
        for n in (1_000, 10_000, 100_000, 1_000_000):
            if n > args.max_batch:
                continue
            chunk = min(n, 100_000)
            batches = [random_designs(study, chunk, seed=k) for k in range(n // chunk)]
            t = median_time(lambda: [size_designs(spec, *b) for b in batches],
                            args.repeats if n <= 100_000 else max(1, args.repeats // 2))
            rows.append((name, n, chunk, t, n / t, loop_rate, (n / t) / loop_rate))
    header = ("study", "designs", "chunk", "median_s", "designs_per_s", "loop_designs_per_s",
              "speed_up_vs_loop")
    print(f"machine: {platform.processor() or platform.machine()}, {os.cpu_count()} cores, "
          f"python {platform.python_version()}, numpy {np.__version__}")
    print(f"{header[0]:<26}{header[1]:>10}{header[2]:>9}{header[3]:>10}{header[4]:>15}"
          f"{header[5]:>20}{header[6]:>18}")
    for r in rows:
        print(f"{r[0]:<26}{r[1]:>10}{r[2]:>9}{r[3]:>10.4f}{r[4]:>15.0f}{r[5]:>20.0f}{r[6]:>18.0f}")
    out = ROOT / "benchmarks" / "model_speed.csv"
    with open(out, "w") as fh:
        fh.write(",".join(header) + "\n")
        for r in rows:
            fh.write(",".join(str(x) for x in r) + "\n")
    print(f"wrote {out}")


if __name__ == "__main__":
    main()
