"""Command line: ``optimiser evaluate|check|run|resume ...``. It only calls the Python API.

A user error prints one line on stderr and exits with status 2 (a traceback only with
``--debug``); nothing already saved is overwritten without ``--force``.
"""

from __future__ import annotations

import argparse
import os
import sys
from pathlib import Path

from .errors import UsageError, OptimiserError, RunInterrupted
from .runstate import STALL_TOLERANCE

EXIT_USAGE = 2
EXIT_INTERRUPTED = 130


def _study(path):
    from .study import bundled_study_path, load_study
    return load_study(path if path else bundled_study_path())


def _output_path(text, force: bool) -> Path | None:
    """--out as a path (None for standard output, '-'); refused before any work when it
    exists (without --force) or its folder does not."""
    if text is None or text == "-":
        return None
    path = Path(text)
    if path.exists() and not force:
        raise UsageError(f"{path}: exists; expected a new file (use --force to replace it)")
    parent = path.parent if str(path.parent) else Path(".")
    if not parent.is_dir():
        raise UsageError(f"{path}: folder {parent} does not exist")
    return path


def _write_csv_stream(frames, path: Path) -> tuple:
    """Write the frames as one CSV file: to a temporary file beside ``path``, renamed onto
    it only when every chunk is written (a bad row anywhere, an error or Ctrl-C leaves
    nothing, and an existing file untouched). Returns what :func:`_summary` needs."""
    from .evaluation import evaluated_csv_pieces
    tmp = path.parent / f".{path.name}.tmp-{os.getpid()}"
    try:
        with open(tmp, "w", encoding="utf-8", newline="") as fh:
            seen = _SummaryCounts()
            for frame in frames:
                fh.writelines(evaluated_csv_pieces(frame, header=seen.n_designs == 0))
                seen.add(frame)
        os.replace(tmp, path)
    except OSError as exc:
        tmp.unlink(missing_ok=True)
        raise UsageError(f"{path}: cannot write ({exc.strerror})") from None
    except BaseException:
        tmp.unlink(missing_ok=True)
        raise
    return seen


class _SummaryCounts:
    """What the printed summary needs of a stream of evaluated chunks: the first rows and
    the counts (nothing else of the table is kept)."""

    def __init__(self):
        self.head, self.n_designs, self.n_feasible = None, 0, 0

    def add(self, frame):
        import pandas as pd
        if self.head is None or len(self.head) < SUMMARY_ROWS:
            part = frame.head(SUMMARY_ROWS).copy()
            self.head = part if self.head is None else \
                pd.concat([self.head, part]).head(SUMMARY_ROWS)
        self.n_designs += len(frame)
        self.n_feasible += int(frame["feasible"].sum())


SUMMARY_ROWS = 40
"""Designs listed in the printed summary of ``optimiser evaluate``."""


def _summary(study, seen: _SummaryCounts, units: str | None = None) -> str:
    """The terminal table of ``evaluate``: columns named as in the output file (SI), or by
    their plain names with the US customary unit (``units="us"``; the file stays SI)."""
    from .display_units import SI, column_display, heading, resolve
    system = resolve(units)
    size_col = study.engine_size_column
    from .evaluation import override_columns
    cols = [("wing_loading_N_m2", ".0f"), (study.loading_column, ".4g"), ("aspect_ratio", ".2f"),
            *((c, ".0f") for c in override_columns(study)),   # the cruise altitude, if searched
            ("takeoff_mass_kg", ".0f"), ("trip_fuel_kg", ".1f"), (size_col, ".1f"),
            ("maintenance_index", ".2f")]
    head = seen.head
    if system != SI:   # shown columns: the plain name and unit, the numbers converted
        head = head.copy()
        for c, _ in cols:
            head[heading(c, system)] = column_display(c, head[c].to_numpy(float), system)[0]
        cols = [(heading(c, system), ".2f" if c == "wing_loading_N_m2" else fmt)
                for c, fmt in cols]
    lines = [f"study {study.name}: {seen.n_designs} design(s), {seen.n_feasible} feasible",
             f"{'flap':<22}" + "".join(f"{c:>{len(c) + 2}}" for c, _ in cols) + "  verdict"]
    for _, r in head.iterrows():
        verdict = "feasible (closest: " + r["limiting_constraint"] + ")" if r["feasible"] else \
            "fails " + r["most_violated"] + f" ({r['margin_' + r['most_violated']]:+.1%})"
        if not r["within_bounds"]:
            verdict += " [outside bounds: " + r["outside_bounds"] + "]"
        lines.append(f"{r['flap']:<22}" + "".join(f"{r[c]:>{len(c) + 2}{fmt}}" for c, fmt in cols)
                     + f"  {verdict}")
    if seen.n_designs > SUMMARY_ROWS:
        lines.append(f"... {seen.n_designs - SUMMARY_ROWS} more rows in the output file")
    return "\n".join(lines)


