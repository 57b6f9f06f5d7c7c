"""What a model change did to the demo studies' fronts and flap comparisons.

Runs each bundled demo study with its own budget and seed under one or more source trees of
this project (``--tree PATH``, the current checkout by default; e.g. a checkout of an older
commit made with ``git worktree add /tmp/old <commit>``), each in its own subprocess, and
prints one table: per study and tree, the front's best trip fuel and smallest engine, the
knee design (cruise L/D, empty-mass fraction, wing loading, aspect ratio), and the flap
comparison (the trip-fuel penalty at equal engine size of the worst feasible option against
the reference, and the wing loading of each option's lowest-fuel design).

    python benchmarks/model_change.py --tree /tmp/old --tree .
"""

from __future__ import annotations

import argparse
import json
import os
import subprocess
import sys
import tempfile
from pathlib import Path

REPO = Path(__file__).resolve().parents[1]
STUDIES = ["high_strip_utility", "twin_turboprop_commuter", "light_twin_jet"]

WORKER = r"""
import json, sys, warnings
sys.path.insert(0, sys.argv[1])
warnings.simplefilter("ignore")
import numpy as np
import optimiser
from optimiser.study import load_study
from optimiser.flaps import compare_flaps
from optimiser.decide import choose
from optimiser.runfolder import load_run
study = load_study(sys.argv[2])
res = optimiser.optimise(study, out=sys.argv[3], plots=False)
run = load_run(sys.argv[3])
front = run.front
out = {"front": len(front)}
if len(front):
    eng = study.engine_size_column
    knee = choose(study, front, "knee").design
    ld = [c for c in front.columns if c in ("lift_to_drag_cruise", "cruise_lift_to_drag",
                                             "l_over_d_cruise", "ld_cruise")]
    out.update(best_fuel=float(front["trip_fuel_kg"].min()), best_engine=float(front[eng].min()),
               engine_unit=eng, knee_flap=str(knee["flap"]), knee_ws=float(knee["wing_loading_N_m2"]),
               knee_ar=float(knee["aspect_ratio"]),
               knee_empty=float(knee["empty_mass_fraction"]),
               knee_ld=float(knee[ld[0]]) if ld else None,
               knee_cd0=float(knee["cd0"]) if "cd0" in knee else None)
    table, fronts = compare_flaps(run)
    ok = table[table["feasible_found"] & ~table["reference_option"]]
    pen = ok["extra_trip_fuel_at_equal_engine_kg"].to_numpy(float)
    ref = table[table["reference_option"]].iloc[0]
    out["reference"] = str(ref["flap"])
    out["worst_penalty_kg"] = float(np.nanmax(pen)) if len(pen) and np.isfinite(pen).any() else None
    out["worst_penalty_flap"] = str(ok.iloc[int(np.nanargmax(pen))]["flap"]) if out["worst_penalty_kg"] is not None else ""
    out["ref_best_fuel"] = float(fronts[out["reference"]]["trip_fuel_kg"].min())
    out["lowest_fuel_ws"] = {f: float(fr.loc[fr["trip_fuel_kg"].idxmin(), "wing_loading_N_m2"])
                             for f, fr in fronts.items() if len(fr)}
print(json.dumps(out))
"""


def run_tree(tree: Path, study: str) -> dict:
    with tempfile.TemporaryDirectory() as tmp:
        done = subprocess.run([sys.executable, "-c", WORKER, str(tree),
                               str(tree / "problems" / f"{study}.toml"), str(Path(tmp) / "run")],
                              capture_output=True, text=True,
                              env=dict(os.environ, MPLBACKEND="Agg"))
    if done.returncode != 0:
        raise SystemExit(f"{tree} {study} failed:\n{done.stderr[-3000:]}")
    return json.loads(done.stdout.strip().splitlines()[-1])


def main(argv=None):
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--tree", action="append", help="a source tree of this project (repeatable)")
    args = p.parse_args(argv)
    trees = [Path(t).resolve() for t in (args.tree or [REPO])]
    print("| study | tree | front | best trip fuel [kg] | smallest engine | knee: flap, W/S "
          "[N/m²], AR | knee cruise L/D | knee empty fraction | knee CD0 | worst flap penalty "
          "at equal engine [kg] (% of reference's best fuel) | W/S of each option's "
          "lowest-fuel design [N/m²] |")
    print("|---|---|---|---|---|---|---|---|---|---|---|")
    for study in STUDIES:
        for tree in trees:
            r = run_tree(tree, study)
            if not r["front"]:
                print(f"| {study} | {tree.name} | 0 | | | | | | | | |")
                continue
            pen = r["worst_penalty_kg"]
            pen_text = "" if pen is None else \
                f"{pen:+.1f} ({100 * pen / r['ref_best_fuel']:+.1f} %, {r['worst_penalty_flap']} vs {r['reference']})"
            ws = ", ".join(f"{f} {v:.0f}" for f, v in r["lowest_fuel_ws"].items())
            ld = "" if r["knee_ld"] is None else f"{r['knee_ld']:.1f}"
            cd0 = "" if r["knee_cd0"] is None else f"{r['knee_cd0']:.4f}"
            print(f"| {study} | {tree.name} | {r['front']} | {r['best_fuel']:.1f} | "
                  f"{r['best_engine']:.1f} ({r['engine_unit']}) | {r['knee_flap']}, "
                  f"{r['knee_ws']:.0f}, {r['knee_ar']:.2f} | {ld} | {r['knee_empty']:.3f} | "
                  f"{cd0} | {pen_text} | {ws} |", flush=True)


if __name__ == "__main__":
    main()
