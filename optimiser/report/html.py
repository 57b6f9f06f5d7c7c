"""The run report: one self-contained HTML file (``RUN_DIR/report.html``).

It holds the study's requirements, the static figures (matplotlib, embedded as base64 PNG),
the chosen compromise with its sheet and runners-up, the flap comparison and the caution,
and an interactive view of the front written in plain JavaScript and SVG (no external
library, no network): hovering a point shows that design's key numbers, the front can be
narrowed by ranges of each objective and by flap type, and clicking a design shows its sheet
and where it sits on its constraint diagram.

The constraint diagrams of the interactive view are computed here, one per flap option and
aspect ratio rounded to :data:`DIAGRAM_AR_STEP` (the zero-margin line of every constraint
and the region meeting all of them, on a :data:`DIAGRAM_GRID` x :data:`DIAGRAM_GRID` grid of
sized airplanes); the clicked design is marked at its own wing loading and loading.
"""

from __future__ import annotations

import html
import json
from pathlib import Path

import numpy as np

from ..columns import (COLUMN_DOCS, CONSTRAINT_LABELS, REPORT_KEY_COLUMNS, plot_label,
                       short_and_unit, unit_of)
from ..display_units import SI, column_display, current_system, display_label, to_display
from ..display_units import heading as display_heading
from . import palette
from .figures import svg_data_uri
from .page import PAGE_CSS, PAGE_TEMPLATE, page_script

DIAGRAM_AR_STEP = 0.05
"""Aspect-ratio step of the interactive constraint diagrams (designs share a diagram when
their aspect ratios round to the same step)."""
DIAGRAM_GRID = 56
"""Grid points per axis of each interactive constraint diagram."""


def latest_pick_settings(run):
    """The choice of the run's most recently written ``pick-*/choice.json`` (recomputed from
    its settings), else the knee; None when the run has no front."""
    from ..decide import choose, parse_limit
    if len(run.front) == 0:
        return None
    from ..runfolder import names
    picks = sorted(run.run_dir.glob(f"{names.PICK_DIR_PREFIX}*/{names.PICK_CHOICE}"),
                   key=lambda p: p.stat().st_mtime)
    if picks:
        from ..runfolder.reader import read_pick_choice
        s = read_pick_choice(picks[-1])
        limits = [parse_limit(t, list(run.front.columns)) for t in s["limits"]]
        return choose(run.study, run.front, s["method"], weights=s.get("weights"),
                      aspiration=s.get("aspiration"), limits=limits)
    return choose(run.study, run.front, "knee")


def _r(x, sig=5):
    x = float(x)
    if not np.isfinite(x):
        return None
    return float(f"{x:.{sig}g}")


def diagram_data(study, design, n=DIAGRAM_GRID):
    """Zero-margin lines and the all-met region of one design's constraint diagram as plain
    lists for the page: {"ar", "flap", "x": [lo, hi], "y": [lo, hi],
    "lines": [{"name", "label", "colour", "dash", "pts"}], "region": [[[x, y], ...], ...]}.
    The lines are traced as in the figures (:func:`optimiser.report.diagram.trace`), in the
    palette's colour and dash of each constraint."""
    import contourpy
    from ..sizing import active_constraints
    from .diagram import smallest_excess, trace
    from .plots import constraint_grid
    ws, ld, frame = constraint_grid(study, design, n)
    shape = (len(ld), len(ws))
    constraints = active_constraints(study.spec)
    required = dict(study.spec.requirements.margins)   # each line at its required margin
    mins = smallest_excess(frame, constraints, required)
    mins = mins.reshape(shape)
    lines = []
    shown = _diagram_points(study, current_system())
    for line in trace(study, design, ws, ld, frame, constraints, required):
        colour, dash = palette.constraint_style(line.name)
        segs = [[[_r(x), _r(y)] for x, y in shown(pts)] for pts in line.polylines]
        lines.append({"name": line.name, "label": CONSTRAINT_LABELS.get(line.name, line.name),
                      "colour": colour, "dash": palette.SVG_DASHES[dash], "pts": segs})
    region = []
    if np.nanmax(mins) >= 0:
        gen = contourpy.contour_generator(ws, ld, mins, fill_type="OuterOffset")
        points, offsets = gen.filled(0.0, 1e30)
        for pts, offs in zip(points, offsets):
            for a, b in zip(offs[:-1], offs[1:]):
                region.append([[_r(x), _r(y)] for x, y in shown(pts[a:b])])
    (x0, y0), (x1, y1) = shown(np.array([[ws[0], ld[0]], [ws[-1], ld[-1]]]))
    return {"ar": _r(design["aspect_ratio"], 4), "flap": str(design["flap"]),
            "x": [_r(x0), _r(x1)], "y": [_r(y0), _r(y1)],
            "lines": lines, "region": region}


