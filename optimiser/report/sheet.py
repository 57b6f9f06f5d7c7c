"""The design sheet of one sized design (CSV and Markdown) and the flap-comparison tables.

A sheet lists every number of the design's row: the design variables, the objectives, every
sized number with its unit and meaning (from the results schema, :mod:`optimiser.columns`),
and every constraint margin with its status (``binding`` when below :data:`BINDING_MARGIN`,
``limiting`` for the smallest, ``met`` or ``violated``). Every Markdown text ends with the caution.
"""

from __future__ import annotations

import math

import numpy as np

from ..columns import (COLUMN_DOCS, CONSTRAINT_LABELS, short_and_unit,
                       unit_of)
from ..display_units import SI, column_display, resolve
from ..display_units import heading as display_heading

BINDING_MARGIN = 0.01
"""A constraint whose margin is below 1 % of its limit counts as binding (a convention of
this tool: the search pushes designs against their active constraints)."""

def binding_constraints(study, design) -> list[str]:
    """Constraints of ``design`` with a margin less than :data:`BINDING_MARGIN` beyond the
    study's required margin (``[requirements] margins``, 0 where none is given)."""
    from ..sizing import active_constraints
    required = dict(study.spec.requirements.margins)
    return [c for c in active_constraints(study.spec)
            if float(design[f"margin_{c}"]) - required.get(c, 0.0) < BINDING_MARGIN]


def us_trade(study, design, runner, system) -> str:
    """A runner-up's ``trade`` sentence (:func:`optimiser.decide.runners_up`, SI) with the
    changes shown in ``system``'s units (no objective has an offset unit)."""
    words = []
    for c in study.objective_columns():
        change = float(runner[f"change_{c}"])
        if abs(change) > 1e-9 * max(abs(float(design[c])), 1.0):
            shown, unit = column_display(c, change, system)
            words.append(f"{short_and_unit(c)[0]} {shown:+.4g}{(' ' + unit) if unit else ''}")
    return ("; ".join(words) + " against the choice") if words else \
        "same objectives as the choice"


def design_sheet(study, design):
    """Long table of every number of one design: section, quantity, value, unit, status,
    meaning. ``design`` is a row of front.csv (or of :func:`optimiser.evaluate`)."""
    import pandas as pd
    from ..sizing import active_constraints
    rows = []
    inputs = ["flap", "wing_loading_N_m2", study.loading_column, "aspect_ratio"]
    objectives = list(study.objective_columns())
    for c in inputs:
        v = design[c]
        rows.append(("design variable", c, v, unit_of(c) if c != "flap" else "", "",
                     COLUMN_DOCS.get(c, "")))
    for c in objectives:
        rows.append(("objective (minimised)", c, float(design[c]), unit_of(c), "",
                     COLUMN_DOCS.get(c, "")))
    skip = set(inputs) | set(objectives) | {"generation", "score", "front_row", "feasible",
                                            "limiting_constraint", "most_violated",
                                            "within_bounds", "outside_bounds"}
    margins = {f"margin_{c}" for c in active_constraints(study.spec)}
    for c in design.index:
        if c in skip or c in margins or c.startswith("margin_") or c not in COLUMN_DOCS:
            continue
        v = design[c]
        rows.append(("sized", c, v if isinstance(v, str) else float(v), unit_of(c), "",
                     COLUMN_DOCS[c]))
    limiting = str(design.get("limiting_constraint", ""))
    required = dict(study.spec.requirements.margins)
    for c in active_constraints(study.spec):
        m = float(design[f"margin_{c}"])
        r = required.get(c, 0.0)
        status = "violated" if m < r else "binding" if m - r < BINDING_MARGIN else "met"
        if c == limiting:
            status += " (limiting)"
        meaning = CONSTRAINT_LABELS.get(c, c) + (
            f" (met when at least the required {r:.1%})" if r else " (positive = met)")
        rows.append(("margin", f"margin_{c}", m, "fraction of the limit", status, meaning))
    rows.append(("verdict", "feasible", bool(design.get("feasible", True)), "", "",
                 COLUMN_DOCS["feasible"]))
    return pd.DataFrame(rows, columns=["section", "quantity", "value", "unit", "status",
                                       "meaning"])


