"""Command line of campaigns and robustness: ``optimiser sweep`` and ``optimiser robust``.

Only argument handling and printing; the work is in :mod:`optimiser.campaign` and
:mod:`optimiser.robust`. User errors raise an :class:`optimiser.errors.OptimiserError`
(one line, exit status 2).
"""

from __future__ import annotations

import sys
from pathlib import Path

from .errors import CampaignInterrupted, UsageError


def add_sweep_parser(sub):
    s = sub.add_parser("sweep", help="run a campaign: a base study over ranges of requirements, "
                       "one run per combination (on Dask), with a summary and the price of "
                       "each requirement")
    s.add_argument("campaign", metavar="CAMPAIGN.toml", help="campaign file")
    s.add_argument("--out", help="campaign folder (default: results/<campaign>-<UTC time>); "
                   "give an existing campaign folder to resume it: finished runs are kept")
    s.add_argument("--scheduler", help="address of a running Dask scheduler, e.g. "
                   "tcp://10.0.0.5:8786 (its workers must see the campaign folder at the same "
                   "path); default: a local cluster")
    s.add_argument("--workers", type=int, help="workers of the local cluster (default: one "
                   "per core)")
    s.add_argument("--serial", action="store_true", help="run the combinations one after "
                   "another in this process (no Dask)")
    s.add_argument("--no-plots", action="store_true", dest="no_plots",
                   help="do not draw the campaign plots")
    return s


def add_robust_parser(sub):
    r = sub.add_parser("robust", help="Monte Carlo of one design over the study's "
                       "[uncertainty]: probability each constraint is met, trip-fuel spread")
    r.add_argument("study", metavar="STUDY.toml", help="study file with an [uncertainty] table")
    r.add_argument("--design", help="the design as name=value pairs, e.g. "
                   "'wing_loading_N_m2=1100 power_loading_N_kW=75 aspect_ratio=8 flap=fowler'")
    r.add_argument("--front", help="a run's front.csv (or its run folder) to take the design "
                   "from (with --row)")
    r.add_argument("--row", type=int, help="row of --front, counting from 1 (default 1)")
    r.add_argument("--samples", type=int, help="number of samples (default: the study's "
                   "[uncertainty] samples, else 10000)")
    r.add_argument("--seed", type=int, help="random seed (default: the study's "
                   "[uncertainty] seed, else 1)")
    r.add_argument("--mode", default="frozen", help="frozen (default): the design sized once "
                   "at the study's values, then every sample flies that airplane at its maximum "
                   "takeoff mass; resize: every sample sized anew (wing and power loading held)")
    r.add_argument("--out", help="output folder (default: results/<study>-robust-<UTC time>)")
    r.add_argument("--force", action="store_true", help="replace the files in --out")
    return r


def cmd_sweep(args):
    from .campaign import run_campaign, summary_text
    from .campaign_file import load_campaign
    if args.workers is not None and args.workers < 1:
        raise UsageError(f"--workers: got {args.workers}; expected a whole number of at least 1")
    if args.serial and (args.scheduler or args.workers):
        raise UsageError("--serial: given with --scheduler or --workers; expected one way of "
                         "running")
    campaign = load_campaign(args.campaign)
    print(f"campaign {campaign.name}: {len(campaign.combinations)} combinations of "
          + " x ".join(f"{a.key} ({len(a.values)})" for a in campaign.axes))
    try:
        result = run_campaign(campaign, args.out, scheduler=args.scheduler,
                              workers=args.workers, serial=args.serial,
                              progress=lambda s: print(s, flush=True))
    except CampaignInterrupted as exc:
        print(f"\n{exc}; finished runs are kept and the interrupted ones resume from their "
              f"checkpoints; continue with: {_continue_command(args, exc.folder)}",
              file=sys.stderr)
        return 130
    except KeyboardInterrupt:   # before the campaign folder was ready
        from .errors import shell_command
        again = (shell_command("optimiser", "sweep", args.campaign, "--out", args.out)
                 if args.out else shell_command("optimiser", "sweep", args.campaign)
                 + " --out <the campaign folder>")
        print(f"\ninterrupted; finished runs are kept; run: {again} to redo only the rest",
              file=sys.stderr)
        return 130
    if not args.no_plots and (result.summary["status"] == "finished").any():
        from .report.campaign_plots import plot_campaign
        plot_campaign(campaign, result.summary, result.folder)
    print(summary_text(campaign, result.summary, result.price, result.folder,
                       units=getattr(args, "units", None)))
    print(f"wrote {result.folder}/summary.csv, price.csv, summary.txt and plots/ "
          f"({result.seconds:.1f} s)")
    if result.failed:
        print(f"{len(result.failed)} run(s) failed (see error.txt in their run folders); run "
              f"the same command with --out {result.folder} to retry them", file=sys.stderr)
        return 1
    return 0


def _continue_command(args, folder) -> str:
    """The sweep command (quoted for the shell) that continues the campaign in ``folder``,
    run the same way (serial, scheduler, workers, plots) as this one."""
    from .errors import shell_command
    words = ["optimiser", "sweep", args.campaign, "--out", folder]
    if args.serial:
        words.append("--serial")
    if args.scheduler:
        words += ["--scheduler", args.scheduler]
    if args.workers is not None:
        words += ["--workers", args.workers]
    if args.no_plots:
        words.append("--no-plots")
    return shell_command(*words)


