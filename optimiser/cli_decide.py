"""Command implementations of ``optimiser pick``, ``optimiser flaps`` and ``optimiser report``.

:func:`add_parsers` registers the three subcommands; each ``run_*`` takes the parsed
arguments, calls the Python API (:mod:`optimiser.decide`, :mod:`optimiser.report.html`) and
returns the exit status. A user error raises :class:`optimiser.decide.DecideError`, which
the command line prints as one line with exit status 2.
"""

from __future__ import annotations

from pathlib import Path


def _choice_options(p, default_method="knee"):
    p.add_argument("--method", default=None, help="how to pick: weights (pseudo-weights, Deb "
                   "2001), knee (highest trade-off, Deb & Gupta 2011) or aspiration (nearest "
                   f"to an aspiration point, Wierzbicki 1980); default {default_method}")
    p.add_argument("--weights", help="preference weights in objective order, e.g. 0.5,0.3,0.2 "
                   "(method weights; optional for aspiration)")
    p.add_argument("--aspiration", help="aspiration point, e.g. "
                   "'trip_fuel_kg=180,engine_power_kW=240,maintenance_index=3'")
    p.add_argument("--limit", action="append", default=[], metavar="COLUMN<=VALUE",
                   help="hard limit applied before choosing, on any numeric column of "
                   "front.csv, e.g. 'engine_power_kW<=260' (repeatable)")


def add_parsers(sub, cmd_pick, cmd_flaps, cmd_report, cmd_compare):
    """Register ``pick``, ``flaps``, ``report`` and ``compare`` on an argparse subparsers
    object."""
    k = sub.add_parser("pick", help="pick a compromise design from a run's front and write its "
                       "sheet, constraint diagram and runners-up")
    k.add_argument("run_dir", metavar="RUN_DIR", help="a finished run folder")
    _choice_options(k)
    k.add_argument("--runners-up", type=int, default=5, dest="runners_up",
                   help="how many runners-up to list (default 5)")
    k.add_argument("--force", action="store_true", help="replace an existing pick-<method>/")
    k.set_defaults(func=cmd_pick)
    f = sub.add_parser("flaps", help="compare the flap options: a front per option under the "
                       "same constraints and budget, with penalties against the best")
    f.add_argument("source", metavar="STUDY.toml|RUN_DIR", help="a study file (runs the "
                   "search first) or a finished run folder")
    f.add_argument("--out", help="run folder for a new search (default: "
                   "results/<study>-<UTC time>)")
    f.add_argument("--seed", type=int, help="random seed for a new search")
    f.add_argument("--pop", type=int, help="population for a new search")
    f.add_argument("--gens", type=int, help="generations for a new search")
    f.add_argument("--force", action="store_true", help="replace an existing flaps/ folder "
                   "(and, for a new search, the run files in --out)")
    f.set_defaults(func=cmd_flaps)
    r = sub.add_parser("report", help="write RUN_DIR/report.html: one self-contained page with "
                       "the requirements, fronts (interactive), chosen design, flap comparison")
    r.add_argument("run_dir", metavar="RUN_DIR", help="a finished run folder")
    _choice_options(r, "the latest pick-*/ of the run, else knee")
    r.add_argument("--force", action="store_true", help="replace an existing report.html")
    r.set_defaults(func=cmd_report)
    c = sub.add_parser("compare", help="overlay the fronts of two or more runs and list what "
                       "changed in their studies")
    c.add_argument("run_dirs", metavar="RUN_DIR", nargs="+", help="finished run folders")
    c.add_argument("--out", help="folder for compare.csv, study_changes.csv and fronts.png/.svg "
                   "(default: results/compare-<UTC time>)")
    c.add_argument("--force", action="store_true", help="replace the files in --out")
    c.set_defaults(func=cmd_compare)


def _choice(run, args, method):
    from .decide import choose, parse_aspiration, parse_limit, parse_weights
    cols = list(run.study.objective_columns())
    limits = [parse_limit(t, list(run.front.columns)) for t in args.limit] if len(run.front) \
        else []
    weights = parse_weights(args.weights, cols) if args.weights else None
    aspiration = parse_aspiration(args.aspiration, cols) if args.aspiration else None
    return choose(run.study, run.front, method, weights=weights, aspiration=aspiration,
                  limits=limits)


def _method(args, default):
    from .decide import METHODS, DecideError
    m = args.method or default
    if m not in METHODS:
        raise DecideError(f"--method: got {m!r}; expected one of {', '.join(METHODS)}")
    return m


def run_pick(args) -> int:
    from .decide import DecideError, runners_up
    from .report.picks import pick_summary, write_pick
    from .runfolder import load_run
    if args.runners_up < 0:
        raise DecideError(f"--runners-up: got {args.runners_up}; expected 0 or more")
    run = load_run(args.run_dir)
    method = _method(args, "knee")
    choice = _choice(run, args, method)
    out = write_pick(run, choice, force=args.force, n_runners=args.runners_up)
    print(pick_summary(run.study, choice, runners_up(run.study, choice, args.runners_up), out,
                       units=getattr(args, "units", None)))
    return 0


def run_flaps(args) -> int:
    from .decide import DecideError
    from .flaps import compare_flaps
    from .report.picks import flaps_summary, write_flaps
    from .runfolder import load_run
    src = Path(args.source)
    if src.is_dir():
        extra = [o for o in ("out", "seed", "pop", "gens") if getattr(args, o) is not None]
        if extra:
            raise DecideError(f"--{extra[0]}: only for a new search from a study file; got a "
                              f"run folder {src}")
        run = load_run(src)
    elif src.is_file():
        from .report.plots import write_plots
        from .runs import optimise
        from .study import load_study
        study = load_study(src)
        result = optimise(study, out=args.out, force=args.force, seed=args.seed,
                          generations=args.gens, population=args.pop, progress=True,
                          plots=write_plots)
        print(result.message)
        run = load_run(result.run_dir)
    else:
        raise DecideError(f"{src}: no such study file or run folder; expected STUDY.toml or "
                          "a folder written by 'optimiser run'")
    table, fronts = compare_flaps(run)
    out = write_flaps(run, table, fronts, force=args.force)
    print(flaps_summary(run.study, table, out, units=getattr(args, "units", None)))
    return 0


def run_report(args) -> int:
    from .decide import DecideError
    from .evaluation import CAUTION
    from .runfolder import load_run, names
    from .report.html import latest_pick_settings, write_report
    run = load_run(args.run_dir)
    target = run.run_dir / names.REPORT
    if target.exists() and not args.force:
        raise DecideError(f"{target}: exists; expected a new file (use --force to replace it)")
    if args.method or args.weights or args.aspiration or args.limit:
        choice = _choice(run, args, _method(args, "knee")) if len(run.front) else None
    else:
        choice = latest_pick_settings(run)
    path = write_report(run, choice=choice)   # in the reader's units (--units), one per page
    print(f"wrote {path} (self-contained; open it in a browser, no network needed)")
    print(CAUTION)
    return 0


def run_compare(args) -> int:
    from .compare import compare_runs, summary_text
    from .report.compare_plots import write_comparison
    from .runfolder.place import timestamped_dir
    cmp = compare_runs(args.run_dirs)
    out = Path(args.out) if args.out else timestamped_dir("compare")
    written = write_comparison(cmp, out, force=args.force)
    print(summary_text(cmp, units=getattr(args, "units", None)))
    print(f"wrote {written}/ (compare.csv, study_changes.csv, fronts.png/.svg)")
    return 0
