"""Command line of the frozen-design analysis: ``optimiser analyse``.

Only argument handling and printing; the work is in :mod:`optimiser.analysis`. User errors
raise an :class:`optimiser.errors.OptimiserError` (one line, exit status 2).
"""

from __future__ import annotations

from pathlib import Path

from .errors import UsageError

CASE_HELP = {
    "takeoff_mass": "takeoff mass with its unit, e.g. '2100 kg' or '4600 lb' (default: each "
                    "design's maximum takeoff mass)",
    "payload": "payload, e.g. '300 kg' (default: the study's)",
    "fuel": "fuel on board, e.g. '180 kg' (default: what the takeoff mass leaves)",
    "elevation": "departure airfield elevation (pressure altitude), e.g. '6000 ft'",
    "temperature_offset": "departure ISA temperature offset, e.g. '20 K'",
    "runway": "departure runway surface (a key of the surface table, e.g. short_grass)",
    "field_length": "departure field length available, e.g. '900 m'",
    "destination_elevation": "destination airfield elevation",
    "destination_temperature_offset": "destination ISA temperature offset",
    "destination_runway": "destination runway surface",
    "landing_field_length": "destination field length available",
    "cruise_altitude": "cruise pressure altitude, e.g. '9000 ft'",
    "cruise_speed": "cruise true airspeed flown and required, e.g. '150 kn'",
    "cruise_temperature_offset": "ISA temperature offset in cruise and for the ceiling",
    "range": "mission range, e.g. '400 nmi'",
    "headwind": "wind along the departure runway, e.g. '15 kn' (negative: tailwind; the "
                "field length counts 50 % of a headwind, 150 % of a tailwind)",
    "destination_headwind": "wind along the destination runway (as --headwind)",
}
"""The operating-case options (``--takeoff-mass`` ...) and their help: the keys of
:data:`optimiser.analysis.CASE_OPTIONS` (a test checks it; not imported here, so that
``optimiser --help`` stays fast)."""


def add_analyse_parser(sub):
    a = sub.add_parser("analyse", help="analyse fixed airplanes (wing, engines, flap and empty "
                       "mass as built) at an operating case: every performance number and "
                       "margin, no re-sizing")
    a.add_argument("study", nargs="?", help="study file (default: the bundled default study)")
    a.add_argument("--designs", help="CSV of frozen designs (flap, wing_area_m2, aspect_ratio "
                   "or span_m, engine_power_kW or engine_thrust_kN, empty_mass_kg, "
                   "max_takeoff_mass_kg or takeoff_mass_kg: a front.csv or evaluate output "
                   "will do) or of evaluate's inputs (sized first, e.g. a pick's "
                   "design_input.csv)")
    a.add_argument("--design", help="one design as evaluate's name=value pairs, sized first")
    a.add_argument("--out", help="CSV file to write (never replaced without --force)")
    a.add_argument("--force", action="store_true", help="replace an existing output file")
    for option, text in CASE_HELP.items():
        a.add_argument("--" + option.replace("_", "-"), dest=f"case_{option}", help=text)
    return a


SUMMARY_COLUMNS = (("takeoff_mass_kg", ".0f"), ("fuel_on_board_kg", ".1f"),
                   ("fuel_mass_kg", ".1f"), ("stall_speed_m_s", ".1f"),
                   ("takeoff_field_required_m", ".0f"), ("landing_field_required_m", ".0f"),
                   ("climb_rate_m_s", ".2f"), ("cruise_speed_m_s", ".1f"))
"""Columns of the printed summary (named as in the output file)."""

SUMMARY_ROWS = 40


def summary_text(study, case, frame) -> str:
    """The terminal table of ``analyse``: the case in words, one line per design."""
    n, n_ok = len(frame), int(frame["feasible"].sum())
    from .display_units import table_cells  # SI: the file's column names and values
    heads = [table_cells(c, 0.0)[0] for c, _ in SUMMARY_COLUMNS]
    lines = [f"study {study.name}: {n} frozen design(s) at {case.describe(study)}; "
             f"{n_ok} meet every requirement",
             f"{'flap':<22}" + "".join(f"{h:>{len(h) + 2}}" for h in heads) + "  verdict"]
    for _, r in frame.head(SUMMARY_ROWS).iterrows():
        verdict = ("meets all (closest: " + r["limiting_constraint"] + ")") if r["feasible"] \
            else ("fails " + r["most_violated"]
                  + f" ({r['margin_' + r['most_violated']]:+.1%})")
        cells = [table_cells(c, float(r[c]))[1] for c, _ in SUMMARY_COLUMNS]
        lines.append(f"{r['flap']:<22}" + "".join(
            f"{v:>{len(h) + 2}{fmt}}" for h, v, (_, fmt) in zip(heads, cells, SUMMARY_COLUMNS))
            + f"  {verdict}")
    if n > SUMMARY_ROWS:
        lines.append(f"... {n - SUMMARY_ROWS} more rows in the output file")
    lines.append("fuel_mass_kg is the fuel the case's mission needs (trip, reserve, trapped); "
                 "fuel_on_board_kg what the takeoff mass leaves after empty mass, crew and "
                 "payload")
    return "\n".join(lines)


def cmd_analyse(args):
    from .analysis import analyse, frozen_from_table, read_case, read_table
    from .cli import _output_path, _study
    from .designs import parse_design_option
    from .evaluation import CAUTION, evaluated_csv_text
    from .runfolder.files import write_atomic
    study = _study(args.study)
    out = _output_path(args.out, args.force)
    case = read_case({k[len("case_"):]: v for k, v in vars(args).items()
                      if k.startswith("case_")})
    if args.design is not None and args.designs is not None:
        raise UsageError(f"--design and --designs: got both ({args.design!r} and "
                         f"{args.designs!r}); expected one of them")
    if args.design is not None:
        table, source = parse_design_option(study, args.design), "--design"
    elif args.designs is not None:
        table, source = read_table(study, args.designs), str(args.designs)
    else:
        candidate = Path(study.path).with_name(Path(study.path).stem + "_designs.csv")
        if not candidate.exists():
            raise UsageError("no designs given; expected --designs FILE.csv or --design '...' "
                             f"(no sample file {candidate} beside the study)")
        table, source = read_table(study, candidate), str(candidate)
    frozen, flaps = frozen_from_table(study, table, source)
    frame = analyse(study, frozen, flaps, case)
    print(summary_text(study, case, frame))
    if out is not None:
        try:
            write_atomic(out, evaluated_csv_text(frame).encode("utf-8"))
        except OSError as exc:
            raise UsageError(f"{out}: cannot write ({exc.strerror})") from None
        print(f"wrote {out}")
    print(CAUTION)
    return 0