def _diagram_points(study, system):
    """A function taking (k, 2) points of a constraint diagram (wing loading, loading; SI)
    to the page's units in ``system`` (SI: the points themselves)."""
    if system == SI:
        return lambda pts: pts

    def shown(pts):
        pts = np.asarray(pts, dtype=float)
        x = column_display("wing_loading_N_m2", pts[:, 0], system)[0]
        y = column_display(study.loading_column, pts[:, 1], system)[0]
        return np.column_stack([x, y])
    return shown


def _page_unit(column: str, system) -> str:
    """The unit the page shows a column's numbers in (the names stay the SI columns)."""
    return unit_of(column) if system == SI else column_display(column, 0.0, system)[1]


def _sheet_columns(study, front):
    from ..sizing import active_constraints
    system = current_system()
    cols = []
    inputs = ["wing_loading_N_m2", study.loading_column, "aspect_ratio"]
    objectives = list(study.objective_columns())
    for c in inputs:
        cols.append({"col": c, "section": "design variable", "unit": _page_unit(c, system),
                     "meaning": COLUMN_DOCS.get(c, "")})
    for c in objectives:
        cols.append({"col": c, "section": "objective", "unit": _page_unit(c, system),
                     "meaning": COLUMN_DOCS.get(c, "")})
    for c in active_constraints(study.spec):
        cols.append({"col": f"margin_{c}", "section": "margin", "unit": "%",
                     "meaning": CONSTRAINT_LABELS.get(c, c)})
    skip = set(inputs) | set(objectives)
    for c in front.columns:
        if c in COLUMN_DOCS and c not in skip and front[c].dtype.kind in "fi":
            cols.append({"col": c, "section": "sized", "unit": _page_unit(c, system),
                         "meaning": COLUMN_DOCS[c]})
    return cols


def page_data(run, choice):
    """Everything the interactive view needs, as one JSON-able dict."""
    from .sheet import BINDING_MARGIN
    study, front = run.study, run.front
    objectives = list(study.objective_columns())
    sheet_cols = _sheet_columns(study, front)
    colours = palette.flap_colours_hex(study.flaps)
    designs, diagrams, keys = [], {}, {}
    chosen = int(choice.design["front_row"]) if choice is not None else -1
    system = current_system()
    shown_front = front if system == SI else front.assign(**{
        c["col"]: column_display(c["col"], front[c["col"]].to_numpy(float), system)[0]
        for c in sheet_cols})
    for i, ((_, r), (_, r_shown)) in enumerate(zip(front.iterrows(), shown_front.iterrows())):
        key = f"{r['flap']}|{round(float(r['aspect_ratio']) / DIAGRAM_AR_STEP) * DIAGRAM_AR_STEP:.2f}"
        if key not in keys:
            rep = r.copy()
            rep["aspect_ratio"] = float(key.split("|")[1])
            keys[key] = len(diagrams)
            diagrams[key] = diagram_data(study, rep)
        designs.append({
            "id": i, "flap": str(r["flap"]), "diagram": key,
            "limiting": str(r.get("limiting_constraint", "")),
            "values": [_r(r_shown[c["col"]], 6) for c in sheet_cols],
            "chosen": i == chosen,
        })
    return {
        "study": study.name, "objectives": objectives,
        "labels": {c: plot_label(c) if system == SI else display_label(c, system)
                   for c in [*objectives, "wing_loading_N_m2", study.loading_column,
                             "takeoff_mass_kg"]},
        "units": {c: _page_unit(c, system) for c in objectives},
        "names": {c: short_and_unit(c)[0] for c in [*objectives, *REPORT_KEY_COLUMNS]},
        "key_columns": [c for c in REPORT_KEY_COLUMNS if c in front.columns],
        "loading_column": study.loading_column, "flaps": list(study.flaps),
        "colours": colours, "sheet_columns": sheet_cols, "designs": designs,
        "diagrams": diagrams, "binding_margin": BINDING_MARGIN, "chosen": chosen,
        "required": {c: float(r) for c, r in study.spec.requirements.margins},
    }