def _fmt(v):
    if isinstance(v, (bool, np.bool_)):
        return "yes" if v else "no"
    if isinstance(v, str):
        return v
    v = float(v)
    if math.isnan(v):
        return "–"
    if v == 0:
        return "0"
    a = abs(v)
    if a >= 1e5 or a < 1e-3:
        return f"{v:.4g}"
    return f"{v:.4g}" if a < 10 else f"{v:,.1f}" if a < 1e4 else f"{v:,.0f}"


def _md_table(header, rows):
    out = ["| " + " | ".join(header) + " |", "|" + "|".join("---" for _ in header) + "|"]
    for r in rows:
        out.append("| " + " | ".join(str(x).replace("|", "/") for x in r) + " |")
    return "\n".join(out)


def _shown_in(table, system):
    """The sheet's values and units as the reader sees them in ``system`` (the sheet's CSV
    stays SI; only the Markdown is converted)."""
    table = table.copy()
    values, units = [], []
    for q, v, u in zip(table["quantity"], table["value"], table["unit"]):
        if isinstance(v, (str, bool, np.bool_)) or q not in COLUMN_DOCS:
            values.append(v)
            units.append(u)
        else:
            shown, unit = column_display(q, float(v), system)
            values.append(shown)
            units.append(unit)
    table["value"], table["unit"] = values, units
    return table


def sheet_markdown(study, design, title, how="", runners=None, units=None) -> str:
    """The design sheet as Markdown: summary, objectives, margins (binding first), every sized
    number, the runners-up with their trades, and the caution. ``units``: ``"si"`` or
    ``"us"`` for the numbers shown (default :func:`~optimiser.display_units.current_system`;
    the column names stay the SI names of the CSV files)."""
    from ..evaluation import CAUTION
    system = resolve(units)
    table = design_sheet(study, design)
    lines = [f"# {title}", ""]
    if how:
        lines += [f"Picked by {how}.", ""]
    lines += [f"Study **{study.name}** — {study.description}.", "",
              f"> **Caution.** {CAUTION}", ""]
    if system != SI:
        table = _shown_in(table, system)
        lines += ["Numbers in US customary units; the column names and the CSV files stay SI.",
                  ""]
    var = table[table["section"] == "design variable"]
    lines += ["## Design", "", _md_table(["quantity", "value", "unit"],
                                         [(short_and_unit(q)[0], _fmt(v), u) for q, v, u in
                                          zip(var["quantity"], var["value"], var["unit"])]), ""]
    obj = table[table["section"].str.startswith("objective")]
    lines += ["## Objectives (all minimised)", "",
              _md_table(["objective", "value", "unit"],
                        [(short_and_unit(q)[0], _fmt(v), u) for q, v, u in
                         zip(obj["quantity"], obj["value"], obj["unit"])]), ""]
    mar = table[table["section"] == "margin"].copy()
    required = dict(study.spec.requirements.margins)
    mar["required"] = [required.get(q[len("margin_"):], 0.0) for q in mar["quantity"]]
    mar["order"] = mar["value"].astype(float) - mar["required"]
    mar = mar.sort_values("order")
    bind = binding_constraints(study, design)
    binding = ("Binding: " + (", ".join(b.replace("_", " ") for b in bind) if bind else "none")
               + ".")
    if required:  # the study requires design margins: show them beside the margins
        lines += ["## Constraint margins", "",
                  "Margins as a fraction of the limit; a constraint is met when its margin is "
                  "at least the margin the study requires, and binding when less than "
                  f"{BINDING_MARGIN:.0%} beyond it. " + binding, "",
                  _md_table(["constraint", "margin", "required", "status"],
                            [(m, f"{float(v):+.1%}", f"{r:.1%}", s) for m, v, r, s in
                             zip(mar["meaning"], mar["value"], mar["required"],
                                 mar["status"])]), ""]
    else:
        lines += ["## Constraint margins", "",
                  "Positive = met, as a fraction of the limit; a margin below "
                  f"{BINDING_MARGIN:.0%} counts as binding. " + binding, "",
                  _md_table(["constraint", "margin", "status"],
                            [(m, f"{float(v):+.1%}", s) for m, v, s in
                             zip(mar["meaning"], mar["value"], mar["status"])]), ""]
    sized = table[table["section"] == "sized"]
    lines += ["## Every sized number", "",
              _md_table(["column", "value", "unit", "meaning"],
                        [(f"`{q}`", _fmt(v), u, m) for q, v, u, m in
                         zip(sized["quantity"], sized["value"], sized["unit"],
                             sized["meaning"])]), ""]
    if runners is not None and len(runners):
        cols = list(study.objective_columns())
        head = ["rank", "flap"] + [display_heading(c, system) for c in cols] \
            + ["what it trades against the choice"]
        lines += ["## Runners-up", "",
                  _md_table(head, [[r["rank"], r["flap"],
                                    *[_fmt(column_display(c, r[c], system)[0]) for c in cols],
                                    r["trade"] if system == SI else
                                    us_trade(study, design, r, system)]
                                   for _, r in runners.iterrows()]), ""]
    lines += ["---", "", f"*{CAUTION}*", ""]
    return "\n".join(lines)


