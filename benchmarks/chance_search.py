"""Throughput of the chance-constrained judgement (frozen-design analysis over common
samples) and the projected time of a default-study run at 1 000 samples per design, in this
process and on a local Dask cluster; wall clock in one session (read the ratios on a shared
machine).

    python benchmarks/chance_search.py [--designs 200] [--samples 1000] [--workers 2]

The table gives (design, sample) rows per second of :class:`optimiser.chance.ChanceEvaluator`
for batches of 10^5 to 10^6 rows (chunked at ROWS_PER_CALL rows), the same on the cluster
(each worker returns per-design numbers only), the speed-up, and the projection: rows of the
default study's budget (population x generations x (samples + 1)) over the measured rate,
for 1, 2 (measured) and 8 or 32 workers (the measured per-row cost divided by the workers,
an upper bound of the speed: it ignores the search's own serial time).
"""

from __future__ import annotations

import argparse
import os
import sys
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parent.parent


def main(argv=None):
    sys.path.insert(0, str(ROOT))
    from optimiser.chance import ChanceEvaluator, ChanceSetting
    from optimiser.cluster import RowMap, close, dask_client
    from optimiser.evaluation import CAUTION
    from optimiser.search import objectives_and_constraints
    from optimiser.sizing import size_designs
    from optimiser.study import bundled_study_path, load_study
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--samples", type=int, default=1000)
    ap.add_argument("--workers", type=int, default=2)
    ap.add_argument("--designs", type=int, nargs="+", default=[100, 400, 1000])
    args = ap.parse_args(argv)
    study = load_study(bundled_study_path())
    rng = np.random.default_rng(2)
    setting = ChanceSetting(0.95, args.samples, 1)
    load = os.getloadavg()
    results = []
    client, cluster = dask_client(workers=args.workers)
    try:
        for n in args.designs:
            cols = [v.lower + (v.upper - v.lower) * rng.random(n) for v in study.variables]
            flap = rng.integers(0, len(study.flaps), n)
            sized = size_designs(study.spec, *cols, flap)
            _, G = objectives_and_constraints(study, sized)
            rows = n * (args.samples + 1)
            here = ChanceEvaluator(study, setting)
            t0 = time.perf_counter()
            a = here(sized, flap, G)
            t_here = time.perf_counter() - t0
            spread = ChanceEvaluator(study, setting, RowMap(client, min_rows_per_task=1))
            spread(sized, flap, G)  # warm the workers (imports, the spec)
            t0 = time.perf_counter()
            b = spread(sized, flap, G)
            t_spread = time.perf_counter() - t0
            same = np.array_equal(a.G, b.G) and all(
                np.array_equal(a.met_counts[c], b.met_counts[c]) for c in a.met_counts)
            results.append((n, rows, rows / t_here, rows / t_spread, t_here / t_spread, same))
    finally:
        close(client, cluster)
    pop, gens = study.search["population"], study.search["generations"]
    total_rows = pop * gens * (args.samples + 1)
    rate1, rate2 = results[-1][2], results[-1][3]
    print(f"load average before: {load[0]:.2f}  cores: {os.cpu_count()}  samples per design: "
          f"{args.samples}")
    print(f"{'designs':>8} {'rows':>10} {'rows/s here':>12} {'rows/s on ' + str(args.workers):>12} "
          f"{'speed-up':>9} {'identical':>9}")
    for n, rows, r1, r2, sp, same in results:
        print(f"{n:8d} {rows:10d} {r1:12.0f} {r2:12.0f} {sp:9.2f} {'yes' if same else 'NO':>9}")
    print(f"\ndefault study budget: {pop} x {gens} designs x {args.samples + 1} rows = "
          f"{total_rows:.3g} airplane analyses")
    for label, rate in (("1 process (measured)", rate1),
                        (f"{args.workers} workers (measured)", rate2),
                        ("8 workers (projected)", rate1 * 8),
                        ("32 workers (projected)", rate1 * 32)):
        seconds = total_rows / rate
        print(f"  {label:28} {seconds:8.0f} s  ({seconds / 3600:.3f} h)")
    print(CAUTION)


if __name__ == "__main__":
    main()
