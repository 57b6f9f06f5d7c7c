"""Measured speed and front quality, side by side with their goals.

    python benchmarks/run.py            # everything (several minutes on a 2-core machine)
    python benchmarks/run.py --quick    # fewer repeats and budgets

Prints one table per part and writes them all to benchmarks/results.csv (part, item, value,
unit, goal, met). Every figure is a median of several runs; every comparison is a ratio of
two timings taken in the same run, because the machine is shared and noisy.

Parts
-----
model       designs per second for batches of 1e3, 1e4, 1e5 and 1e6 (in chunks of 1e5),
            against a per-design Python loop over the same function
overhead    wall time of the default study's search against the same NSGA-II configuration
            (one NSGA-II per flap option, same populations and generations) on a zero-cost
            problem of the same shape: the optimiser's own floor (interleaved pairs of runs,
            the median of their ratios)
quality     hypervolume of the search's front relative to a dense enumeration of the same model
            over the same bounds (per flap option), after 10k, 20k and 50k evaluations, beside
            random sampling with the same evaluations
scaling     search time against population size and against evaluations
memory      peak resident memory of the default run and of evaluating 1e6 designs
"""

from __future__ import annotations

import argparse
import itertools
import os
import platform
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

os.environ.setdefault("OMP_NUM_THREADS", "1")
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")

import numpy as np  # noqa: E402

ROOT = Path(__file__).resolve().parent.parent
STUDIES = ["high_strip_utility", "twin_turboprop_commuter", "light_twin_jet"]
ROWS: list[dict] = []


def record(part, item, value, unit, goal="", met=""):
    ROWS.append(dict(part=part, item=item, value=value, unit=unit, goal=goal, met=met))


def median_time(fn, repeats):
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return statistics.median(times)


def load(name):
    from optimiser.study import load_study
    return load_study(ROOT / "problems" / f"{name}.toml")


def random_inputs(study, n, seed=0):
    rng = np.random.default_rng(seed)
    cols = [rng.uniform(v.lower, v.upper, n) for v in study.variables]
    names = study.spec.high_lift_names
    return (*cols, rng.choice([names.index(f) for f in study.flaps], n))


# --------------------------------------------------------------------------- model

