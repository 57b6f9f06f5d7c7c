"""Command line of a design's sensitivities: ``optimiser sensitivity RUN_DIR``.

Only argument handling, the output folder and printing; the numbers are
:mod:`optimiser.sensitivity`'s, the figure :mod:`optimiser.report.tornado`'s.
"""

from __future__ import annotations

from pathlib import Path


def add_sensitivity_parser(sub):
    s = sub.add_parser("sensitivity", help="how a front design's objectives and margins move "
                       "per unit change of each requirement and uncertain assumption (table "
                       "and tornado chart)")
    s.add_argument("run_dir", metavar="RUN_DIR", help="a finished run folder")
    s.add_argument("--row", type=int, help="row of front.csv (1 = first design; default: "
                   "the knee pick of 'optimiser pick')")
    s.add_argument("--step", type=float, default=None, help="relative step of the central "
                   "differences (default 0.01 = 1 %%)")
    s.add_argument("--out", help="folder to write (default: RUN_DIR/sensitivity-knee or "
                   "sensitivity-row-N); an existing one needs --force")
    s.add_argument("--force", action="store_true", help="replace an existing output folder")
    s.add_argument("--front", action="store_true", help="instead: the price of each "
                   "requirement on the run's designs (the best objectives among every "
                   "evaluated design, re-sized at the requirement -/+ step; default step 5 %%)")
    return s


def cmd_sensitivity(args) -> int:
    from .decide import DecideError, choose
    from .evaluation import CAUTION
    from .report.picks import refuse_existing
    from .report.tornado import plot_tornado
    from .runfolder import files, load_run, names
    from .display_units import column_display
    from .sensitivity import RELATIVE_STEP, ranked, sensitivities
    run = load_run(args.run_dir)
    study, front = run.study, run.front
    if args.front:
        return _prices(run, args)
    if len(front) == 0:
        raise DecideError(f"{args.run_dir}: the run found no feasible design; expected a run "
                          "with a front")
    if args.row is not None:
        if not 1 <= args.row <= len(front):
            raise DecideError(f"--row: got {args.row}; expected 1 to {len(front)} (rows of "
                              f"{names.FRONT})")
        design, which = front.iloc[args.row - 1], f"row-{args.row}"
    else:
        design, which = choose(study, front, "knee").design, "knee"
    step = RELATIVE_STEP if args.step is None else args.step
    table = sensitivities(study, design, step)
    out = Path(args.out) if args.out else Path(args.run_dir) / (names.SENSITIVITY_DIR_PREFIX
                                                                + which)
    refuse_existing(out, args.force, "sensitivities")
    wing, wing_unit = column_display("wing_loading_N_m2", float(design["wing_loading_N_m2"]))
    title = (f"{study.name}: sensitivities of the {which.replace('-', ' ')} design "
             f"({design['flap']}, W/S {wing:.{0 if wing_unit == 'N/m²' else 1}f} {wing_unit}), "
             f"central differences, steps ±{step:.0%}")
    objectives = list(study.objective_columns())
    with files.new_folder(out, "the sensitivities") as tmp:
        files.write_atomic(tmp / names.SENSITIVITY_TABLE, files.csv_bytes(table))
        plot_tornado(study, table, objectives[:2], tmp / names.TORNADO_STEM, title)
    lines = [f"sensitivities of the {which} design, steps ±{step:g} (relative; elevation "
             "50 m, temperature 1 K):"]
    for column in objectives[:2]:
        _, unit = column_display(column, 1.0)
        lines.append(f"  {column}, largest effects (change at -step / +step) [{unit or '-'}]:")
        for r in ranked(table, column).head(5).itertuples():
            lo, _ = column_display(column, r.change_minus)
            hi, _ = column_display(column, r.change_plus)
            lines.append(f"    {r.input:30} {lo:+.4g} / {hi:+.4g}")
    lines += [f"written: {out}", CAUTION]
    print("\n".join(lines))
    return 0


def _prices(run, args) -> int:
    """``--front``: the price of each requirement on the run's evaluated designs."""
    from .decide import DecideError
    from .evaluation import CAUTION
    from .report.picks import refuse_existing
    from .runfolder import files, names
    from .sensitivity import requirement_prices
    if args.row is not None:
        raise DecideError("--row: not with --front (the prices are over all the run's designs)")
    step = 0.05 if args.step is None else args.step
    table = requirement_prices(run.study, run.run_dir, step)
    out = Path(args.out) if args.out else Path(args.run_dir) / (names.SENSITIVITY_DIR_PREFIX
                                                                + "front")
    refuse_existing(out, args.force, "requirement prices")
    with files.new_folder(out, "the requirement prices") as tmp:
        files.write_atomic(tmp / names.PRICE_TABLE, files.csv_bytes(table))
    objectives = list(run.study.objective_columns())
    lines = [f"price of each requirement on the run's evaluated designs (steps ±{step:g}; "
             "best objectives re-sized, not re-optimised):"]
    for r in table.to_dict("records"):
        lines.append(f"  {r['requirement']:30} " + "  ".join(
            _price_text(r, c) for c in objectives[:2]))
    lines += [f"written: {out}", CAUTION]
    print("\n".join(lines))
    return 0


def _price_text(row: dict, column: str) -> str:
    """A price in the reader's units: objective change per unit of the requirement (the
    table stays SI; differences, so no unit offset applies)."""
    from .display_units import column_display, display_unit, to_display
    from .report.tornado import INPUT_DISPLAY
    per_objective, objective_unit = column_display(column, 1.0)
    per_requirement, requirement_unit = to_display(1.0, row["unit"],
                                                   **INPUT_DISPLAY.get(row["requirement"], {}))
    price = row["price_" + column] * per_objective / per_requirement
    return f"{price:+.4g} {objective_unit or '-'}/{display_unit(requirement_unit) or '-'}"
