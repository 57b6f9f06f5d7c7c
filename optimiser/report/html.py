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

from ..columns import (COLUMN_DOCS, CONSTRAINT_LABELS, REPORT_KEY_COLUMNS, heading,
                       plot_label, short_and_unit, unit_of)
from . import palette
from .figures import png_data_uri

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
        s = json.loads(picks[-1].read_text("utf-8"))
        limits = [parse_limit(t, list(run.front.columns)) for t in s.get("limits", [])]
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
    lists for the page: {"ar", "flap", "mass_kg", "x": [lo, hi], "y": [lo, hi],
    "lines": [{"name", "label", "pts"}], "region": [[[x, y], ...], ...]}."""
    import contourpy
    from ..sizing import active_constraints
    from .plots import constraint_grid
    ws, ld, frame = constraint_grid(study, design, n)
    shape = (len(ld), len(ws))
    lines = []
    mins = None
    for c in active_constraints(study.spec):
        M = frame[f"margin_{c}"].to_numpy(float).reshape(shape)
        mins = M if mins is None else np.minimum(mins, M)
        if not (np.nanmin(M) < 0 < np.nanmax(M)):
            continue
        gen = contourpy.contour_generator(ws, ld, M)
        segs = [[[_r(x), _r(y)] for x, y in seg] for seg in gen.lines(0.0) if len(seg) > 1]
        lines.append({"name": c, "label": CONSTRAINT_LABELS.get(c, c), "pts": segs})
    region = []
    if np.nanmax(mins) >= 0:
        gen = contourpy.contour_generator(ws, ld, mins, fill_type="OuterOffset")
        points, offsets = gen.filled(0.0, 1e30)
        for pts, offs in zip(points, offsets):
            for a, b in zip(offs[:-1], offs[1:]):
                region.append([[_r(x), _r(y)] for x, y in pts[a:b]])
    return {"ar": _r(design["aspect_ratio"], 4), "flap": str(design["flap"]),
            "x": [_r(ws[0]), _r(ws[-1])], "y": [_r(ld[0]), _r(ld[-1])],
            "lines": lines, "region": region}


def _sheet_columns(study, front):
    from ..sizing import active_constraints
    cols = []
    inputs = ["wing_loading_N_m2", study.loading_column, "aspect_ratio"]
    objectives = list(study.objective_columns())
    for c in inputs:
        cols.append({"col": c, "section": "design variable", "unit": unit_of(c),
                     "meaning": COLUMN_DOCS.get(c, "")})
    for c in objectives:
        cols.append({"col": c, "section": "objective", "unit": unit_of(c),
                     "meaning": COLUMN_DOCS.get(c, "")})
    for c in active_constraints(study.spec):
        cols.append({"col": f"margin_{c}", "section": "margin", "unit": "%",
                     "meaning": CONSTRAINT_LABELS.get(c, c)})
    skip = set(inputs) | set(objectives)
    for c in front.columns:
        if c in COLUMN_DOCS and c not in skip and front[c].dtype.kind in "fi":
            cols.append({"col": c, "section": "sized", "unit": unit_of(c),
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
    for i, (_, r) in enumerate(front.iterrows()):
        key = f"{r['flap']}|{round(float(r['aspect_ratio']) / DIAGRAM_AR_STEP) * DIAGRAM_AR_STEP:.2f}"
        if key not in keys:
            rep = r.copy()
            rep["aspect_ratio"] = float(key.split("|")[1])
            keys[key] = len(diagrams)
            diagrams[key] = diagram_data(study, rep)
        designs.append({
            "id": i, "flap": str(r["flap"]), "diagram": key,
            "limiting": str(r.get("limiting_constraint", "")),
            "values": [_r(r[c["col"]], 6) for c in sheet_cols],
            "chosen": i == chosen,
        })
    return {
        "study": study.name, "objectives": objectives,
        "labels": {c: plot_label(c) for c in [*objectives, "wing_loading_N_m2",
                                              study.loading_column, "takeoff_mass_kg"]},
        "units": {c: unit_of(c) for c in objectives},
        "names": {c: short_and_unit(c)[0] for c in [*objectives, *REPORT_KEY_COLUMNS]},
        "key_columns": [c for c in REPORT_KEY_COLUMNS if c in front.columns],
        "loading_column": study.loading_column, "flaps": list(study.flaps),
        "colours": colours, "sheet_columns": sheet_cols, "designs": designs,
        "diagrams": diagrams, "binding_margin": BINDING_MARGIN, "chosen": chosen,
    }


def _table(header, rows, cls=""):
    h = "".join(f"<th>{html.escape(str(x))}</th>" for x in header)
    body = "".join("<tr>" + "".join(f"<td>{html.escape(str(x))}</td>" for x in r) + "</tr>"
                   for r in rows)
    return f'<table class="{cls}"><thead><tr>{h}</tr></thead><tbody>{body}</tbody></table>'


def _requirements_html(study):
    try:
        import tomllib
    except ModuleNotFoundError:  # pragma: no cover
        import tomli as tomllib
    data = tomllib.loads(study.text)
    parts = []
    for sec in ("requirements", "departure", "destination", "mission", "weights", "propulsion",
                "variables", "objectives"):
        if sec in data and isinstance(data[sec], dict):
            rows = [(k, ", ".join(map(str, v)) if isinstance(v, list) else v)
                    for k, v in data[sec].items() if not isinstance(v, dict)]
            parts.append(f"<div class='req'><h3>[{sec}]</h3>{_table(['key', 'value'], rows)}</div>")
    return "<div class='reqs'>" + "".join(parts) + "</div>"


def write_report(run, choice=None, flaps=True) -> Path:
    """Write ``RUN_DIR/report.html`` (replacing it) and return its path."""
    from ..decide import runners_up
    from ..flaps import compare_flaps
    from ..evaluation import CAUTION
    from ..runfolder import names
    from ..runfolder.archive import read_archive, read_history
    from ..runfolder.files import write_atomic
    from . import plots, sheet
    study, front = run.study, run.front
    info = run.info
    esc = html.escape
    sections = []
    summary = [("study", f"{study.name}: {study.description}"),
               ("search", info.get("method", "")),
               ("seed", info.get("seed")), ("evaluations", info.get("n_evaluations")),
               ("feasible evaluations", info.get("n_feasible")),
               ("front designs", info.get("front_size")),
               ("ended", info.get("termination_text", "")),
               ("result", info.get("message", ""))]
    sections.append("<section id='run'><h2>The run</h2>" + _table(["", ""], summary, "kv")
                    + "</section>")
    sections.append("<section id='requirements'><h2>Requirements and assumptions</h2>"
                    "<p>As given in the study file (every unit as written there).</p>"
                    + _requirements_html(study) + "</section>")
    history = read_history(run.run_dir) if run.history_path.is_file() else None
    if len(front):
        F = read_archive(run.run_dir, study.objective_columns(), feasible_only=True)\
            .to_numpy(float)
        figs = [("objectives", png_data_uri(plots.objective_scatter(study, front, F)))]
        if history is not None and len(history):
            figs.append(("convergence", png_data_uri(plots.convergence(study, history))))
        sections.append("<section id='fronts'><h2>Fronts</h2>" + "".join(
            f"<figure><img alt='{n}' src='{src}'></figure>" for n, src in figs) + "</section>")
        sections.append(
            "<section id='explore'><h2>Explore the front</h2>"
            "<p>Hover a point for its key numbers; narrow the front by objective ranges and "
            "flap type; click a design for its sheet and its place on the constraint diagram."
            "</p><div id='controls'></div><div id='explore-row'><div id='front-box'>"
            "<svg id='front-svg' width='660' height='440'></svg><div id='shown-count'></div>"
            "</div><div id='diagram-box'><svg id='diagram-svg' width='600' height='440'></svg>"
            "</div></div><div id='tooltip' class='tooltip'></div>"
            "<h3 id='sheet-title'>Design sheet</h3><div id='sheet'></div></section>")
    if choice is not None:
        d = choice.design
        runners = runners_up(study, choice)
        fig = plots.design_constraint_diagram(study, d, label="chosen design")
        tab = sheet.design_sheet(study, d)
        mar = tab[tab["section"] == "margin"]
        bind = sheet.binding_constraints(study, d)
        cols = list(study.objective_columns())
        run_rows = [[r["rank"], r["flap"], *[sheet._fmt(r[c]) for c in cols], r["trade"]]
                    for _, r in runners.iterrows()]
        sections.append(
            "<section id='choice'><h2>Chosen compromise</h2>"
            f"<p>Picked by {esc(choice.describe())}.</p>"
            + _table(["quantity", "value", "unit"],
                     [(short_and_unit(q)[0], sheet._fmt(v), u) for q, v, u in
                      tab[tab["section"].isin(["design variable", "objective (minimised)"])]
                      [["quantity", "value", "unit"]].itertuples(index=False)]
                     + [("takeoff mass", sheet._fmt(d["takeoff_mass_kg"]), "kg")], "kv")
            + f"<p>Binding constraints (margin below {sheet.BINDING_MARGIN:.0%}): "
            + esc(", ".join(b.replace("_", " ") for b in bind) if bind else "none") + ".</p>"
            + _table(["constraint", "margin", "status"],
                     [(m, f"{float(v):+.1%}", s) for m, v, s in
                      zip(mar["meaning"], mar["value"], mar["status"])])
            + "<figure><img alt='constraint diagram of the chosen design' "
            f"src='{png_data_uri(fig)}'></figure><h3>Runners-up</h3>"
            + _table(["rank", "flap", *[heading(c)
                                        for c in cols], "what it trades against the choice"],
                     run_rows) + "</section>")
    if flaps and run.evaluations_path.is_file():
        table, fronts = compare_flaps(run)
        eng_unit = unit_of(study.engine_size_column)
        rows = []
        for _, r in table.iterrows():
            rows.append([r["flap"] + (" (reference)" if r["reference_option"] else ""),
                         "yes" if r["feasible_found"] else
                         f"no: {r['failing_constraint']} {r['best_margin_failing']:+.1%} at best",
                         *[sheet._fmt(r[f"best_{c}"]) for c in study.objective_columns()],
                         f"{r['share_of_combined_front']:.0%}", f"{r['hypervolume']:.3f}",
                         sheet._fmt(r["extra_trip_fuel_at_equal_engine_kg"]),
                         sheet._fmt(r[f"extra_engine_at_equal_trip_fuel_{eng_unit}"]),
                         r["note"]])
        head = ["flap", "feasible", *[f"best {heading(c)}"
                                      for c in study.objective_columns()],
                "share of combined front", "hypervolume",
                "extra trip fuel at equal engine size [kg]",
                f"extra engine size at equal trip fuel [{eng_unit}]", "note"]
        sections.append(
            "<section id='flaps'><h2>Flap options compared</h2>"
            "<p>Each flap option had its own NSGA-II with the same population, generations and "
            "seed stream, under the same constraints. Penalties are against the option with the "
            "best trip fuel vs engine size front (the reference), along those fronts: "
            "the mean, over the engine sizes from where both options have a design, of the "
            "smallest trip fuel each reaches with an engine no larger than that (and the same "
            "with the roles swapped); positive = worse than the reference.</p>"
            + _table(head, rows, "flaps") + f"<figure><img alt='flap fronts' src='"
            f"{png_data_uri(plots.flap_fronts(study, fronts, table))}'></figure></section>")
    data = page_data(run, choice) if len(front) else None
    caution = f"<div class='caution'><b>Caution.</b> {esc(CAUTION, quote=False)}</div>"
    page = _TEMPLATE.format(
        title=esc(f"{study.name}: run report"), caution=caution, css=_CSS,
        body="\n".join(sections),
        data=json.dumps(data, separators=(",", ":")).replace("</", "<\\/"),
        script=_SCRIPT if data else "")
    path = run.run_dir / names.REPORT
    write_atomic(path, page.encode("utf-8"))
    return path


_TEMPLATE = """<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8">
<title>{title}</title>
<style>{css}</style></head>
<body>
<h1>{title}</h1>
{caution}
{body}
<footer>{caution}</footer>
<script id="page-data" type="application/json">{data}</script>
<script>{script}</script>
</body></html>
"""

_CSS = """
body{font-family:system-ui,-apple-system,Segoe UI,Helvetica,Arial,sans-serif;margin:1.2em 2em;
color:#222;max-width:1300px}
h1{font-size:1.5em} h2{border-bottom:1px solid #ccc;padding-bottom:.2em;margin-top:1.6em}
table{border-collapse:collapse;font-size:.85em;margin:.5em 0}
th,td{border:1px solid #ddd;padding:.2em .5em;text-align:left;vertical-align:top}
th{background:#f3f3f3} table.kv td:first-child{font-weight:600}
.caution{background:#fff4e0;border:1px solid #e0a040;padding:.6em .9em;margin:1em 0}
figure{margin:.8em 0} figure img{max-width:100%;border:1px solid #eee}
.reqs{display:flex;flex-wrap:wrap;gap:1em}.req h3{font-size:.95em;margin:.3em 0}
#controls{display:flex;flex-wrap:wrap;gap:1.2em;align-items:flex-start;margin:.5em 0;
font-size:.85em}
#controls fieldset{border:1px solid #ccc;padding:.3em .6em}
#controls input[type=number]{width:7em}
#explore-row{display:flex;flex-wrap:wrap;gap:1em}
svg{background:#fff;border:1px solid #ddd;font-size:11px}
circle.pt{cursor:pointer;stroke:#333;stroke-width:.5}
circle.pt.selected{stroke:#000;stroke-width:2.5}
.tooltip{position:absolute;display:none;background:rgba(255,255,255,.97);border:1px solid #888;
padding:.4em .6em;font-size:12px;pointer-events:none;box-shadow:2px 2px 6px rgba(0,0,0,.2)}
.status-binding{color:#b35900;font-weight:600}.status-violated{color:#c00;font-weight:600}
#shown-count{font-size:.85em;margin:.3em 0}
"""

_SCRIPT = r"""
(function(){
"use strict";
const D = JSON.parse(document.getElementById('page-data').textContent);
const NS = 'http://www.w3.org/2000/svg';
const colIndex = {}; D.sheet_columns.forEach((c, i) => { colIndex[c.col] = i; });
const val = (d, col) => d.values[colIndex[col]];
const state = {x: D.objectives[1] || D.objectives[0], y: D.objectives[0], min: {}, max: {},
               flaps: new Set(D.flaps), selected: D.chosen >= 0 ? D.chosen : 0};
function fmt(v){ if (v === null || v === undefined || isNaN(v)) return '–';
  const a = Math.abs(v); if (a === 0) return '0';
  if (a >= 1e5 || a < 1e-3) return v.toPrecision(4);
  if (a < 10) return String(Number(v.toPrecision(4)));
  return a < 1e4 ? v.toFixed(1) : v.toFixed(0); }
function el(tag, attrs, parent){ const e = document.createElementNS(NS, tag);
  for (const k in attrs) e.setAttribute(k, attrs[k]); if (parent) parent.appendChild(e); return e; }
function h(tag, attrs, text, parent){ const e = document.createElement(tag);
  for (const k in attrs) e.setAttribute(k, attrs[k]); if (text !== undefined) e.textContent = text;
  if (parent) parent.appendChild(e); return e; }
function extent(vals){ let lo = Math.min(...vals), hi = Math.max(...vals);
  if (!(hi > lo)) { const p = Math.max(Math.abs(lo) * 0.05, 1); lo -= p; hi += p; }
  const pad = 0.05 * (hi - lo); return [lo - pad, hi + pad]; }
function ticks(lo, hi, n){ const step0 = (hi - lo) / n, mag = Math.pow(10, Math.floor(Math.log10(step0)));
  const step = [1, 2, 2.5, 5, 10].map(m => m * mag).find(s => s >= step0);
  const out = []; for (let t = Math.ceil(lo / step) * step; t <= hi + 1e-9 * step; t += step) out.push(t);
  return out; }
function axes(svg, box, xr, yr, xlabel, ylabel){
  const W = +svg.getAttribute('width'), H = +svg.getAttribute('height');
  const sx = v => box.l + (v - xr[0]) / (xr[1] - xr[0]) * (W - box.l - box.r);
  const sy = v => H - box.b - (v - yr[0]) / (yr[1] - yr[0]) * (H - box.t - box.b);
  el('rect', {x: box.l, y: box.t, width: W - box.l - box.r, height: H - box.t - box.b,
              fill: 'none', stroke: '#999'}, svg);
  const tf = t => String(Number(t.toPrecision(6)));
  ticks(xr[0], xr[1], 6).forEach(t => { const x = sx(t);
    el('line', {x1: x, x2: x, y1: box.t, y2: H - box.b, stroke: '#eee'}, svg);
    const tx = el('text', {x: x, y: H - box.b + 14, 'text-anchor': 'middle'}, svg); tx.textContent = tf(t); });
  ticks(yr[0], yr[1], 6).forEach(t => { const y = sy(t);
    el('line', {x1: box.l, x2: W - box.r, y1: y, y2: y, stroke: '#eee'}, svg);
    const ty = el('text', {x: box.l - 5, y: y + 4, 'text-anchor': 'end'}, svg); ty.textContent = tf(t); });
  const xl = el('text', {x: (box.l + W - box.r) / 2, y: H - box.b + 32, 'text-anchor': 'middle',
                         'font-size': '12', class: 'xlabel'}, svg); xl.textContent = xlabel;
  const yl = el('text', {x: 14, y: (box.t + H - box.b) / 2, 'text-anchor': 'middle', 'font-size': '12',
                         transform: `rotate(-90 14 ${(box.t + H - box.b) / 2})`, class: 'ylabel'}, svg);
  yl.textContent = ylabel; return [sx, sy]; }

function visible(d){ if (!state.flaps.has(d.flap)) return false;
  for (const c of D.objectives){ const v = val(d, c);
    if (state.min[c] !== undefined && v < state.min[c]) return false;
    if (state.max[c] !== undefined && v > state.max[c]) return false; }
  return true; }

function buildControls(){
  const box = document.getElementById('controls');
  const fs = h('fieldset', {}, undefined, box); h('legend', {}, 'axes', fs);
  for (const [axis, label] of [['x', 'horizontal'], ['y', 'vertical']]){
    const lab = h('label', {}, label + ' ', fs);
    const s = h('select', {id: 'axis-' + axis}, undefined, lab);
    D.objectives.forEach(c => { const o = h('option', {value: c}, D.labels[c], s);
      if (c === state[axis]) o.selected = true; });
    s.addEventListener('change', () => { state[axis] = s.value; drawFront(); });
    h('br', {}, undefined, fs); }
  const fr = h('fieldset', {}, undefined, box); h('legend', {}, 'objective ranges (blank = no limit)', fr);
  D.objectives.forEach(c => {
    const vals = D.designs.map(d => val(d, c));
    const row = h('div', {}, undefined, fr);
    h('span', {}, D.labels[c] + ': ', row);
    for (const side of ['min', 'max']){
      const inp = h('input', {type: 'number', id: side + '-' + c, step: 'any',
        placeholder: fmt(side === 'min' ? Math.min(...vals) : Math.max(...vals))}, undefined, row);
      inp.addEventListener('input', () => { const v = parseFloat(inp.value);
        if (isNaN(v)) delete state[side][c]; else state[side][c] = v; drawFront(); });
      if (side === 'min') h('span', {}, ' to ', row); } });
  const ff = h('fieldset', {}, undefined, box); h('legend', {}, 'flap type', ff);
  D.flaps.forEach(f => { const lab = h('label', {style: 'display:block;color:' + D.colours[f]}, undefined, ff);
    const cb = h('input', {type: 'checkbox', id: 'flap-' + f, value: f}, undefined, lab); cb.checked = true;
    lab.appendChild(document.createTextNode(' ' + f));
    cb.addEventListener('change', () => { if (cb.checked) state.flaps.add(f); else state.flaps.delete(f);
      drawFront(); }); });
  const reset = h('button', {id: 'reset', type: 'button'}, 'show all', box);
  reset.addEventListener('click', () => { state.min = {}; state.max = {}; state.flaps = new Set(D.flaps);
    document.querySelectorAll('#controls input[type=number]').forEach(i => { i.value = ''; });
    document.querySelectorAll('#controls input[type=checkbox]').forEach(i => { i.checked = true; });
    drawFront(); }); }

const tip = document.getElementById('tooltip');
function showTip(ev, d){
  const lines = [`<b>${d.flap}</b>${d.chosen ? ' (chosen)' : ''}`];
  D.objectives.forEach(c => lines.push(`${D.labels[c]}: ${fmt(val(d, c))}`));
  lines.push(`${D.labels.wing_loading_N_m2}: ${fmt(val(d, 'wing_loading_N_m2'))}`);
  lines.push(`${D.labels[D.loading_column]}: ${fmt(val(d, D.loading_column))}`);
  lines.push(`aspect ratio [-]: ${fmt(val(d, 'aspect_ratio'))}`);
  D.key_columns.forEach(c => { const u = D.sheet_columns[colIndex[c]].unit;
    lines.push(`${D.names[c]}${u ? ' [' + u + ']' : ''}: ${fmt(val(d, c))}`); });
  lines.push(`closest constraint: ${d.limiting.replace(/_/g, ' ')}`);
  tip.innerHTML = lines.join('<br>'); tip.style.display = 'block';
  tip.style.left = (ev.pageX + 14) + 'px'; tip.style.top = (ev.pageY + 10) + 'px'; }

function drawFront(){
  const svg = document.getElementById('front-svg'); svg.innerHTML = '';
  const xs = D.designs.map(d => val(d, state.x)), ys = D.designs.map(d => val(d, state.y));
  const [sx, sy] = axes(svg, {l: 62, r: 150, t: 14, b: 42}, extent(xs), extent(ys),
                        D.labels[state.x], D.labels[state.y]);
  let shown = 0;
  D.designs.forEach(d => { if (!visible(d)) return; shown++;
    const c = el('circle', {cx: sx(val(d, state.x)), cy: sy(val(d, state.y)), r: d.chosen ? 7 : 5,
      fill: D.colours[d.flap], class: 'pt' + (d.id === state.selected ? ' selected' : ''),
      'data-id': d.id, 'data-flap': d.flap}, svg);
    if (d.chosen) c.setAttribute('stroke-dasharray', '2,1');
    c.addEventListener('mouseenter', ev => showTip(ev, d));
    c.addEventListener('mousemove', ev => showTip(ev, d));
    c.addEventListener('mouseleave', () => { tip.style.display = 'none'; });
    c.addEventListener('click', () => select(d.id)); });
  const lx = +svg.getAttribute('width') - 140;
  const lt = el('text', {x: lx, y: 24, 'font-weight': 'bold'}, svg); lt.textContent = 'flap type';
  let ly = 40; D.flaps.forEach(f => { if (!D.designs.some(d => d.flap === f)) return;
    el('circle', {cx: lx + 4, cy: ly - 4, r: 4, fill: D.colours[f],
      'fill-opacity': state.flaps.has(f) ? 1 : 0.2}, svg);
    const t = el('text', {x: lx + 12, y: ly}, svg); t.textContent = f; ly += 15; });
  document.getElementById('shown-count').textContent =
    `${shown} of ${D.designs.length} front designs shown` +
    (D.chosen >= 0 ? ' (the larger dashed point is the chosen compromise)' : ''); }

function drawDiagram(d){
  const g = D.diagrams[d.diagram], svg = document.getElementById('diagram-svg'); svg.innerHTML = '';
  const legendH = 14 * g.lines.length + 22;
  svg.setAttribute('height', 400 + legendH);
  const [sx, sy] = axes(svg, {l: 58, r: 12, t: 44, b: 42 + legendH}, g.x, g.y, D.labels.wing_loading_N_m2,
                        D.labels[D.loading_column]);
  const path = pts => pts.map((p, i) => (i ? 'L' : 'M') + sx(p[0]).toFixed(1) + ' ' + sy(p[1]).toFixed(1)).join('');
  if (g.region.length) el('path', {d: g.region.map(p => path(p) + 'Z').join(''), fill: '__REGION_FILL__',
    'fill-opacity': __REGION_ALPHA__, 'fill-rule': 'evenodd', class: 'region'}, svg);
  const pal = __LINE_COLOURS__;
  let ly = 400 + 22;
  g.lines.forEach((ln, k) => { const m = val(d, 'margin_' + ln.name);
    const bind = m < D.binding_margin, col = pal[k % pal.length];
    ln.pts.forEach(seg => el('path', {d: path(seg), fill: 'none', stroke: col,
      'stroke-width': bind ? 3 : 1.3, class: 'cline', 'data-constraint': ln.name}, svg));
    el('line', {x1: 64, x2: 84, y1: ly - 4, y2: ly - 4, stroke: col, 'stroke-width': bind ? 3 : 1.3}, svg);
    const t = el('text', {x: 90, y: ly, 'font-size': '11'}, svg);
    t.textContent = ln.label + ` (margin ${(100 * m).toFixed(1)} %${bind ? ', binding' : ''})`; ly += 14; });
  const x = sx(val(d, 'wing_loading_N_m2')), y = sy(val(d, D.loading_column));
  const star = [];
  for (let i = 0; i < 10; i++){ const a = Math.PI / 2 + i * Math.PI / 5, rr = i % 2 ? 4 : 10;
    star.push((x + rr * Math.cos(a)).toFixed(1) + ',' + (y - rr * Math.sin(a)).toFixed(1)); }
  el('polygon', {points: star.join(' '), fill: '#000', class: 'design-marker', 'data-id': d.id}, svg);
  const t1 = el('text', {x: 58, y: 14, 'font-size': '12', 'font-weight': 'bold'}, svg);
  t1.textContent = `constraint diagram: flap ${g.flap}, aspect ratio ${g.ar}`;
  const t2 = el('text', {x: 58, y: 29, 'font-size': '10'}, svg);
  t2.textContent = `star: design ${d.id} at its own sized takeoff mass ${fmt(val(d, 'takeoff_mass_kg'))} kg ` +
    `(its aspect ratio ${fmt(val(d, 'aspect_ratio'))})`;
  const t3 = el('text', {x: 58, y: 40, 'font-size': '10'}, svg);
  t3.textContent = 'lines: margin = 0 (every point an airplane sized there); shaded: all constraints met'; }

function drawSheet(d){
  document.getElementById('sheet-title').textContent =
    `Design sheet: design ${d.id}, flap ${d.flap}${d.chosen ? ' (the chosen compromise)' : ''}`;
  const box = document.getElementById('sheet'); box.innerHTML = '';
  const t = h('table', {id: 'sheet-table'}, undefined, box);
  const hr = h('tr', {}, undefined, h('thead', {}, undefined, t));
  ['section', 'quantity', 'value', 'unit', 'meaning'].forEach(x => h('th', {}, x, hr));
  const tb = h('tbody', {}, undefined, t);
  const fr = h('tr', {}, undefined, tb); ['design variable', 'flap', d.flap, '', 'high-lift configuration']
    .forEach(x => h('td', {}, x, fr));
  D.sheet_columns.forEach((c, i) => { const v = d.values[i], tr = h('tr', {'data-col': c.col}, undefined, tb);
    h('td', {}, c.section, tr); h('td', {}, c.col, tr);
    if (c.section === 'margin'){
      const st = v < 0 ? 'violated' : v < D.binding_margin ? 'binding' : 'met';
      h('td', {class: 'status-' + st}, (v >= 0 ? '+' : '') + (100 * v).toFixed(1) + ' % ' + st, tr);
    } else h('td', {}, fmt(v), tr);
    h('td', {}, c.unit, tr); h('td', {}, c.meaning, tr); }); }

function select(id){ state.selected = id; const d = D.designs[id];
  drawSheet(d); drawDiagram(d); drawFront(); }

buildControls(); drawFront(); if (D.designs.length) select(state.selected);
})();
"""

_SCRIPT = (_SCRIPT.replace("__REGION_FILL__", palette.FEASIBLE_REGION_HEX)
           .replace("__REGION_ALPHA__", f"{palette.FEASIBLE_REGION_ALPHA:g}")
           .replace("__LINE_COLOURS__", palette.js_array(palette.REPORT_LINE_COLOURS)))
"""The page script with the palette's colours filled in."""