def _check_evaluate_memory(study, rows_at_once: int, args):
    """Refuse a designs table whose sizing (``rows_at_once`` designs in one call) the available
    memory cannot hold, before anything is written."""
    from .evaluation import design_bytes_estimate, memory_shortfall
    short = memory_shortfall(rows_at_once * design_bytes_estimate(study))
    if short is not None:
        what = f"--designs {args.designs}" if args.designs is not None else "the designs"
        raise UsageError(f"{what}: sizing {rows_at_once} designs at once {short} "
                         f"({design_bytes_estimate(study)} bytes a design, with head-room); "
                         "expected a table that fits in memory (split it into smaller files)")


def cmd_evaluate(args):
    """Size the designs a chunk at a time (:data:`~optimiser.evaluation.EVALUATE_CHUNK_ROWS`):
    memory stays bounded for a table of millions of rows. ``--out -`` writes the CSV to
    standard output (the summary then goes to standard error) after a first pass has
    checked every row, so a bad row still leaves nothing written."""
    from .designs import iter_designs_csv, parse_design_option
    from .evaluation import (CAUTION, evaluate_chunk_rows, evaluate_chunks,
                             evaluated_csv_pieces)
    study = _study(args.study)
    out = _output_path(args.out, args.force)
    chunk_rows = evaluate_chunk_rows(study)   # fewer where memory is short
    if args.design is not None and args.designs is not None:
        raise UsageError(f"--design and --designs: got both ({args.design!r} and "
                        f"{args.designs!r}); expected one of them")
    if args.design is not None:
        design = parse_design_option(study, args.design)

        def tables():
            return iter([design])
    else:
        designs = args.designs
        if designs is None:
            candidate = Path(study.path).with_name(Path(study.path).stem + "_designs.csv")
            if not candidate.exists():
                raise UsageError(f"no designs given; expected --designs FILE.csv or --design "
                                 f"'...' (no sample file {candidate} beside the study)")
            designs = candidate

        def tables():
            return iter_designs_csv(study, designs, chunk_rows)
    # every chunk is sized in one call: the memory must hold a whole chunk
    _check_evaluate_memory(study, 1 if args.design is not None else chunk_rows, args)
    if args.out == "-":
        for _ in tables():   # every row checked before the first byte is written
            pass
        seen = _SummaryCounts()
        for frame in evaluate_chunks(study, tables()):
            sys.stdout.writelines(evaluated_csv_pieces(frame, header=seen.n_designs == 0))
            seen.add(frame)
        sys.stdout.flush()
        print(_summary(study, seen, getattr(args, "units", None)), file=sys.stderr)
        print(CAUTION, file=sys.stderr)
        return 0
    if out is None:
        seen = _SummaryCounts()
        for frame in evaluate_chunks(study, tables()):
            seen.add(frame)
        print(_summary(study, seen, getattr(args, "units", None)))
    else:
        seen = _write_csv_stream(evaluate_chunks(study, tables()), out)
        print(_summary(study, seen, getattr(args, "units", None)))
        print(f"wrote {out}")
    print(CAUTION)
    return 0


