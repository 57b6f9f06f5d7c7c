"""Front quality of the default search on each demo study.

For every demo study: the hypervolume of the front found with the study's default budget,
relative to the hypervolume of a dense enumeration (a grid of GRID points per variable over
the bounds, for every allowed flap option, non-dominated feasible subset), beside random
sampling with the same number of evaluations and an integer-coded NSGA-II (flap index as a
rounded fourth variable, one population) with the same number of evaluations. All
hypervolumes use the study's fixed reference (optimiser.search.reference_scales).

Run:  python benchmarks/search_quality.py   (prints a table, writes search_quality.csv here)
"""

from __future__ import annotations

import itertools
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
import pandas as pd

import optimiser
from optimiser.evaluation import size_frame
from optimiser.search import (flap_indices, hypervolume, nondominated_mask,
                              objectives_and_constraints, option_seed, reference_scales)
from optimiser.study import bundled_study_path, load_study

STUDIES = ("high_strip_utility", "light_twin_jet", "twin_turboprop_commuter")
GRID = 50
RANDOM_SEED = 2024


def _front_hv(study, frame, scales):
    cols = list(study.objective_columns())
    F = frame.loc[frame["feasible"].astype(bool), cols].to_numpy(float)
    return hypervolume(F[nondominated_mask(F)], scales) if len(F) else 0.0


def dense_reference(study, n=GRID):
    axes = [np.linspace(v.lower, v.upper, n if not v.fixed else 1) for v in study.variables]
    X = np.array(list(itertools.product(*axes)))
    frames = [size_frame(study, X[:, 0], X[:, 1], X[:, 2], np.full(len(X), i))
              for i in flap_indices(study)]
    return pd.concat(frames, ignore_index=True)


def random_designs(study, n, seed=RANDOM_SEED):
    rng = np.random.default_rng(seed)
    lo = np.array([v.lower for v in study.variables])
    hi = np.array([v.upper for v in study.variables])
    X = lo + (hi - lo) * rng.random((n, 3))
    flaps = np.array(flap_indices(study))[rng.integers(0, len(study.flaps), n)]
    return size_frame(study, X[:, 0], X[:, 1], X[:, 2], flaps)


def integer_coded(study, population, generations, seed):
    """One NSGA-II over (3 continuous variables, flap index rounded), same evaluations."""
    from pymoo.algorithms.moo.nsga2 import NSGA2
    from pymoo.core.problem import Problem
    from pymoo.core.repair import Repair

    idx = np.array(flap_indices(study))
    n = len(idx)
    frames = []

    class Rounded(Repair):
        def _do(self, problem, X, **kwargs):
            X = X.copy()
            X[:, 3] = np.clip(np.round(X[:, 3]), 0, n - 1)
            return X

    class Mixed(Problem):
        def __init__(self):
            super().__init__(n_var=4, n_obj=len(study.objectives),
                             n_ieq_constr=len(optimiser.sizing.active_constraints(study.spec)),
                             xl=np.array([v.lower for v in study.variables] + [-0.5]),
                             xu=np.array([v.upper for v in study.variables] + [n - 0.5]))

        def _evaluate(self, X, out, *args, **kwargs):
            k = np.clip(np.round(X[:, 3]).astype(int), 0, n - 1)
            f = size_frame(study, X[:, 0], X[:, 1], X[:, 2], idx[k])
            out["F"], out["G"] = objectives_and_constraints(study, f)
            frames.append(f)

    problem = Mixed()
    algo = NSGA2(pop_size=population, repair=Rounded(), eliminate_duplicates=True)
    algo.setup(problem, termination=("n_gen", generations), seed=option_seed(seed, 999))
    while algo.has_next():
        pop = algo.ask()
        algo.evaluator.eval(problem, pop)
        algo.tell(infills=pop)
    return pd.concat(frames, ignore_index=True)


def main():
    import optimiser.sizing  # noqa: F401  (for integer_coded)
    rows = []
    with tempfile.TemporaryDirectory() as tmp:
        for name in STUDIES:
            study = load_study(bundled_study_path(name))
            scales = reference_scales(study)
            t0 = time.perf_counter()
            grid = dense_reference(study)
            hv_ref = _front_hv(study, grid, scales)
            t1 = time.perf_counter()
            res = optimiser.optimise(study, out=Path(tmp) / name, plots=False)
            t2 = time.perf_counter()
            hv_search = hypervolume(res.front[list(study.objective_columns())].to_numpy(float),
                                    scales)
            n = res.n_evaluations
            hv_random = _front_hv(study, random_designs(study, n), scales)
            s = study.search
            per_gen = s["population"]
            gens = max(1, round(n / per_gen))
            hv_int = _front_hv(study, integer_coded(study, per_gen, gens, s["seed"]), scales)
            rows.append({
                "study": name, "evaluations": n,
                "reference_designs": len(grid), "reference_hv": hv_ref,
                "search_hv_rel": hv_search / hv_ref,
                "random_hv_rel": hv_random / hv_ref,
                "integer_coded_hv_rel": hv_int / hv_ref,
                "front_size": len(res.front),
                "front_flaps": len(set(res.front["flap"])),
                "search_wall_s": round(t2 - t1, 2), "reference_wall_s": round(t1 - t0, 2),
            })
    table = pd.DataFrame(rows)
    out = Path(__file__).with_name("search_quality.csv")
    table.to_csv(out, index=False, float_format="%.6g")
    with pd.option_context("display.width", 200, "display.max_columns", 20):
        print(table.to_string(index=False, float_format=lambda x: f"{x:.4f}"))
    print(f"wrote {out}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
