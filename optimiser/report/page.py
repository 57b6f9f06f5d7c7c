"""The report page's fixed parts: the HTML template, its style sheet and the script that
makes the front and the constraint diagram interactive (plain JavaScript, no library, so the
report stays one self-contained file). Filled in by :func:`optimiser.report.html.write_report`.
"""

from __future__ import annotations

from . import palette

PAGE_TEMPLATE = """<!DOCTYPE html>
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

PAGE_CSS = """
body{font-family:system-ui,-apple-system,Segoe UI,Helvetica,Arial,sans-serif;margin:1.2em 2em;
color:#222;max-width:1300px}
h1{font-size:1.5em} h2{border-bottom:1px solid #ccc;padding-bottom:.2em;margin-top:1.6em}
table{border-collapse:collapse;font-size:.85em;margin:.5em 0}
th,td{border:1px solid #ddd;padding:.2em .5em;text-align:left;vertical-align:top}
th{background:#f3f3f3} table.kv td:first-child{font-weight:600}
.caution{background:#fff4e0;border:1px solid #e0a040;padding:.6em .9em;margin:1em 0}
figure{margin:.8em 0} figure img{max-width:100%;border:1px solid #eee}
.reqs{display:flex;flex-wrap:wrap;gap:1em}.req h3{font-size:.95em;margin:.3em 0}
table.resolved tr.default td{color:#555;font-style:italic}
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

_SCRIPT_SOURCE = r"""
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
  // beside the cursor, flipped to the other side near the window's edge: never over the point
  const w = tip.offsetWidth, hgt = tip.offsetHeight;
  const left = ev.pageX + 14 + w > window.scrollX + window.innerWidth ? ev.pageX - 14 - w : ev.pageX + 14;
  const top = ev.pageY + 12 + hgt > window.scrollY + window.innerHeight ? ev.pageY - 12 - hgt : ev.pageY + 12;
  tip.style.left = left + 'px'; tip.style.top = top + 'px'; }

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
  let ly = 400 + 22;
  g.lines.forEach((ln, k) => { const m = val(d, 'margin_' + ln.name);
    const req = D.required[ln.name] || 0, bind = m - req < D.binding_margin, col = ln.colour;
    ln.pts.forEach(seg => el('path', {d: path(seg), fill: 'none', stroke: col, 'stroke-dasharray': ln.dash,
      'stroke-width': bind ? 3 : 1.3, class: 'cline', 'data-constraint': ln.name}, svg));
    el('line', {x1: 64, x2: 84, y1: ly - 4, y2: ly - 4, stroke: col, 'stroke-dasharray': ln.dash,
      'stroke-width': bind ? 3 : 1.3}, svg);
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
  t2.textContent = `star: design ${d.id} at its own sized takeoff mass ${fmt(val(d, 'takeoff_mass_kg'))} __MASS_UNIT__ ` +
    `(its aspect ratio ${fmt(val(d, 'aspect_ratio'))})`;
  const t3 = el('text', {x: 58, y: 40, 'font-size': '10'}, svg);
  t3.textContent = 'lines: margin = ' + (Object.keys(D.required).length ? 'required margin' : '0') +
    ' (every point an airplane sized there); shaded: all constraints met'; }

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
      const req = D.required[c.col.slice(7)] || 0;   // 'margin_<constraint>'
      const st = v < req ? 'violated' : v - req < D.binding_margin ? 'binding' : 'met';
      h('td', {class: 'status-' + st}, (v >= 0 ? '+' : '') + (100 * v).toFixed(1) + ' % ' + st, tr);
    } else h('td', {}, fmt(v), tr);
    h('td', {}, c.unit, tr); h('td', {}, c.meaning, tr); }); }

function select(id){ state.selected = id; const d = D.designs[id];
  drawSheet(d); drawDiagram(d); drawFront(); }

function showOnlyFlap(f){ state.flaps = new Set([f]);
  document.querySelectorAll('#controls input[type=checkbox]').forEach(i => { i.checked = i.value === f; });
  drawFront(); const ex = document.getElementById('explore'); if (ex) ex.scrollIntoView(); }
function linkFlapTable(){ document.querySelectorAll('table.flaps tbody tr').forEach(tr => {
  const f = tr.getAttribute('data-flap'); if (!f || !D.flaps.includes(f)) return;
  tr.style.cursor = 'pointer'; tr.title = 'show only this option on the front explorer';
  tr.addEventListener('click', () => showOnlyFlap(f)); }); }
buildControls(); linkFlapTable(); drawFront(); if (D.designs.length) select(state.selected);
})();
"""



def page_script(mass_unit: str = "kg") -> str:
    """The page script with the palette's colours and the unit of the takeoff mass the
    page's data is in filled in (the numbers themselves come converted in the page data)."""
    return (_SCRIPT_SOURCE.replace("__REGION_FILL__", palette.FEASIBLE_REGION_HEX)
            .replace("__REGION_ALPHA__", f"{palette.FEASIBLE_REGION_ALPHA:g}")
            .replace("__MASS_UNIT__", mass_unit))


PAGE_SCRIPT = page_script()
"""The page script with the palette's colours filled in, for a page in SI."""
