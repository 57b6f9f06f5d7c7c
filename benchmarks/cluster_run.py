"""What spreading the sizing over Dask workers buys: large batches through
:class:`optimiser.cluster.RowMap` on a local cluster of 1 and 2 worker processes against one
call in this process, and a whole run with ``workers=2`` against the same run here. Wall
clock, measured in one session; on a shared machine read the ratios.

    python benchmarks/cluster_run.py [--rows 400000] [--workers 2] [--pop 2400 --gens 8]

The cluster's start-up is timed apart (it is paid once per run). Every spread answer is
checked bit for bit against the one in this process.
"""

from __future__ import annotations

import argparse
import os
import shutil
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parent.parent


def _designs(study, n, seed=1):
    rng = np.random.default_rng(seed)
    cols = [v.lower + (v.upper - v.lower) * rng.random(n) for v in study.variables]
    return (*cols, rng.integers(0, len(study.flaps), n))


def _best_of(k, fn):
    best = float("inf")
    out = None
    for _ in range(k):
        t0 = time.perf_counter()
        out = fn()
        best = min(best, time.perf_counter() - t0)
    return best, out


def _same(a, b) -> bool:
    return all(np.asarray(a[k]).tobytes() == np.asarray(b[k]).tobytes() for k in a)


def main(argv=None):
    sys.path.insert(0, str(ROOT))
    import optimiser
    from optimiser.cluster import RowMap, close, dask_client
    from optimiser.evaluation import CAUTION
    from optimiser.sizing import size_designs
    from optimiser.study import bundled_study_path, load_study
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--rows", type=int, default=400_000)
    ap.add_argument("--workers", type=int, default=2)
    ap.add_argument("--pop", type=int, default=2400)
    ap.add_argument("--gens", type=int, default=8)
    args = ap.parse_args(argv)
    study = load_study(bundled_study_path())
    batch = _designs(study, args.rows)
    load = os.getloadavg()
    rows = []
    t_here, here = _best_of(2, lambda: size_designs(study.spec, *batch))
    rows.append(("batch", f"{args.rows} designs", "this process", t_here, 1.0, "-"))
    for n in sorted({1, args.workers}):
        t0 = time.perf_counter()
        client, cluster = dask_client(workers=n)
        t_start = time.perf_counter() - t0
        try:
            mapper = RowMap(client)
            mapper(size_designs, study.spec, *(a[:1000] for a in batch))  # warm the workers
            t, spread = _best_of(2, lambda: mapper(size_designs, study.spec, *batch))
        finally:
            close(client, cluster)
        rows.append(("batch", f"{args.rows} designs", f"{n} workers (start-up {t_start:.1f} s)",
                     t, t_here / t, "yes" if _same(here, spread) else "NO"))
    tmp = Path(tempfile.mkdtemp(prefix="cluster-run-"))
    try:
        kw = dict(seed=1, population=args.pop, generations=args.gens)
        t0 = time.perf_counter()
        optimiser.optimise(study, out=tmp / "here", **kw)
        t_run = time.perf_counter() - t0
        rows.append(("run", f"pop {args.pop} x {args.gens} gens", "this process", t_run, 1.0,
                     "-"))
        t0 = time.perf_counter()
        optimiser.optimise(study, out=tmp / "spread", workers=args.workers, **kw)
        t_spread = time.perf_counter() - t0
        same = all((tmp / "here" / f).read_bytes() == (tmp / "spread" / f).read_bytes()
                   for f in ("evaluations.csv", "front.csv"))
        rows.append(("run", f"pop {args.pop} x {args.gens} gens",
                     f"{args.workers} workers (with start-up)", t_spread, t_run / t_spread,
                     "yes" if same else "NO"))
    finally:
        shutil.rmtree(tmp, ignore_errors=True)
    print(f"load average before: {load[0]:.2f}  cores: {os.cpu_count()}")
    print(f"{'what':6} {'size':22} {'where':34} {'wall [s]':>9} {'speed-up':>9} "
          f"{'identical':>9}")
    for what, size, where, t, speed, same in rows:
        print(f"{what:6} {size:22} {where:34} {t:9.2f} {speed:9.2f} {same:>9}")
    print(CAUTION)


if __name__ == "__main__":
    main()