def _table(header, rows, cls="", row_keys=None):
    """An HTML table; ``row_keys`` (one per row) become each row's ``data-flap``."""
    h = "".join(f"<th>{html.escape(str(x))}</th>" for x in header)
    keys = row_keys or [None] * len(rows)
    body = "".join(("<tr>" if k is None else f'<tr data-flap="{html.escape(str(k))}">')
                   + "".join(f"<td>{html.escape(str(x))}</td>" for x in r) + "</tr>"
                   for r, k in zip(rows, keys))
    return f'<table class="{cls}"><thead><tr>{h}</tr></thead><tbody>{body}</tbody></table>'


def _requirements_html(study):
    """Every value the sizing used, section by section: as the study gave it (its units),
    in SI, and where a default came from (marked)."""
    from ..study_table import ORIGIN_GIVEN, resolved_entries, shown_text
    system = current_system()
    by_section = {}
    for e in resolved_entries(study):
        by_section.setdefault(e.section, []).append(e)
    parts = []
    for sec, entries in by_section.items():
        rows = "".join(
            f"<tr class='{'given' if e.origin == ORIGIN_GIVEN else 'default'}'>"
            f"<td>{html.escape(e.key)}</td><td>{html.escape(e.given or '')}</td>"
            f"<td>{html.escape(shown_text(e, system))}</td>"
            f"<td>{'' if e.origin == ORIGIN_GIVEN else 'default: ' + html.escape(e.origin)}</td>"
            f"<td>{html.escape(e.doc)}</td></tr>" for e in entries)
        parts.append(f"<div class='req'><h3>[{sec}]</h3><table class='resolved'><thead><tr>"
                     f"<th>key</th><th>as given</th><th>used ({_system_name(system)})</th>"
                     "<th>default applied</th>"
                     f"<th>meaning</th></tr></thead><tbody>{rows}</tbody></table></div>")
    variables = []
    for v in study.variables:
        (lower, upper), _ = column_display(v.column, (v.lower, v.upper), system)
        variables.append((v.column if system == SI else display_heading(v.column, system),
                          f"{lower:g} to {upper:g}" + (" (fixed)" if v.fixed else "")))
    variables.append(("flap", ", ".join(study.flaps)))
    variables.append(("objectives (minimised)", ", ".join(study.objectives)))
    parts.append("<div class='req'><h3>[variables] and [objectives]</h3>"
                 + _table(["variable", "bounds"], variables) + "</div>")
    return "<div class='reqs'>" + "".join(parts) + "</div>"


def _system_name(system) -> str:
    """How the page names the unit system of its numbers."""
    return "SI" if system == SI else "US customary"


def _with_unit(value, unit, fmt="g") -> str:
    """``value`` (SI, in ``unit``) with its unit in the page's units."""
    shown, shown_unit = to_display(value, unit)
    return f"{shown:{fmt}} {shown_unit}"


def _certification_html(study):
    """The certification basis and the numbers it sets."""
    from ..study_table import certification_entries
    cert = study.spec.certification
    rows = [(meaning, _with_unit(value, unit) if isinstance(value, float) and unit
             else f"{value:g}" if isinstance(value, float) else str(value))
            for _, value, unit, meaning in certification_entries(study)]
    rows += [("screen height at departure",
              _with_unit(study.spec.departure.obstacle_height_m, "m")),
             ("screen height at destination",
              _with_unit(study.spec.destination.obstacle_height_m, "m")),
             ("takeoff mass limit of the basis",
              _with_unit(study.spec.requirements.max_takeoff_mass_kg, "kg", ".0f"))]
    skipped = [f"{n}: {r}" for n, r in study.spec.requirements.skip_checks]
    if skipped:
        rows.append(("checks switched off by the study", "; ".join(skipped)))
    return (f"<p>Certification basis <b>{html.escape(cert.basis)}</b>; the rules it implies, as "
            "the model applies them:</p>" + _table(["rule", "value"], rows, "kv"))


