"""Command line of the payload-range corners: ``optimiser payload-range``.

Only argument handling and printing; the work is in :mod:`optimiser.payload_range` and
:mod:`optimiser.report.payload_range_plot`. User errors raise an
:class:`optimiser.errors.OptimiserError` (one line, exit status 2). Imports are made inside
the command, so that ``optimiser --help`` stays light.
"""

from __future__ import annotations

from pathlib import Path

from .errors import UsageError


def add_payload_range_parser(sub):
    p = sub.add_parser("payload-range", help="payload-range corners of fixed airplanes (A max "
                       "payload at zero range, B max payload at the maximum takeoff mass, C "
                       "full tanks, D ferry), reserves held back; writes payload_range.csv, "
                       ".png and .svg")
    p.add_argument("designs", help="CSV of frozen designs or of evaluate's inputs, as "
                   "'optimiser analyse --designs' takes (a front.csv, an evaluate output, a "
                   "pick's design_input.csv)")
    p.add_argument("--study", help="study file (default: the bundled default study)")
    p.add_argument("--out", default=".", help="folder to write into (default: the current "
                   "folder; created if missing; existing payload-range files are never "
                   "replaced)")
    return p


def output_files(folder: Path) -> list[Path]:
    """The files ``payload-range`` writes into ``folder``."""
    from .runfolder.names import PAYLOAD_RANGE_FIGURE, PAYLOAD_RANGE_TABLE, PLOT_SUFFIXES
    return [folder / PAYLOAD_RANGE_TABLE] + [folder / (PAYLOAD_RANGE_FIGURE + s)
                                             for s in PLOT_SUFFIXES]


def write_payload_range(study, frozen, flaps, folder: Path):
    """Compute the corners and write the table and the chart into ``folder`` (which exists);
    returns the table and the paths written."""
    from .evaluation import evaluated_csv_text
    from .payload_range import payload_range
    from .report.payload_range_plot import write_payload_range_figure
    from .runfolder.files import write_atomic
    from .runfolder.names import PAYLOAD_RANGE_FIGURE, PAYLOAD_RANGE_TABLE
    spec = study.spec
    table = payload_range(spec, frozen, flaps)
    written = [folder / PAYLOAD_RANGE_TABLE]
    write_atomic(written[0], evaluated_csv_text(table).encode("utf-8"))
    written += write_payload_range_figure(table, study.name, spec.mission.range_m / 1e3,
                                          spec.weights.payload_kg,
                                          folder / PAYLOAD_RANGE_FIGURE)
    return table, written


def summary_text(study, table) -> str:
    """The terminal table: one line per design and corner (the first designs)."""
    from .display_units import column_display, table_cells
    payload, unit = column_display("payload_kg", study.spec.weights.payload_kg)
    cols = ("range_km", "payload_kg", "fuel_on_board_kg", "takeoff_mass_kg")
    heads = [table_cells(c, 0.0)[0] for c in cols]
    lines = [f"study {study.name}: payload-range corners of {table['design'].nunique()} "
             f"design(s); maximum payload = the study's design payload "
             f"{payload:g} {unit}; reserves and trapped fuel held back",
             f"{'design':>6} {'flap':<22} {'corner':>6} "
             + " ".join(f"{h:>{max(len(h), 10)}}" for h in heads)]
    for _, r in table.head(40).iterrows():
        cells = [table_cells(c, float(r[c]))[1] for c in cols]
        lines.append(f"{r['design']:>6} {str(r['flap']):<22} {r['corner']:>6} "
                     + " ".join(f"{v:>{max(len(h), 10)}.1f}" for h, v in zip(heads, cells)))
    if len(table) > 40:
        lines.append(f"... {len(table) - 40} more rows in the output file")
    return "\n".join(lines)


def cmd_payload_range(args):
    from .analysis import frozen_from_table, read_table
    from .cli import _study
    from .evaluation import CAUTION
    from .runfolder.files import new_folder
    study = _study(args.study)
    out = Path(args.out)
    if out.exists() and not out.is_dir():
        raise UsageError(f"--out: got {out}, a file; expected a folder")
    existing = [p for p in output_files(out) if p.exists() or p.is_symlink()]
    if existing:
        raise UsageError(f"{existing[0]}: exists; expected a folder without payload-range "
                         "files (remove them or choose another --out)")
    if not Path(args.designs).is_file():
        raise UsageError(f"designs: got {args.designs!r}; expected an existing CSV file")
    table = read_table(study, args.designs)
    frozen, flaps = frozen_from_table(study, table, str(args.designs))
    try:
        if out.is_dir():
            corners, written = write_payload_range(study, frozen, flaps, out)
        else:
            with new_folder(out, "the payload-range files") as tmp:
                corners, _ = write_payload_range(study, frozen, flaps, tmp)
            written = output_files(out)
    except OSError as exc:
        raise UsageError(f"{out}: cannot write ({exc.strerror})") from None
    print(summary_text(study, corners))
    for path in written:
        print(f"wrote {path}")
    print(CAUTION)
    return 0
