"""The files and terminal summaries of a pick and of the flap comparison.

``optimiser pick`` writes ``RUN_DIR/pick-<method>/`` (:func:`write_pick`) and ``optimiser
flaps`` writes ``RUN_DIR/flaps/`` (:func:`write_flaps`); the choice and the comparison
themselves are made by :mod:`optimiser.decide`, which writes no figure.
"""

from __future__ import annotations

from pathlib import Path

from ..columns import short_and_unit
from ..decide import RUNNERS_UP, Choice, runners_up
from ..display_units import SI, column_display, resolve
from ..errors import DecideError
from ..evaluation import CAUTION
from ..runfolder import names
from ..runfolder.files import new_folder, write_atomic
from ..runfolder.reader import Run
from ..runfolder.runinfo import json_bytes
from . import sheet
from .figures import pyplot, save


def pick_folder(run_dir, method, limits=()) -> Path:
    """``RUN_DIR/pick-<method>``; a pick with hard limits goes to its own folder,
    ``pick-<method>-limited-<8 hex digits of the limits' SHA-256>``, so it never replaces the
    unlimited pick of the same method (nor one with other limits)."""
    name = f"{names.PICK_DIR_PREFIX}{method}"
    if limits:
        import hashlib
        key = "\n".join(sorted(str(x) for x in limits)).encode("utf-8")
        name += f"-limited-{hashlib.sha256(key).hexdigest()[:8]}"
    return Path(run_dir) / name


def design_input_bytes(study, design) -> bytes:
    """The design as a one-row table in ``optimiser evaluate``'s input format (CSV, every
    number in its shortest exact form, so it is sized to the same numbers)."""
    from ..evaluation import design_columns
    cols = design_columns(study)
    cells = [repr(float(design[c])) for c in cols[:3]] + [str(design[cols[3]])]
    return (",".join(cols) + "\n" + ",".join(cells) + "\n").encode("utf-8")


def refuse_existing(out: Path, force: bool, what: str):
    """Refuse an output folder that is a link, a file, or (without ``force``) not empty."""
    import os
    if os.path.islink(out):
        raise DecideError(f"{out}: is a symbolic link; expected a folder for the {what} "
                          "(nothing is written through a link in a run folder: remove it)")
    if out.exists() and not out.is_dir():
        raise DecideError(f"{out}: is a file; expected a folder for the {what}")
    if out.is_dir() and any(out.iterdir()) and not force:
        raise DecideError(f"{out}: exists; expected a new folder (use --force to replace "
                          f"it with new {what})")


def write_pick(run: Run, choice: Choice, force=False, n_runners=RUNNERS_UP) -> Path:
    """Write ``RUN_DIR/pick-<method>/`` (see :func:`pick_folder`): design.csv, design.md,
    design_input.csv, constraint_diagram.png/.svg, runners_up.csv, choice.json,
    payload_range.csv and payload_range.png/.svg. An existing folder is refused unless
    ``force``.

    Every table and the figure are made before anything is written; the folder is built in
    a temporary sibling and renamed into place (:func:`~optimiser.runfolder.files.new_folder`),
    so a failure leaves no partial folder and an old one untouched."""
    from ..evaluation import evaluated_csv_text
    from .payload_range_plot import payload_range_figure
    from .plots import design_constraint_diagram
    out = pick_folder(run.run_dir, choice.method, choice.limits)
    refuse_existing(out, force, "pick files")
    study = run.study
    runners = runners_up(study, choice, n_runners)
    table = sheet.design_sheet(study, choice.design)
    md = sheet.sheet_markdown(study, choice.design, title=f"{study.name}: chosen design",
                              how=choice.describe(), runners=runners)
    info = {**choice.settings(), "front_row": int(choice.design["front_row"]),
            "caution": CAUTION}
    texts = {"design.csv": table.to_csv(index=False).encode(),
             names.PICK_DESIGN_INPUT: design_input_bytes(study, choice.design),
             "runners_up.csv": runners.to_csv(index=False).encode(),
             "design.md": md.encode(), names.PICK_CHOICE: json_bytes(info, allow_nan=False)}
    corners = pick_payload_range(study, choice.design)
    texts[names.PAYLOAD_RANGE_TABLE] = evaluated_csv_text(corners).encode("utf-8")
    fig = design_constraint_diagram(study, choice.design, label="chosen design", front=run.front,
                                    run_utc=run.info.get("started_utc"))
    pr_fig = payload_range_figure(corners, study.name, study.spec.mission.range_m / 1e3,
                                  study.spec.weights.payload_kg, run.info.get("started_utc"))
    try:
        with new_folder(out, "the pick folder") as tmp:
            for name, data in texts.items():
                write_atomic(tmp / name, data)
            save(fig, tmp / "constraint_diagram")
            save(pr_fig, tmp / names.PAYLOAD_RANGE_FIGURE)
    finally:  # the figures are made before the folder: closed whatever happens
        pyplot().close(fig)
        pyplot().close(pr_fig)
    return out