def _uncertainty_html(study):
    """The [uncertainty] table (factors on the study's values), or a sentence."""
    from ..uncertainty import UNCERTAIN_CONDITIONS
    unc = study.uncertainty
    if not unc:
        return "<p>The study gives no [uncertainty] table.</p>"
    def unit(e):
        return f" {e['unit']}" if e.get("unit") else ""  # additive conditions, in SI

    rows = [(key, e["distribution"], ", ".join(f"{p} = {v:g}{unit(e)}" for p, v in e.items()
                                              if p not in ("distribution", "unit")))
            for key, e in unc["assumptions"].items()]
    additive = any(e.get("unit") for e in unc["assumptions"].values())
    conditions = any(key in UNCERTAIN_CONDITIONS for key in unc["assumptions"])
    return (f"<p>{unc['samples']} samples"
            + (f", seed {unc['seed']}" if unc.get("seed") is not None else "")
            + "; each a factor on the study's value (1 = unchanged)"
            + ("; a temperature change or a wind, with its unit, is added to the study's "
               "conditions (0 = unchanged)" if additive else "") + ".</p>"
            + _table(["assumption or condition" if conditions else "assumption",
                      "distribution", "parameters"], rows))


def _run_sections(run) -> list[str]:
    """The run's summary and the requirements as given."""
    study, info = run.study, run.info
    summary = [("study", f"{study.name}: {study.description}"),
               ("search", info.get("method", "")),
               ("seed", info.get("seed")), ("evaluations", info.get("n_evaluations")),
               ("feasible evaluations", info.get("n_feasible")),
               ("front designs", info.get("front_size")),
               ("ended", info.get("termination_text", "")),
               ("result", info.get("message", ""))]
    return ["<section id='run'><h2>The run</h2>" + _table(["", ""], summary, "kv")
            + "</section>",
            "<section id='requirements'><h2>Requirements and assumptions</h2>"
            "<p>Every value the sizing used: as the study file gives it (its own units), in "
            + ("SI" if current_system() == SI else "US customary units")
            + ", and, where the study left it out, the default applied and where it came "
            "from.</p>" + _requirements_html(study) + "</section>",
            "<section id='certification'><h2>Certification basis</h2>"
            + _certification_html(study) + "</section>",
            "<section id='uncertainty'><h2>Uncertainty</h2>" + _uncertainty_html(study)
            + "</section>"]


def _front_sections(run) -> list[str]:
    """The fronts' figures and the interactive explorer (nothing without a front)."""
    from ..runfolder.archive import read_archive, read_history
    from . import plots
    study, front = run.study, run.front
    if not len(front):
        return []
    history = read_history(run.run_dir) if run.history_path.is_file() else None
    F = read_archive(run.run_dir, study.objective_columns(), feasible_only=True)\
        .to_numpy(float)
    figs = [("objectives", svg_data_uri(plots.objective_scatter(
        study, front, F, run.info.get("started_utc"))))]
    if history is not None and len(history):
        figs.append(("convergence", svg_data_uri(plots.convergence(
            study, history, run.info.get("started_utc")))))
    return ["<section id='fronts'><h2>Fronts</h2>" + "".join(
        f"<figure><img alt='{n}' src='{src}'></figure>" for n, src in figs) + "</section>",
        "<section id='explore'><h2>Explore the front</h2>"
        "<p>Hover a point for its key numbers; narrow the front by objective ranges and "
        "flap type; click a design for its sheet and its place on the constraint diagram."
        "</p><div id='controls'></div><div id='explore-row'><div id='front-box'>"
        "<svg id='front-svg' width='660' height='440'></svg><div id='shown-count'></div>"
        "</div><div id='diagram-box'><svg id='diagram-svg' width='600' height='440'></svg>"
        "</div></div><div id='tooltip' class='tooltip'></div>"
        "<h3 id='sheet-title'>Design sheet</h3><div id='sheet'></div></section>"]