FLAP_COLUMNS_DOC = {
    "feasible_found": "at least one design of this option met every constraint",
    "failing_constraint": "when none was feasible: the constraint whose best margin over the "
                          "option's designs is lowest",
    "best_margin_failing": "that best margin (negative = short by this fraction of the limit)",
    "best_stall_margin_in_bounds": "landing-stall margin at the lowest wing loading of the bounds "
                                   "(the best the option can do)",
    "share_of_combined_front": "fraction of the designs of the combined (all options) front that "
                               "are this option's",
    "hypervolume": "hypervolume of the option's own front, normalised objectives, the run's "
                   "fixed reference point",
    "reference_option": "the option with the best trip fuel vs engine size front (largest "
                        "hypervolume in that plane), against which penalties are measured",
    "fuel_engine_hypervolume": "hypervolume of the option's trip fuel vs engine size front, "
                               "normalised over all options (reference point 1.1, 1.1)",
    "extra_trip_fuel_at_equal_engine_kg": "mean, over engine sizes E from where both options "
                                          "have a design to the larger of their largest, of the "
                                          "smallest trip fuel this option reaches with an engine "
                                          "no larger than E minus the reference's (trip fuel vs "
                                          "engine size fronts, linear between points); _pct: "
                                          "as a percentage of the reference's",
    "extra_engine_at_equal_trip_fuel_<unit>": "the same with engine size and trip fuel swapped: "
                                              "extra engine size at equal trip fuel",
    "compared_engine_from/to, compared_trip_fuel_from/to": "the ranges those means cover",
}


def _best(r, column, system):
    """A flap option's best value of ``column`` (``best_<column>`` of flaps.csv, SI) in
    ``system``'s units."""
    return column_display(column, r[f"best_{column}"], system)[0]


def _penalties(study, r, system):
    """(extra trip fuel at equal engine size, extra engine size at equal trip fuel) of one
    row of the flap comparison in ``system``'s units (flaps.csv stays SI)."""
    eng = study.engine_size_column
    fuel = column_display("trip_fuel_kg", r["extra_trip_fuel_at_equal_engine_kg"], system)[0]
    engine = column_display(eng, r[f"extra_engine_at_equal_trip_fuel_{unit_of(eng)}"],
                            system)[0]
    return fuel, engine