def pick_payload_range(study, design):
    """The payload-range corners of a chosen design (a front row), frozen as sized
    (:func:`optimiser.payload_range.payload_range`)."""
    import pandas as pd

    from ..analysis import frozen_from_table
    from ..payload_range import payload_range
    frozen, flaps = frozen_from_table(study, pd.DataFrame([dict(design)]), "chosen design")
    return payload_range(study.spec, frozen, flaps)


def _us_design_line(study, d, system) -> str:
    """The design line of a pick summary in US customary units (:mod:`..display_units`)."""
    wing, wing_unit = column_display("wing_loading_N_m2", d["wing_loading_N_m2"], system)
    loading, loading_unit = column_display(study.loading_column, d[study.loading_column],
                                           system)
    mass, mass_unit = column_display("takeoff_mass_kg", d["takeoff_mass_kg"], system)
    return (f"  flap {d['flap']}, wing loading {wing:.2f} {wing_unit}, "
            f"{short_and_unit(study.loading_column)[0]} "
            f"{f'{loading:.4g} {loading_unit}'.rstrip()}, aspect ratio "
            f"{d['aspect_ratio']:.2f}, takeoff mass {mass:.0f} {mass_unit}")


def pick_summary(study, choice: Choice, runners, out: Path | None = None,
                 units: str | None = None) -> str:
    """The terminal summary of a pick: the design, its objectives, binding constraints,
    runners-up and the caution. ``units``: ``"si"`` or ``"us"`` for the numbers shown
    (default :func:`~optimiser.display_units.current_system`)."""
    system = resolve(units)
    d = choice.design
    lines = [f"study {study.name}: picked by {choice.describe()}",
             f"  flap {d['flap']}, wing loading {d['wing_loading_N_m2']:.0f} N/m2, "
             f"{study.loading_column} {d[study.loading_column]:.4g}, aspect ratio "
             f"{d['aspect_ratio']:.2f}, takeoff mass {d['takeoff_mass_kg']:.0f} kg"
             if system == SI else _us_design_line(study, d, system)]
    for c in study.objective_columns():
        name, unit = short_and_unit(c)
        value = d[c]
        if system != SI:
            value, unit = column_display(c, value, system)
        lines.append(f"  {name}: {value:.4g} {unit}".rstrip())
    bind = sheet.binding_constraints(study, d)
    lines.append("  binding constraints: " + (", ".join(bind) if bind else "none within 1 %"))
    if len(runners):
        lines.append("  runners-up:")
        for _, r in runners.iterrows():
            trade = r["trade"] if system == SI else sheet.us_trade(study, d, r, system)
            lines.append(f"    {r['rank']}. {r['flap']}: {trade}")
    if out is not None:
        from ..errors import shell_command
        lines.append(f"wrote {out}/ (design.csv, design.md, {names.PICK_DESIGN_INPUT}, "
                     "constraint_diagram.png/.svg, runners_up.csv, choice.json, "
                     f"{names.PAYLOAD_RANGE_TABLE}, {names.PAYLOAD_RANGE_FIGURE}.png/.svg)")
        lines.append("  size it again or test its robustness: " + shell_command(
            "optimiser", "evaluate", Path(out).parent / names.STUDY, "--designs",
            Path(out) / names.PICK_DESIGN_INPUT))
    lines.append(CAUTION)
    return "\n".join(lines)


def write_flaps(run: Run, table, fronts, force=False) -> Path:
    """Write ``RUN_DIR/flaps/``: flaps.csv, flaps.md, flaps.png/.svg (refused if present
    unless ``force``); built whole in a temporary sibling and renamed into place."""
    from .plots import flap_fronts
    out = run.run_dir / names.FLAPS_DIR
    refuse_existing(out, force, "flap comparison files")
    texts = {"flaps.csv": table.to_csv(index=False).encode(),
             "flaps.md": sheet.flaps_markdown(run.study, table).encode()}
    fig = flap_fronts(run.study, fronts, table, run.info.get("started_utc"))
    try:
        with new_folder(out, "the flap comparison") as tmp:
            for name, data in texts.items():
                write_atomic(tmp / name, data)
            save(fig, tmp / "flaps")
    finally:
        pyplot().close(fig)
    return out


def flaps_summary(study, table, out=None, units: str | None = None) -> str:
    """The terminal summary of the flap comparison, with the caution; ``units``: ``"si"`` or
    ``"us"`` (default :func:`~optimiser.display_units.current_system`)."""
    lines = [f"study {study.name}: flap options compared under identical constraints and "
             "budget (one NSGA-II each)", sheet.flaps_text_table(study, table, units)]
    if out is not None:
        lines.append(f"wrote {out}/ (flaps.csv, flaps.md, flaps.png/.svg)")
    lines.append(CAUTION)
    return "\n".join(lines)