def _choice_section(run, choice) -> str:
    """The chosen compromise: its numbers, margins, constraint diagram and runners-up."""
    from ..decide import runners_up
    from . import plots, sheet
    esc = html.escape
    study = run.study
    d = choice.design
    runners = runners_up(study, choice)
    fig = plots.design_constraint_diagram(study, d, label="chosen design", front=run.front,
                                          run_utc=run.info.get("started_utc"))
    system = current_system()
    tab = sheet.design_sheet(study, d)
    mar = tab[tab["section"] == "margin"]
    if system != SI:
        tab = sheet._shown_in(tab, system)
    bind = sheet.binding_constraints(study, d)
    cols = list(study.objective_columns())
    run_rows = [[r["rank"], r["flap"], *[sheet._fmt(column_display(c, r[c], system)[0])
                                         for c in cols],
                 r["trade"] if system == SI else sheet.us_trade(study, d, r, system)]
                for _, r in runners.iterrows()]
    mass, mass_unit = column_display("takeoff_mass_kg", d["takeoff_mass_kg"], system)
    return ("<section id='choice'><h2>Chosen compromise</h2>"
            f"<p>Picked by {esc(choice.describe())}.</p>"
            + _table(["quantity", "value", "unit"],
                     [(short_and_unit(q)[0], sheet._fmt(v), u) for q, v, u in
                      tab[tab["section"].isin(["design variable", "objective (minimised)"])]
                      [["quantity", "value", "unit"]].itertuples(index=False)]
                     + [("takeoff mass", sheet._fmt(mass), mass_unit)], "kv")
            + f"<p>Binding constraints (margin below {sheet.BINDING_MARGIN:.0%}): "
            + esc(", ".join(b.replace("_", " ") for b in bind) if bind else "none") + ".</p>"
            + _table(["constraint", "margin", "status"],
                     [(m, f"{float(v):+.1%}", s) for m, v, s in
                      zip(mar["meaning"], mar["value"], mar["status"])])
            + "<figure><img alt='constraint diagram of the chosen design' "
            f"src='{svg_data_uri(fig)}'></figure><h3>Runners-up</h3>"
            + _table(["rank", "flap", *[display_heading(c, system)
                                        for c in cols], "what it trades against the choice"],
                     run_rows) + "</section>")


def _flaps_section(run) -> str:
    """The flap options compared under the run's constraints and budget."""
    from ..flaps import compare_flaps
    from . import plots, sheet
    study = run.study
    table, fronts = compare_flaps(run)
    head, rows = sheet.flaps_cells(study, table, percentages=False)
    return ("<section id='flaps'><h2>Flap options compared</h2>"
            "<p>Each flap option had its own NSGA-II with the same population, generations and "
            "seed stream, under the same constraints. Penalties are against the option with the "
            "best trip fuel vs engine size front (the reference), along those fronts: "
            "the mean, over the engine sizes from where both options have a design, of the "
            "smallest trip fuel each reaches with an engine no larger than that (and the same "
            "with the roles swapped); positive = worse than the reference. Click an option's "
            "row to show only its designs in the front explorer above (\u2018show all\u2019 "
            "there brings the others back).</p>"
            + _table(head, rows, "flaps", row_keys=list(table["flap"]))
            + "<figure><img alt='flap fronts' src='"
            + svg_data_uri(plots.flap_fronts(study, fronts, table, run.info.get("started_utc")))
            + "'></figure></section>")


def write_report(run, choice=None, flaps=True) -> Path:
    """Write ``RUN_DIR/report.html`` (replacing it) and return its path."""
    from ..evaluation import CAUTION
    from ..runfolder import names
    from ..runfolder.files import write_atomic
    study = run.study
    sections = _run_sections(run) + _front_sections(run)
    if current_system() != SI:
        sections.insert(0, "<p class='units'>Numbers in US customary units (the tables, figures and "
                        "the front explorer); the column names and the run's CSV files stay "
                        "SI.</p>")
    if choice is not None:
        sections.append(_choice_section(run, choice))
    if flaps and run.evaluations_path.is_file():
        sections.append(_flaps_section(run))
    data = page_data(run, choice) if len(run.front) else None
    caution = f"<div class='caution'><b>Caution.</b> {html.escape(CAUTION, quote=False)}</div>"
    page = PAGE_TEMPLATE.format(
        title=html.escape(f"{study.name}: run report"), caution=caution, css=PAGE_CSS,
        body="\n".join(sections),
        data=json.dumps(data, separators=(",", ":")).replace("</", "<\\/"),
        script=page_script(to_display(1.0, "kg")[1]) if data else "")
    path = run.run_dir / names.REPORT
    try:
        write_atomic(path, page.encode("utf-8"))
    except OSError as exc:
        from ..errors import RunError
        raise RunError(f"{path}: cannot write the report ({exc.strerror}); expected a "
                       "writable folder with free space (any previous report is left as it "
                       "was)") from None
    return path