def part_model(repeats):
    from optimiser.sizing import size_designs
    print("\nmodel throughput (one core)")
    print(f"{'study':<26}{'designs':>10}{'median s':>10}{'designs/s':>12}{'loop /s':>9}"
          f"{'x loop':>8}")
    for name in STUDIES:
        study = load(name)
        spec = study.spec
        size_designs(spec, *random_inputs(study, 100))
        d = random_inputs(study, 200, seed=1)
        t_loop = median_time(lambda: [size_designs(spec, *(np.atleast_1d(x[i]) for x in d))
                                      for i in range(200)], 3)
        loop_rate = 200 / t_loop
        for n in (1_000, 10_000, 100_000, 1_000_000):
            chunk = min(n, 100_000)
            batches = [random_inputs(study, chunk, seed=k) for k in range(n // chunk)]
            t = median_time(lambda: [size_designs(spec, *b) for b in batches],
                            repeats if n <= 100_000 else max(1, repeats // 2))
            rate = n / t
            ratio = rate / loop_rate
            print(f"{name:<26}{n:>10}{t:>10.4f}{rate:>12.0f}{loop_rate:>9.0f}{ratio:>8.0f}")
            goal = n == 100_000
            record("model", f"{name} designs/s at {n}", round(rate), "1/s",
                   ">= 200000" if goal else "", (rate >= 2e5) if goal else "")
            record("model", f"{name} speed-up vs loop at {n}", round(ratio, 1), "-",
                   ">= 100" if goal else "", (ratio >= 100) if goal else "")


# --------------------------------------------------------------------------- overhead

def _zero_cost_floor(study, seed):
    """The same per-option NSGA-II configuration on a zero-cost problem of the same shape."""
    from pymoo.algorithms.moo.nsga2 import NSGA2
    from pymoo.core.problem import Problem

    from optimiser.search import free_variables, plan_budget
    from optimiser.sizing import active_constraints
    free = free_variables(study)
    n_obj, n_con = len(study.objectives), len(active_constraints(study.spec))
    xl = np.array([v.lower for v in free])
    xu = np.array([v.upper for v in free])
    pop, gens = study.search["population"], study.search["generations"]
    per_option, _ = plan_budget(len(study.flaps), pop, gens)

    class ZeroCost(Problem):
        def __init__(self):
            super().__init__(n_var=len(free), n_obj=n_obj, n_ieq_constr=n_con, xl=xl, xu=xu)

        def _evaluate(self, x, out, *args, **kwargs):
            z = (x - xl) / (xu - xl)
            out["F"] = np.column_stack([z[:, k % z.shape[1]] * (1 + k) + z[:, (k + 1) % z.shape[1]]
                                        for k in range(n_obj)])
            out["G"] = np.column_stack([0.5 - z[:, k % z.shape[1]] - 0.3 * k / n_con
                                        for k in range(n_con)])

    def run():
        algos = []
        for k in range(len(study.flaps)):
            algo = NSGA2(pop_size=per_option, eliminate_duplicates=True)
            algo.setup(ZeroCost(), termination=("n_gen", gens), seed=seed + k)
            algos.append(algo)
        for _ in range(gens):
            for algo in algos:
                p = algo.ask()
                algo.evaluator.eval(algo.problem, p)
                algo.tell(infills=p)
    return run


def part_overhead(repeats):
    import optimiser
    print("\nsearch overhead: default study against the optimiser's own floor")
    study = load(STUDIES[0])

    def ours():
        with tempfile.TemporaryDirectory() as tmp:
            optimiser.optimise(study, out=Path(tmp) / "run", plots=False)

    floor = _zero_cost_floor(study, 1)
    floor()
    ours()
    # interleaved pairs, the order alternating, so that a slow spell of the shared machine
    # falls on both sides of a ratio; the ratio is the median of the pairs' ratios
    pairs = []
    for k in range(repeats):
        first, second = (ours, floor) if k % 2 == 0 else (floor, ours)
        t_first, t_second = median_time(first, 1), median_time(second, 1)
        pairs.append((t_first, t_second) if k % 2 == 0 else (t_second, t_first))
    ratios = [o / f for o, f in pairs]
    t_ours = statistics.median(o for o, _ in pairs)
    t_floor = statistics.median(f for _, f in pairs)
    ratio = statistics.median(ratios)
    print(f"  default run (no plots) {t_ours:.2f} s, zero-cost floor {t_floor:.2f} s "
          f"(medians of {repeats} interleaved pairs)")
    print(f"  ratio {ratio:.2f} (median of the pairs' ratios; they range "
          f"{min(ratios):.2f} to {max(ratios):.2f}) (goal <= 1.3)")
    record("overhead", "default run wall (no plots)", round(t_ours, 3), "s")
    record("overhead", "zero-cost floor wall", round(t_floor, 3), "s")
    record("overhead", "ratio to floor", round(ratio, 3), "-", "<= 1.3", ratio <= 1.3)
    record("overhead", "ratio to floor, lowest pair", round(min(ratios), 3), "-")
    record("overhead", "ratio to floor, highest pair", round(max(ratios), 3), "-")
    print("  where the default run's time goes (one more run, parts timed by wrappers):")
    for part, seconds in _time_parts(ours).items():
        print(f"    {part:<44}{seconds:7.3f} s")
        record("overhead", f"part: {part}", round(seconds, 3), "s")


def _time_parts(run):
    """Seconds spent in the main parts of one run, by wrapping the functions that do them."""
    import collections

    from pymoo.core.algorithm import Algorithm

    import optimiser.loop as loop
    import optimiser.runfolder.archive as archive
    import optimiser.runs as runs
    import optimiser.search as search
    import optimiser.sizing as sizing
    spent = collections.Counter()
    active = [0]  # a call inside another timed call counts for the outer one only
    parts = [(Algorithm, "ask", "pymoo ask (the floor's own work)"),
             (Algorithm, "tell", "pymoo tell (the floor's own work)"),
             (sizing, "size_designs", "sizing (one call per generation)"),
             (archive, "archive_rows", "writing evaluations.csv rows"),
             (loop, "_merge_front", "merging the front"),
             (runs, "save_checkpoint", "checkpoints"),   # the first, at the start
             (loop, "save_checkpoint", "checkpoints"),   # those of the loop
             (search, "reference_scales", "hypervolume reference grid (start)"),
             (runs, "finish", "front.csv and run.json (end)")]
    saved = []
    for owner, name, label in parts:
        inner = getattr(owner, name)
        saved.append((owner, name, inner))

        def wrapped(*a, _inner=inner, _label=label, **k):
            if active[0]:
                return _inner(*a, **k)
            active[0] += 1
            t0 = time.perf_counter()
            try:
                return _inner(*a, **k)
            finally:
                spent[_label] += time.perf_counter() - t0
                active[0] -= 1
        setattr(owner, name, wrapped)
    try:
        t0 = time.perf_counter()
        run()
        total = time.perf_counter() - t0
    finally:
        for owner, name, inner in saved:
            setattr(owner, name, inner)
    out = {label: spent[label] for _, _, label in parts}  # a label listed twice counts once
    out["the rest"] = total - sum(out.values())
    out["total"] = total
    return out


# --------------------------------------------------------------------------- quality

def dense_reference_front(study, points):
    from optimiser.evaluation import size_frame
    from optimiser.search import (design_arrays, flap_indices, free_variables,
                                  nondominated_mask, objectives_and_constraints)
    axes = [np.linspace(v.lower, v.upper, points) for v in free_variables(study)]
    X = np.array(list(itertools.product(*axes)))
    fronts = []
    for idx in flap_indices(study):
        for a in range(0, len(X), 100_000):
            ws, load_, ar = design_arrays(study, X[a:a + 100_000])
            frame = size_frame(study, ws, load_, ar, np.full(len(ws), idx))
            F, _ = objectives_and_constraints(study, frame)
            F = F[frame["feasible"].to_numpy(bool)]
            if len(F):
                fronts.append(F[nondominated_mask(F)])
    F = np.vstack(fronts)
    return F[nondominated_mask(F)]


def random_front(study, n, seed):
    from optimiser.evaluation import size_frame
    from optimiser.search import nondominated_mask, objectives_and_constraints
    frame = size_frame(study, *random_inputs(study, n, seed))
    F, _ = objectives_and_constraints(study, frame)
    F = F[frame["feasible"].to_numpy(bool)]
    return F[nondominated_mask(F)]


def part_quality(budgets, grid):
    import optimiser
    from optimiser.search import hypervolume, reference_scales
    print(f"\nfront quality: hypervolume / dense enumeration ({grid} points per variable "
          "per flap option)")
    print(f"{'study':<26}{'evaluations':>12}{'search':>9}{'random':>9}")
    for name in STUDIES:
        study = load(name)
        scales = reference_scales(study)
        hv_ref = hypervolume(dense_reference_front(study, grid), scales)
        default = study.search["population"] * study.search["generations"]
        for n in sorted(set(budgets) | {default}):
            gens = max(1, round(n / study.search["population"]))
            with tempfile.TemporaryDirectory() as tmp:
                res = optimiser.optimise(study, out=Path(tmp) / "run", generations=gens,
                                         plots=False)
            F = res.front[list(study.objective_columns())].to_numpy(float)
            rel = hypervolume(F, scales) / hv_ref
            rnd = hypervolume(random_front(study, res.n_evaluations, 2024), scales) / hv_ref
            tag = " (default)" if n == default else ""
            print(f"{name:<26}{res.n_evaluations:>12}{rel:>9.4f}{rnd:>9.4f}{tag}")
            is_default = n == default
            record("quality", f"{name} search at {res.n_evaluations}{tag}", round(rel, 4), "-",
                   ">= 0.995" if is_default else "", (rel >= 0.995) if is_default else "")
            record("quality", f"{name} random at {res.n_evaluations}", round(rnd, 4), "-")


# --------------------------------------------------------------------------- scaling

def part_scaling(repeats):
    import optimiser
    print("\nscaling of the default study's search (no plots)")
    study = load(STUDIES[0])
    print(f"{'population':>11}{'generations':>12}{'evaluations':>12}{'median s':>10}{'ms/eval':>9}")
    for pop, gens in ((60, 50), (120, 50), (240, 50), (480, 50), (120, 25), (120, 100),
                      (120, 200)):
        def one():
            with tempfile.TemporaryDirectory() as tmp:
                optimiser.optimise(study, out=Path(tmp) / "run", population=pop,
                                   generations=gens, plots=False)
        t = median_time(one, repeats)
        n = pop * gens
        print(f"{pop:>11}{gens:>12}{n:>12}{t:>10.2f}{1e3 * t / n:>9.3f}")
        record("scaling", f"pop {pop} x gens {gens}", round(t, 3), "s")


# --------------------------------------------------------------------------- memory

_MEM_SNIPPETS = {
    "default run (no plots)": (
        "import tempfile, optimiser; from optimiser.study import bundled_study_path, load_study;"
        "s = load_study(bundled_study_path());"
        "optimiser.optimise(s, out=tempfile.mkdtemp() + '/run', plots=False)"),
    "evaluate 1e6 designs (chunks of 1e5)": (
        "import numpy as np; from optimiser.study import bundled_study_path, load_study;"
        "from optimiser.sizing import size_designs; s = load_study(bundled_study_path());"
        "rng = np.random.default_rng(0); n = 100000;"
        "idx = [s.spec.high_lift_names.index(f) for f in s.flaps];"
        "[size_designs(s.spec, *[rng.uniform(v.lower, v.upper, n) for v in s.variables],"
        " rng.choice(idx, n)) for _ in range(10)]"),
}


def part_memory():
    print("\npeak resident memory")
    for item, code in _MEM_SNIPPETS.items():
        probe = ("import resource, runpy, sys; exec(sys.argv[1]);"
                 "print(resource.getrusage(resource.RUSAGE_SELF).ru_maxrss)")
        out = subprocess.run([sys.executable, "-c", probe, code], capture_output=True,
                             text=True, check=True, cwd=ROOT)
        mib = int(out.stdout.strip().splitlines()[-1]) / 1024.0
        print(f"  {item}: {mib:.0f} MiB")
        record("memory", item, round(mib, 1), "MiB")


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="fewer repeats and budgets")
    ap.add_argument("--parts", default="model,overhead,quality,scaling,memory")
    ap.add_argument("--studies", default=",".join(STUDIES),
                    help="demo studies for the model and quality parts")
    args = ap.parse_args()
    repeats = 3 if args.quick else 5
    STUDIES[:] = args.studies.split(",")
    parts = args.parts.split(",")
    print(f"machine: {platform.machine()}, {os.cpu_count()} cores, python "
          f"{platform.python_version()}, numpy {np.__version__}; {time.strftime('%Y-%m-%d')}")
    if "memory" in parts:  # first: a child process inherits its parent's peak memory figure
        part_memory()
    if "model" in parts:
        part_model(repeats)
    if "overhead" in parts:
        part_overhead(repeats + 4)
    if "quality" in parts:
        part_quality((10_000, 20_000) if args.quick else (10_000, 20_000, 50_000),
                     40 if args.quick else 60)
    if "scaling" in parts:
        part_scaling(1 if args.quick else 3)
    import csv
    out = ROOT / "benchmarks" / "results.csv"
    kept = []
    if out.exists():  # keep the rows of the parts, and of the studies, not run this time
        def measured_now(r):
            if r["part"] not in parts:
                return False
            if r["part"] in ("model", "quality"):  # per-study rows
                return any(r["item"].startswith(name + " ") for name in STUDIES)
            return True
        with open(out, newline="") as fh:
            kept = [r for r in csv.DictReader(fh) if not measured_now(r)]
    ROWS[:0] = kept
    with open(out, "w", newline="") as fh:
        w = csv.DictWriter(fh, fieldnames=["part", "item", "value", "unit", "goal", "met"])
        w.writeheader()
        w.writerows(ROWS)
    print(f"\nwrote {out}")


if __name__ == "__main__":
    main()
