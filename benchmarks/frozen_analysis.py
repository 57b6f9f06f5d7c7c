"""Throughput of the frozen-design analysis against the sizing, in one run.

For each bundled demo study: ``size_designs`` (with the mass closure) and
``sizing.frozen.analyse_designs`` (the same airplanes frozen, at their design case, no
closure) over the same batch of random designs inside the study's bounds, best of
``--repeat`` timings each, and their ratio. The analysis is what a robustness study or a
chance-constrained search calls for every sample of every design, so its designs per second
set their cost. The machine is shared: read the ratio, not the absolute numbers.

    python benchmarks/frozen_analysis.py [--designs 100000] [--repeat 3]
"""

from __future__ import annotations

import argparse
import time
import warnings
from pathlib import Path

import numpy as np

REPO = Path(__file__).resolve().parents[1]
STUDIES = ["high_strip_utility", "twin_turboprop_commuter", "light_twin_jet"]


def best_time(fn, repeat):
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return min(times)


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--designs", type=int, default=100_000)
    ap.add_argument("--repeat", type=int, default=3)
    args = ap.parse_args()
    warnings.simplefilter("ignore")
    from optimiser.sizing import size_designs
    from optimiser.sizing.frozen import analyse_designs, frozen_from_sized, operating_masses
    from optimiser.study import load_study
    print(f"designs per batch: {args.designs}; best of {args.repeat}")
    print(f"{'study':<26}{'sizing [designs/s]':>20}{'analysis [designs/s]':>22}{'ratio':>8}")
    for name in STUDIES:
        study = load_study(REPO / "problems" / f"{name}.toml")
        spec, n = study.spec, args.designs
        rng = np.random.default_rng(7)
        x = [rng.uniform(study.variable(c).lower, study.variable(c).upper, n)
             for c in ("wing_loading_N_m2", study.loading_column, "aspect_ratio")]
        idx = rng.integers(0, len(spec.high_lift), n)
        sized = size_designs(spec, *x, idx)
        frozen = frozen_from_sized(sized, idx, spec.uses_power_loading)
        masses = operating_masses(spec, frozen)
        t_size = best_time(lambda: size_designs(spec, *x, idx), args.repeat)
        t_frozen = best_time(lambda: analyse_designs(spec, frozen, masses), args.repeat)
        print(f"{name:<26}{n / t_size:>20,.0f}{n / t_frozen:>22,.0f}{t_size / t_frozen:>8.2f}")


if __name__ == "__main__":
    main()