def _design_table(study, args):
    import pandas as pd
    from .designs import check_designs, parse_design_option
    from .evaluation import design_columns
    from .runfolder import names
    if args.design is not None and args.front is not None:
        raise UsageError("--design: given with --front; expected one of them")
    if args.design is not None:
        if args.row is not None:
            raise UsageError("--row: given with --design; expected it only with --front")
        return parse_design_option(study, args.design)
    if not args.front:
        raise UsageError("no design given; expected --design '...' or --front "
                         "RUN/front.csv [--row N]")
    path = Path(args.front)
    if path.is_dir():
        path = path / names.FRONT
    if not path.is_file():
        raise UsageError(f"--front: {path}: no such file; expected a run's front.csv")
    try:
        front = pd.read_csv(path)
    except Exception as exc:
        raise UsageError(f"--front: {path}: cannot read it as CSV ({type(exc).__name__})") from None
    row = 1 if args.row is None else args.row
    if not 1 <= row <= len(front):
        raise UsageError(f"--row: got {row}; expected 1 to {len(front)} (the rows of {path})")
    missing = [c for c in design_columns(study) if c not in front.columns]
    if missing:
        raise UsageError(f"--front: {path}: no column {missing[0]!r}; expected a front.csv of "
                         "a run of this kind of study")
    return check_designs(study, front.iloc[[row - 1]][list(design_columns(study))]
                         .reset_index(drop=True), source=str(path))


def cmd_robust(args):
    from .evaluation import CAUTION
    from .report.robust_plots import plot_robustness
    from .robust import MAX_SAMPLES, MODES, mode_text, robustness, summary_text
    from .runfolder.files import utc_now, write_atomic
    from .runfolder.runinfo import json_bytes
    from .study import load_study
    study = load_study(args.study)
    if not (study.uncertainty or {}).get("assumptions"):
        raise UsageError(f"{args.study}: no [uncertainty] table with an uncertain assumption; "
                         "expected e.g. [uncertainty] cd0_clean = { distribution = \"normal\", "
                         "std = 0.05 }")
    if args.mode not in MODES:
        raise UsageError(f"--mode: got {args.mode!r}; expected frozen or resize")
    if args.samples is not None and not 1 <= args.samples <= MAX_SAMPLES:
        raise UsageError(f"--samples: got {args.samples}; expected 1 to {MAX_SAMPLES}")
    if args.seed is not None and not 0 <= args.seed < 2**32:
        raise UsageError(f"--seed: got {args.seed}; expected a whole number from 0 to "
                         f"{2**32 - 1}")
    table = _design_table(study, args)
    out = Path(args.out) if args.out else _default_out(study)
    if out.exists() and not out.is_dir():
        raise UsageError(f"--out {out}: is a file; expected a folder")
    if out.is_dir() and any(out.iterdir()) and not args.force:
        raise UsageError(f"--out {out}: folder exists and is not empty; expected a new or empty "
                         "folder (use --force to replace the robustness files in it)")
    result = robustness(study, table, args.mode, samples=args.samples, seed=args.seed)
    try:
        out.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise UsageError(f"--out {out}: cannot create the folder ({exc.strerror})") from None
    text = summary_text(study, result)
    write_atomic(out / "constraints.csv", result.constraints.to_csv(index=False).encode())
    write_atomic(out / "trip_fuel.csv", result.trip_fuel.to_csv(index=False).encode())
    if result.fuel_on_board is not None:
        write_atomic(out / "fuel_on_board.csv",
                     result.fuel_on_board.to_csv(index=False).encode())
    write_atomic(out / "samples.csv", result.samples.to_csv(index=False).encode())
    write_atomic(out / "design.csv", result.design.to_csv(index=False).encode())
    write_atomic(out / "summary.txt", (text + "\n").encode())
    info = {"study": study.name, "study_file": str(args.study), "study_sha256": study.sha256,
            "written_utc": utc_now(), "samples": result.n_samples, "seed": result.seed,
            "assumptions": result.assumptions, "efficiency_capped_share": result.capped,
            "method": "vectorised Monte Carlo, one sizing call over all samples "
                      "(optimiser.robust)", "caution": CAUTION}
    if result.mode == "frozen":  # a re-sizing run's file stays as it was (no mode field)
        info["mode"] = result.mode
        info["method"] = ("vectorised Monte Carlo of the design sized once and frozen, one "
                          "analysis call over all samples at its maximum takeoff mass "
                          "(optimiser.robust)")
    write_atomic(out / "robust.json", json_bytes(info))
    plot_robustness(study, result, out)
    if result.mode == "resize":  # its files are as before the frozen mode; say it here
        print(mode_text(result.mode))
    print(text)
    extra = "fuel_on_board.csv, " if result.fuel_on_board is not None else ""
    print(f"wrote {out}/constraints.csv, trip_fuel.csv, {extra}samples.csv, summary.txt and "
          "the plots")
    return 0


def _default_out(study):
    from .runfolder.place import timestamped_dir
    return timestamped_dir(f"{study.name}-robust")