def cmd_check(args):
    """Summarise a study: its requirements as given and as used, in SI or, with ``--units
    us``, in US customary units (the study's own text is shown as it is either way)."""
    from .display_units import SI, column_display, current_system, heading, to_display
    from .evaluation import CAUTION
    from .preflight import summary_lines
    from .study_table import ORIGIN_GIVEN, certification_entries, resolved_entries, shown_text
    study = _study(args.study)
    sp = study.spec
    us = current_system() != SI
    print(f"study {study.name}: {study.description}")
    print(f"  {sp.propulsion.engine_count} x {sp.propulsion.family}, certification "
          f"{sp.certification.basis}; flaps: {', '.join(study.flaps)}")
    for v in study.variables:
        (lower, upper), _ = column_display(v.column, (v.lower, v.upper))
        print(f"  {heading(v.column) if us else v.column}: {lower:g} to {upper:g}"
              + (" (fixed)" if v.fixed else ""))
    print(f"  objectives: {', '.join(study.objectives)}")
    for name, reason in sp.requirements.skip_checks:
        print(f"  check {name} switched off: {reason}")
    if sp.requirements.max_span_m is not None:
        span, unit = to_display(sp.requirements.max_span_m, "m")
        print(f"  span limit: {span:g} {unit} (constraint span)")
    if sp.requirements.margins:
        print("  required design margins: " + ", ".join(
            f"{name} {m:.1%}" for name, m in sp.requirements.margins))
    entries = resolved_entries(study)
    system_name = "US customary" if us else "SI"
    print(f"as given (the study's units -> {system_name}):")
    for e in entries:
        if e.origin == ORIGIN_GIVEN:
            shown = shown_text(e)
            same = e.given.strip('"') == shown
            print(f"  [{e.section}] {e.key} = {e.given}" + ("" if same else f" -> {shown}"))
    print(f"defaults applied ({system_name}):")
    for e in entries:
        if e.origin != ORIGIN_GIVEN:
            print(f"  [{e.section}] {e.key} = {shown_text(e)}  ({e.origin})")
    print(f"certification {sp.certification.basis} sets:")
    for name, value, unit, meaning in certification_entries(study):
        if isinstance(value, float) and unit:
            value, unit = to_display(value, unit)
        shown = f"{value:g}" if isinstance(value, float) else str(value)
        print(f"  {meaning}: {shown}{' ' + unit if unit else ''}")
    lines = summary_lines(study)
    for line in lines:
        print(line)
    warned = sum(line.startswith("warning:") for line in lines)
    print("study is valid" + (f"; {warned} warning{'s' if warned > 1 else ''} above: a run "
                              "is likely to find nothing feasible" if warned else ""))
    print(CAUTION)
    return 0


_DURATION_UNITS = {"h": 3600, "hr": 3600, "hrs": 3600, "hour": 3600, "hours": 3600,
                   "m": 60, "min": 60, "mins": 60, "minute": 60, "minutes": 60,
                   "s": 1, "sec": 1, "secs": 1, "second": 1, "seconds": 1}
_DURATION_PART = r"(\d+(?:\.\d+)?)\s*(" + "|".join(sorted(_DURATION_UNITS, key=len, reverse=True)) \
    + r")(?![a-z])"


def _duration(text):
    """Seconds from '90', '90s', '5min', '5 min', '45m', '8h', '1h30m' or '1 h 30 min' (--time)."""
    import re
    t = text.strip().lower()
    if re.fullmatch(r"\d+(\.\d+)?", t):
        seconds = float(t)
    else:
        parts = re.findall(_DURATION_PART, t)
        if not parts or re.sub(_DURATION_PART, "", t).strip(" ,"):
            raise UsageError(f"--time: got {text!r}; expected a duration such as '90s', '5min', "
                            "'5 min', '45m', '8h' or '1h30m'")
        seconds = sum(float(n) * _DURATION_UNITS[u] for n, u in parts)
    if not seconds > 0:
        raise UsageError(f"--time: got {text!r}; expected a duration greater than zero")
    return seconds


def _rejoin_split_duration(args):
    """``--time 5 min`` unquoted leaves 'min' as the study argument: read it as '5 min'."""
    import re
    if (args.time is not None and re.fullmatch(r"\s*\d+(\.\d+)?\s*", args.time)
            and args.study is not None and args.study.strip().lower() in _DURATION_UNITS
            and not Path(args.study).exists()):
        args.time, args.study = f"{args.time.strip()} {args.study.strip()}", None


def _cluster_options(p):
    p.add_argument("--workers", type=int, help="size each generation on a local Dask cluster "
                   "of this many worker processes (same result as without; pays off for large "
                   "populations and sampled constraints)")
    p.add_argument("--scheduler", help="size each generation on the workers of a running Dask "
                   "scheduler at this address, e.g. tcp://10.0.0.5:8786")


def _cluster_line(result) -> str:
    """One line saying how much of the sizing went to Dask workers ('' without a cluster)."""
    c = getattr(result, "cluster", None)
    if not c:
        return ""
    rows = c["rows_on_workers"] + c["rows_here"]
    return (f"Dask: {c['workers']} workers sized {c['rows_on_workers']} of {rows} designs; "
            f"the rest (batches under {_min_rows()} designs) were sized here\n")


def _min_rows():
    from .cluster import MIN_ROWS_PER_TASK
    return MIN_ROWS_PER_TASK