def flaps_text_table(study, table, units=None) -> str:
    """A plain-text table of the flap comparison for the terminal, in ``units`` (``"si"``
    or ``"us"``; default :func:`~optimiser.display_units.current_system`)."""
    system = resolve(units)
    eng = study.engine_size_column
    _, fuel_unit = column_display("trip_fuel_kg", 0.0, system)
    _, unit = column_display(eng, 0.0, system)
    w_eng = max(12, len(f"best eng {unit}") + 1)       # SI: the widths as they always were
    w_extra = max(14, len(f"+eng @fuel {unit}") + 1)
    head = (f"{'flap':<22}{'feasible':>9}{'best fuel ' + fuel_unit:>13}"
            f"{'best eng ' + unit:>{w_eng}}"
            f"{'best MI':>8}{'front %':>8}{'HV':>7}{'+fuel @eng ' + fuel_unit:>14}"
            f"{'+eng @fuel ' + unit:>{w_extra}}")
    lines = [head]
    for _, r in table.iterrows():
        ref = " (reference)" if r["reference_option"] else ""
        fuel, engine = _penalties(study, r, system)
        lines.append(f"{r['flap']:<22}{'yes' if r['feasible_found'] else 'NO':>9}"
                     f"{_fmt(_best(r, 'trip_fuel_kg', system)):>13}"
                     f"{_fmt(_best(r, eng, system)):>{w_eng}}"
                     f"{_fmt(r['best_maintenance_index']) if 'best_maintenance_index' in r else '':>8}"
                     f"{100 * r['share_of_combined_front']:>8.0f}{r['hypervolume']:>7.3f}"
                     f"{_fmt(fuel):>14}{_fmt(engine):>{w_extra}}{ref}")
        if r["note"]:
            lines.append(f"    {r['flap']}: {r['note']}")
    lines.append("+fuel @eng: mean extra trip fuel against the reference option at equal engine "
                 "size (smallest trip fuel reachable with an engine no larger than E, over the "
                 "engine sizes from where both options have a design); +eng @fuel: the same "
                 "with engine size and trip fuel swapped; both along the trip fuel vs engine "
                 "size fronts, linear between front points")
    return "\n".join(lines)


def flaps_cells(study, table, system=None, percentages=True):
    """``(header, rows)`` of the flap comparison for flaps.md and the report page, numbers
    in ``system``'s units (default :func:`~optimiser.display_units.current_system`; flaps.csv
    stays SI); ``percentages`` adds each penalty as a percentage of the reference's."""
    system = resolve(system)
    eng = study.engine_size_column
    cols = list(study.objective_columns())
    _, fuel_unit = column_display("trip_fuel_kg", 0.0, system)
    _, eng_unit = column_display(eng, 0.0, system)
    head = ["flap", "feasible", *[f"best {display_heading(c, system)}" for c in cols],
            "share of combined front", "hypervolume",
            f"extra trip fuel at equal engine size [{fuel_unit}]",
            f"extra engine size at equal trip fuel [{eng_unit}]", "note"]
    rows = []
    for _, r in table.iterrows():
        name = r["flap"] + (" (reference)" if r["reference_option"] else "")
        feas = "yes" if r["feasible_found"] else \
            f"no: {r['failing_constraint']} {r['best_margin_failing']:+.1%} at best"
        fuel, engine = _penalties(study, r, system)
        pen_f, pen_e = _fmt(fuel), _fmt(engine)
        if percentages and not r["reference_option"]:
            if not math.isnan(r["extra_trip_fuel_at_equal_engine_pct"]):
                pen_f += f" ({r['extra_trip_fuel_at_equal_engine_pct']:+.1f} %)"
            if not math.isnan(r["extra_engine_at_equal_trip_fuel_pct"]):
                pen_e += f" ({r['extra_engine_at_equal_trip_fuel_pct']:+.1f} %)"
        rows.append([name, feas, *[_fmt(_best(r, c, system)) for c in cols],
                     f"{r['share_of_combined_front']:.0%}", f"{r['hypervolume']:.3f}",
                     pen_f, pen_e, r["note"]])
    return head, rows


def flaps_markdown(study, table, units=None) -> str:
    """The flap comparison as Markdown with the meaning of each column and the caution, in
    ``units`` (``"si"`` or ``"us"``; default
    :func:`~optimiser.display_units.current_system`)."""
    from ..evaluation import CAUTION
    system = resolve(units)
    head, rows = flaps_cells(study, table, system)
    doc = "\n".join(f"- `{k}`: {v}" for k, v in FLAP_COLUMNS_DOC.items())
    note = [] if system == SI else [
        "Numbers in US customary units; the column names and flaps.csv stay SI.", ""]
    return "\n".join([f"# {study.name}: flap options compared", "",
                      "Every option had its own NSGA-II with the same population, generations "
                      "and seed stream, under the same constraints.", "",
                      f"> **Caution.** {CAUTION}", "", *note, _md_table(head, rows), "",
                      "Columns of flaps.csv:", "", doc, "", "---", "", f"*{CAUTION}*", ""])
