"""Speed-up of a campaign on a Dask LocalCluster of 2 workers against the same campaign run
serially, measured in one session (wall clock; the ratio is what matters on a shared machine).

    python benchmarks/campaign_speedup.py [--pop 240] [--gens 100] [--workers 2]

Prints a table and writes benchmarks/campaign_speedup.csv. The Dask time includes starting
and stopping the local cluster; the table also shows it without that start-up. The default
budget per run is the default study's own (240 x 100); with much shorter runs the cluster's
start-up and per-run costs take a larger share (120 x 40: x1.02, x1.21 without start-up,
measured 2026-12-02).
"""

from __future__ import annotations

import argparse
import os
import shutil
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
CAMPAIGN = """name = "speedup"
base_study = "{base}"
[budget]
population = {pop}
generations = {gens}
seed = 1
[[axis]]
key = "departure.field_length"
values = ["600 m", "750 m", "900 m"]
tighter = "smaller"
[[axis]]
key = "mission.cruise_speed"
values = ["60 m/s", "66 m/s"]
tighter = "larger"
"""


def main(argv=None):
    sys.path.insert(0, str(ROOT))
    from optimiser.campaign import _dask_client, run_campaign
    from optimiser.campaign_file import parse_campaign
    from optimiser.evaluation import CAUTION
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--pop", type=int, default=240)
    ap.add_argument("--gens", type=int, default=100)
    ap.add_argument("--workers", type=int, default=2)
    args = ap.parse_args(argv)
    base = (ROOT / "problems" / "high_strip_utility.toml").as_posix()
    text = CAMPAIGN.format(base=base, pop=args.pop, gens=args.gens)
    campaign = parse_campaign(text, str(ROOT / "benchmarks" / "speedup.campaign.toml"))
    load = os.getloadavg()
    tmp = Path(tempfile.mkdtemp(prefix="campaign-speedup-"))
    rows = []
    try:
        t0 = time.perf_counter()
        run_campaign(campaign, tmp / "serial", serial=True)
        t_serial = time.perf_counter() - t0

        t0 = time.perf_counter()
        client, cluster = _dask_client(workers=args.workers)
        t_start = time.perf_counter() - t0
        client.close()
        cluster.close()
        t0 = time.perf_counter()
        run_campaign(campaign, tmp / "dask", workers=args.workers)
        t_dask = time.perf_counter() - t0
    finally:
        shutil.rmtree(tmp, ignore_errors=True)
    n = len(campaign.combinations)
    rows.append(("serial (this process)", 1, t_serial, 1.0, n / t_serial))
    rows.append((f"Dask LocalCluster, {args.workers} workers", args.workers, t_dask,
                 t_serial / t_dask, n / t_dask))
    rows.append((f"  the same without cluster start-up ({t_start:.1f} s)", args.workers,
                 t_dask - t_start, t_serial / (t_dask - t_start), n / (t_dask - t_start)))
    print(f"campaign of {n} runs (population {args.pop}, {args.gens} generations), "
          f"{os.cpu_count()} cores; load average before {load[0]:.2f}, after "
          f"{os.getloadavg()[0]:.2f} (other work on the machine shares the cores)")
    print(f"{'mode':<46}{'workers':>8}{'wall s':>9}{'speed-up':>10}{'runs/s':>9}")
    for mode, w, t, s, r in rows:
        print(f"{mode:<46}{w:>8}{t:>9.2f}{s:>10.2f}{r:>9.3f}")
    import pandas as pd
    pd.DataFrame(rows, columns=["mode", "workers", "wall_s", "speed_up", "runs_per_s"]).to_csv(
        ROOT / "benchmarks" / "campaign_speedup.csv", index=False, float_format="%.4g")
    print(f"wrote {ROOT / 'benchmarks' / 'campaign_speedup.csv'}")
    print(CAUTION)


if __name__ == "__main__":
    main()