def cmd_run(args):
    from .report.plots import write_plots
    from .runs import optimise, summary_text
    _rejoin_split_duration(args)
    study = _study(args.study)
    time_s = _duration(args.time) if args.time is not None else None
    result = optimise(study, out=args.out, force=args.force, seed=args.seed,
                      generations=args.gens, population=args.pop, evaluations=args.evals,
                      time_budget_s=time_s, stall_generations=args.stall_gens,
                      checkpoint_every=args.checkpoint_every, progress=True, plots=write_plots,
                      stall_tolerance=args.stall_tol, workers=args.workers,
                      scheduler=args.scheduler, reliability=args.reliability)
    print(_cluster_line(result) + summary_text(study, result, units=getattr(args, "units", None)))
    return 0


def cmd_resume(args):
    from .report.plots import write_plots
    from .runs import load_checkpoint, resume, summary_text
    from .study import parse_study
    result = resume(args.run_dir, progress=True, plots=write_plots, workers=args.workers,
                    scheduler=args.scheduler)
    state = load_checkpoint(args.run_dir)  # the study as run, whatever study.toml holds now
    study = parse_study(state.study_text, state.study_path)
    print(_cluster_line(result) + summary_text(study, result, units=getattr(args, "units", None)))
    return 0


def cmd_pick(args):
    from .cli_decide import run_pick
    return run_pick(args)


def cmd_flaps(args):
    from .cli_decide import run_flaps
    return run_flaps(args)


def cmd_report(args):
    from .cli_decide import run_report
    return run_report(args)


def cmd_compare(args):
    from .cli_decide import run_compare
    return run_compare(args)


def cmd_sweep(args):
    from .cli_campaign import cmd_sweep as run_sweep
    return run_sweep(args)


def cmd_robust(args):
    from .cli_campaign import cmd_robust as run_robust
    return run_robust(args)


def cmd_studies(args):
    from .bundled import copy_bundled, describe_bundled
    if args.copy is None:
        if args.folder is not None:
            raise UsageError(f"studies: got folder {args.folder!r} without --copy; expected "
                            "'optimiser studies --copy NAME [DIR]'")
        rows = describe_bundled()
        width = max(len(name) for name, _, _ in rows)
        for name, kind, description in rows:
            print(f"{name:<{width}}  {kind:<8}  {description}")
        print("start your own: optimiser studies --copy NAME [DIR]")
        return 0
    for path in copy_bundled(args.copy, args.folder or "."):
        print(f"wrote {path}")
    return 0


def build_parser() -> argparse.ArgumentParser:
    from . import __version__
    p = argparse.ArgumentParser(prog="optimiser", description=(
        "Size aircraft completely from wing loading, power loading or thrust-to-weight, "
        "aspect ratio and flap type, and search for the best trade-offs."))
    p.add_argument("--version", action="version", version=f"optimiser {__version__}")
    p.add_argument("--debug", action="store_true", help="show a traceback on errors")
    p.add_argument("--units", metavar="{si,us}", help="units of what you read (summaries, "
                   "sheets, figures): si (default) or us customary; CSV files stay SI; "
                   "default: the OPTIMISER_UNITS environment variable, else si")
    sub = p.add_subparsers(dest="command", required=True, metavar="COMMAND")
    e = sub.add_parser("evaluate", help="size given designs and write every number and margin")
    e.add_argument("study", nargs="?", help="study file (default: the bundled default study)")
    e.add_argument("--designs", help="CSV with wing_loading_N_m2, power_loading_N_kW or "
                   "thrust_to_weight, aspect_ratio, flap")
    e.add_argument("--design", help="one design as name=value pairs, e.g. "
                   "'wing_loading_N_m2=1100 power_loading_N_kW=75 aspect_ratio=8 flap=fowler'")
    e.add_argument("--out", help="CSV file to write (never replaced without --force); '-' "
                   "writes it to standard output (and the summary to standard error)")
    e.add_argument("--force", action="store_true", help="replace an existing output file")
    e.set_defaults(func=cmd_evaluate)
    c = sub.add_parser("check", help="validate a study file and summarise it")
    c.add_argument("study", nargs="?", help="study file (default: the bundled default study)")
    c.set_defaults(func=cmd_check)
    r = sub.add_parser("run", help="search for the Pareto front of the study's objectives "
                       "(NSGA-II, one per flap option) and write a run folder")
    r.add_argument("study", nargs="?", help="study file (default: the bundled default study)")
    r.add_argument("--out", help="run folder (default: results/<study>-<UTC time>); an "
                   "existing non-empty folder needs --force")
    r.add_argument("--force", action="store_true", help="replace the run files in --out")
    r.add_argument("--seed", type=int, help="random seed (default: the study's [search] seed)")
    r.add_argument("--pop", type=int, help="population (default: the study's [search])")
    r.add_argument("--gens", type=int, help="generations (default: the study's [search])")
    r.add_argument("--evals", type=int, help="stop after this many evaluations")
    r.add_argument("--time", help="wall-clock budget: seconds, or a number with a unit (s, min, h), "
                   "e.g. 90s, 5min, '5 min' (quoted), 45m, 8h, 1h30m")
    r.add_argument("--stall-gens", type=int, dest="stall_gens", help="stop when the front's "
                   "hypervolume has not grown by more than --stall-tol for this many "
                   "generations")
    r.add_argument("--stall-tol", type=float, dest="stall_tol", default=None,
                   help="relative hypervolume growth that counts as progress for --stall-gens "
                   f"(default {STALL_TOLERANCE:g})")
    r.add_argument("--checkpoint-every", type=int, default=None, dest="checkpoint_every",
                   help="generations between checkpoints (default: one every 30 s of "
                        "running)")
    r.add_argument("--reliability", type=float, help="keep only designs that meet each "
                   "constraint with at least this probability under the study's "
                   "[uncertainty] (e.g. 0.95; default: the study's [search] reliability)")
    _cluster_options(r)
    r.set_defaults(func=cmd_run)
    s = sub.add_parser("resume", help="continue an interrupted run from its checkpoint")
    s.add_argument("run_dir", metavar="RUN_DIR", help="the run folder")
    _cluster_options(s)
    s.set_defaults(func=cmd_resume)
    b = sub.add_parser("studies", help="list the bundled demo studies, or copy one (with its "
                       "sample designs, or a campaign with its base study) as the start of "
                       "your own")
    b.add_argument("--copy", metavar="NAME", help="bundled study or campaign to copy")
    b.add_argument("folder", nargs="?", metavar="DIR", help="folder to copy into (default: "
                   "the current folder); an existing file is never replaced")
    b.set_defaults(func=cmd_studies)
    from .cli_decide import add_parsers
    add_parsers(sub, cmd_pick, cmd_flaps, cmd_report, cmd_compare)
    from .cli_campaign import add_robust_parser, add_sweep_parser
    add_sweep_parser(sub).set_defaults(func=cmd_sweep)
    add_robust_parser(sub).set_defaults(func=cmd_robust)
    from .cli_analyse import add_analyse_parser, cmd_analyse
    add_analyse_parser(sub).set_defaults(func=cmd_analyse)
    from .cli_sensitivity import add_sensitivity_parser, cmd_sensitivity
    add_sensitivity_parser(sub).set_defaults(func=cmd_sensitivity)
    from .cli_payload_range import add_payload_range_parser, cmd_payload_range
    add_payload_range_parser(sub).set_defaults(func=cmd_payload_range)
    for command in sub.choices.values():   # also after the command: 'optimiser pick RUN --units us'
        command.add_argument("--units", metavar="{si,us}", default=argparse.SUPPRESS,
                             help="units of what you read, as 'optimiser --units': si or us "
                             "(default: OPTIMISER_UNITS, else si)")
    return p


def main(argv=None) -> int:
    """Run the command line; every :class:`~optimiser.errors.OptimiserError` becomes one line
    on stderr and exit status 2 (a traceback only with ``--debug``)."""
    parser = build_parser()
    args = parser.parse_args(argv)
    try:
        from .display_units import system_from, using
        args.units = system_from(args.units)   # --units beats OPTIMISER_UNITS; default si
        with using(args.units):   # for the sheets and figures deep in the report layer
            return args.func(args)
    except OptimiserError as exc:
        if args.debug:
            raise
        print(f"error: {exc}", file=sys.stderr)
        return EXIT_USAGE
    except RunInterrupted as exc:  # the checkpoint is saved; say how to resume
        print(f"\n{exc}", file=sys.stderr)
        return EXIT_INTERRUPTED
    except KeyboardInterrupt:
        print("interrupted", file=sys.stderr)
        return EXIT_INTERRUPTED
    except BrokenPipeError:  # the reader of standard output went away (`| head`): stop quietly
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())  # no second error when Python flushes at exit
        return 1


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
