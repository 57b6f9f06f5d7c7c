"""Plots of a run: objective scatter with the front, the front view (trip fuel against
engine size, one staircase per flap option), decision variables of the front (parallel
coordinates), convergence and a constraint diagram at a representative design. Each function
takes the data and returns the Figure; :func:`write_plots` saves PNG and SVG in
``RUN_DIR/plots``. matplotlib comes from :func:`optimiser.report.figures.pyplot` (Agg,
imported on first use), colours and line styles from :mod:`optimiser.report.palette` (one per
constraint and flap type, fixed by name); every figure made here carries the footer of
:func:`optimiser.report.figures.footer` (study, run time, caution); ``plt.show()`` is never
called.
"""

from __future__ import annotations

import itertools
import textwrap
from pathlib import Path

import numpy as np

from ..columns import CONSTRAINT_LABELS, plot_label
from ..display_units import SI, column_display, display_label, resolve
from ..runfolder import names
from ..runfolder.archive import read_archive
from ..runfolder.files import make_folder
from . import palette
from .figures import finish_layout, pyplot, save

LEGEND_OUTSIDE = dict(loc="upper left", bbox_to_anchor=(1.02, 1.0), borderaxespad=0.0)
"""Legends sit to the right of their axes, never over the data."""

CLOUD_NOTE = ("grey: every feasible design evaluated. A front point can sit inside the grey "
              "cloud of one view: it is better in an objective that view does not show.")


def _front_limits(values, cloud=None, below=0.08, above=0.6):
    """Axis limits that hold every front value, with room for the dominated band next to
    it (at most up to the largest cloud value)."""
    lo, hi = float(np.min(values)), float(np.max(values))
    span = hi - lo if hi > lo else max(0.05 * abs(hi), 1.0)
    top = hi + above * span
    if cloud is not None and len(cloud):
        top = min(top, max(hi + 0.05 * span, float(np.max(cloud))))
    return lo - below * span, top + 0.02 * span


def _flap_scatter(ax, x, y, flap, **kw):
    st = palette.flap_style(flap)
    return ax.scatter(x, y, color=st["color"], marker=st["marker"],
                      edgecolor=palette.DESIGN_MARKER, linewidth=0.3, **kw)


def _shown(column, values, system):
    """``values`` of ``column`` as plotted in ``system`` (SI: the very same object)."""
    return column_display(column, values, system)[0]


def objective_scatter(study, front, feasible_F, run_utc=None, units=None):
    """Pairwise objective scatter: every feasible evaluated design in grey, the front
    coloured by flap type; axes fitted to the front. ``units``: ``"si"`` or ``"us"`` for the
    plotted data and labels (default :func:`~optimiser.display_units.current_system`)."""
    plt = pyplot()
    system = resolve(units)
    cols = list(study.objective_columns())
    pairs = list(itertools.combinations(range(len(cols)), 2))
    fig, axes = plt.subplots(1, len(pairs), figsize=(4.6 * len(pairs) + 2.2, 4.6),
                             squeeze=False)
    axes = axes[0]
    F = np.asarray(feasible_F, float).reshape(-1, len(cols))
    if system != SI:
        F = np.column_stack([_shown(c, F[:, k], system) for k, c in enumerate(cols)]) \
            if len(F) else F
        front = front.copy()
        for c in cols:
            front[c] = _shown(c, front[c].to_numpy(float), system)
    for a, (i, j) in zip(axes, pairs):
        if len(F):
            a.scatter(F[:, i], F[:, j], s=4, c=palette.FEASIBLE_DESIGNS,
                      label="feasible designs evaluated", rasterized=True)
        for flap in study.flaps:
            sel = front[front["flap"] == flap]
            if len(sel):
                _flap_scatter(a, sel[cols[i]], sel[cols[j]], flap, s=20,
                              label=f"front: {palette.flap_label(flap)}")
        a.set_xlabel(display_label(cols[i], system))
        a.set_ylabel(display_label(cols[j], system))
        a.grid(alpha=0.3)
        if len(front):
            a.set_xlim(*_front_limits(front[cols[i]], F[:, i] if len(F) else None))
            a.set_ylim(*_front_limits(front[cols[j]], F[:, j] if len(F) else None))
    axes[-1].legend(fontsize=7, **LEGEND_OUTSIDE)
    fig.suptitle(f"{study.name}: objectives, front highlighted\n{CLOUD_NOTE}", fontsize=9)
    finish_layout(fig, study.name, run_utc)
    return fig


def _words(column: str) -> str:
    """A column's axis label without its unit."""
    return plot_label(column).split(" [")[0]


def _range_text(values) -> str:
    lo, hi = f"{float(values.min()):.3g}", f"{float(values.max()):.3g}"
    return lo if lo == hi else f"{lo} to {hi}"


def _staircase(x, y):
    """The 2-objective non-dominated subset of (x, y) (both minimised), sorted by x."""
    from ..search import nondominated_mask
    P = np.column_stack([np.asarray(x, float), np.asarray(y, float)])
    keep = nondominated_mask(P)
    P = P[keep]
    return P[np.argsort(P[:, 0], kind="stable")], keep


def front_view(study, front, run_utc=None, units=None):
    """The front as a reader can read it: the first objective (trip fuel) against the second
    (engine size), each flap option's designs with its staircase (the designs of that option
    that no other of the same option beats in both), filled where a design is on its
    option's staircase, hollow where the front keeps it for an objective not plotted; the
    legend gives each option's range of the other objectives. ``units``: ``"si"`` or
    ``"us"`` for the plotted data and labels (default: the current system)."""
    plt = pyplot()
    system = resolve(units)
    cols = list(study.objective_columns())
    if system != SI:
        front = front.copy()
        for c in cols:
            front[c] = _shown(c, front[c].to_numpy(float), system)
    ycol, xcol = cols[0], cols[1]
    rest = cols[2:]
    fig, ax = plt.subplots(figsize=(9.6, 5.4))
    for flap in study.flaps:
        sel = front[front["flap"] == flap]
        if not len(sel):
            continue
        st = palette.flap_style(flap)
        stairs, on = _staircase(sel[xcol], sel[ycol])
        extra = "".join(f", {_words(c)} {_range_text(sel[c])}" for c in rest)
        ax.step(stairs[:, 0], stairs[:, 1], where="post", color=st["color"], ls=st["ls"],
                lw=1.6, label=f"{palette.flap_label(flap)} ({len(sel)} designs{extra})")
        ax.scatter(sel[xcol][on], sel[ycol][on], color=st["color"], marker=st["marker"],
                   s=26, edgecolor=palette.DESIGN_MARKER, linewidth=0.3, zorder=3)
        if (~on).any():
            ax.scatter(sel[xcol][~on], sel[ycol][~on], facecolor="none",
                       edgecolor=st["color"], marker=st["marker"], s=26, linewidth=1.0,
                       zorder=3)
    ax.set_xlabel(display_label(xcol, system))
    ax.set_ylabel(display_label(ycol, system))
    ax.grid(alpha=0.3)
    if len(front):
        ax.set_xlim(*_front_limits(front[xcol], above=0.05))
        ax.set_ylim(*_front_limits(front[ycol], above=0.05))
    ax.legend(fontsize=7, title="flap option (its front designs)", title_fontsize=7,
              **LEGEND_OUTSIDE)
    note = ("line and filled: an option's designs that none of its others beats in both "
            "plotted objectives")
    if rest:
        note += f"; hollow: on the front for a lower {' or '.join(map(_words, rest))}"
    ax.set_title("\n".join([f"{study.name}: the front, {_words(ycol)} against {_words(xcol)}",
                            *textwrap.wrap(note, 90)]), fontsize=9)
    finish_layout(fig, study.name, run_utc)
    return fig


def decision_variables(study, front, run_utc=None, units=None):
    """Parallel coordinates of the front's decision variables, each axis normalised to its
    bounds (labelled with the bounds and units); the flap type is the last axis. ``units``:
    ``"si"`` or ``"us"`` for the bounds and units of the labels (default: the current
    system); the positions within the bounds are the same in both."""
    plt = pyplot()
    system = resolve(units)
    fig, ax = plt.subplots(figsize=(10, 4.8))
    vars_ = list(study.variables)
    flaps = list(study.flaps)
    n = len(vars_) + 1
    Z = []
    for v in vars_:
        x = front[v.column].to_numpy(float)
        Z.append(np.full(len(x), 0.5) if v.fixed else (x - v.lower) / (v.upper - v.lower))
    fi = np.array([flaps.index(f) for f in front["flap"]], float)
    Z.append(fi / max(len(flaps) - 1, 1))
    Z = np.array(Z).T
    xs = np.arange(n)
    seen = set()
    for row, flap in zip(Z, front["flap"]):
        st = palette.flap_style(flap)
        ax.plot(xs, row, color=st["color"], ls=st["ls"], alpha=0.6, lw=1,
                label=palette.flap_label(flap) if flap not in seen else None)
        seen.add(flap)
    labels = []
    for v in vars_:
        name = display_label(v.column, system)
        lower, upper = _shown(v.column, v.lower, system), _shown(v.column, v.upper, system)
        digits = "g" if system == SI else ".4g"   # converted bounds: four digits
        labels.append(f"{name}\n{lower:{digits}} to {upper:{digits}}"
                      + (" (fixed)" if v.fixed else ""))
    labels.append("flap type\n(study list order)")
    ax.set_xticks(xs, labels, fontsize=7)
    ax.set_ylabel("position within bounds [-] (0 = lower, 1 = upper)")
    ax.set_ylim(-0.05, 1.05)
    for x in xs:
        ax.axvline(x, color=palette.GUIDE_LINES, lw=0.8)
    ax.legend(fontsize=7, title="flap type", title_fontsize=7, **LEGEND_OUTSIDE)
    ax.set_title(f"{study.name}: decision variables of the front", fontsize=10)
    finish_layout(fig, study.name, run_utc)
    return fig


CONVERGED_SHARE = 0.99
"""Share of the final hypervolume marked on the convergence plot (ours)."""


def convergence(study, history, run_utc=None):
    """Hypervolume of the merged feasible front as a share of its final value, against the
    number of designs evaluated (comparable across studies: every run ends at 1)."""
    plt = pyplot()
    fig, ax = plt.subplots(figsize=(9.4, 4.4))
    evals = history["evaluations"].to_numpy(float)
    hv = history["hypervolume"].to_numpy(float)
    final = hv[-1] if len(hv) else 0.0
    if final > 0:
        share = hv / final
        ax.plot(evals, share, marker=".", lw=1, color=palette.OKABE_ITO["blue"],
                label="hypervolume / final hypervolume")
        reached = np.flatnonzero(share >= CONVERGED_SHARE)
        if reached.size:
            e = evals[reached[0]]
            ax.axhline(CONVERGED_SHARE, color=palette.GUIDE_LINES, lw=0.8, ls=":")
            ax.axvline(e, color=palette.GUIDE_LINES, lw=0.8, ls=":",
                       label=f"{CONVERGED_SHARE:.0%} of the final value after {e:,.0f} designs")
        ax.set_ylim(0, 1.05)
        ax.legend(fontsize=7, **LEGEND_OUTSIDE)
    else:
        ax.text(0.5, 0.5, "no feasible design found: no front, no hypervolume",
                transform=ax.transAxes, ha="center", color=palette.NOTE_TEXT)
    ax.set_xlabel("designs evaluated")
    ax.set_ylabel("hypervolume / final hypervolume [-]")
    ax.grid(alpha=0.3)
    ax.set_title(f"{study.name}: convergence (final hypervolume {final:.4g} in normalised "
                 "objectives)", fontsize=9)
    finish_layout(fig, study.name, run_utc)
    return fig


def write_plots(study, run_dir, front, history, scales=None, run_utc=None,
                least_violating=None):
    """Save every plot as PNG and SVG in ``run_dir/plots``; returns the written paths.

    With no feasible design the constraint diagram is still drawn, at the least-violating
    design (``least_violating``, a frame of sized designs), since that is when it is needed
    most."""
    out = make_folder(Path(run_dir) / names.PLOTS_DIR)  # refused if a link
    written = save(convergence(study, history, run_utc), out / "convergence")
    if len(front):
        F = read_archive(run_dir, study.objective_columns(), feasible_only=True)\
            .to_numpy(float)
        written += save(objective_scatter(study, front, F, run_utc), out / "objectives")
        written += save(front_view(study, front, run_utc), out / "front_view")
        written += save(decision_variables(study, front, run_utc), out / "decision_variables")
        written += save(design_constraint_diagram(
            study, representative_design(study, front), label="representative front design",
            front=front, run_utc=run_utc), out / "constraint_diagram")
    elif least_violating is not None and len(least_violating):
        written += save(design_constraint_diagram(
            study, least_violating.iloc[0], label="least-violating design", run_utc=run_utc,
            note="no feasible design found: drawn at the design closest to feasible"),
            out / "constraint_diagram")
    return written


def representative_design(study, front):
    """The front design with the smallest sum of objectives normalised over the front (a
    balanced compromise, common practice for picking one point of a front)."""
    cols = list(study.objective_columns())
    F = front[cols].to_numpy(float)
    span = F.max(axis=0) - F.min(axis=0)
    Fn = (F - F.min(axis=0)) / np.where(span > 0, span, 1.0)
    return front.iloc[int(Fn.sum(axis=1).argmin())]


def _line_meaning(study) -> str:
    """What a line of the constraint diagram marks (the required margin where one is set)."""
    return "margin = required margin" if study.spec.requirements.margins else "margin = 0"


def constraint_grid(study, design, n=80):
    """Wing loading and loading axes of a constraint diagram for ``design`` (the study's
    bounds, widened to include the design) and the sized grid at its aspect ratio and flap.

    Returns (wing loading [N/m^2] 1-D, loading 1-D, frame of n x n sized designs, row-major
    with loading as the slow axis)."""
    from ..evaluation import row_overrides, size_frame
    wv, lv = study.variable("wing_loading_N_m2"), study.variable(study.loading_column)
    x0, y0 = float(design["wing_loading_N_m2"]), float(design[study.loading_column])

    def axis(v, x):
        lo, hi = (v.lower, v.upper) if not v.fixed else (0.8 * v.lower, 1.2 * v.lower)
        lo, hi = min(lo, x), max(hi, x)
        pad = 0.04 * (hi - lo)
        return np.linspace(lo - pad if lo - pad > 0 else lo, hi + pad, n)

    ws, ld = axis(wv, x0), axis(lv, y0)
    W, L = np.meshgrid(ws, ld)
    flap = study.spec.high_lift_names.index(design["flap"])
    frame = size_frame(study, W.ravel(), L.ravel(), np.full(W.size, float(design["aspect_ratio"])),
                       np.full(W.size, flap), row_overrides(study, design, W.size))
    return ws, ld, frame


TICKS = dict(angle=135, spacing=9, length=0.55)
"""Hatch ticks on the side of a line that does not meet its constraint (matplotlib's
``withTickedStroke``; ours: short ticks every 9 points)."""


def design_constraint_diagram(study, design, label="chosen design", n=60, ax=None,
                              front=None, run_utc=None, note=None, units=None):
    """Constraint diagram for one sized design, as engineers draw it: at its aspect ratio
    and flap type, over wing loading and power loading (or thrust-to-weight), the line where
    each constraint's margin is zero, traced by :func:`optimiser.report.diagram.trace`
    (every point an airplane sized there), ticked on its infeasible side; the region meeting
    all of them shaded; binding constraints (margin below 1 % at the design) drawn thicker;
    the design marked where it was sized, with its takeoff mass, and, with ``front``, the
    other front designs of the same flap type at their own sized points.

    ``units``: ``"si"`` or ``"us"`` (default :func:`~optimiser.display_units.current_system`):
    the grid is sized in SI and the plotted data and axis labels are converted together."""
    from matplotlib import patheffects
    from ..sizing import active_constraints
    from .diagram import smallest_excess, trace
    from .sheet import BINDING_MARGIN
    plt = pyplot()
    own = ax is None
    if own:
        fig, ax = plt.subplots(figsize=(10.8, 5.6))
    fig = ax.figure
    ws, ld, frame = constraint_grid(study, design, n)
    W, L = np.meshgrid(ws, ld)
    system = resolve(units)

    def x_shown(v):   # SI: the very same values
        return column_display("wing_loading_N_m2", v, system)[0]

    def y_shown(v):
        return column_display(study.loading_column, v, system)[0]

    constraints = active_constraints(study.spec)
    required = dict(study.spec.requirements.margins)
    handles = []
    mins = smallest_excess(frame, constraints, required)
    if mins.max() >= 0:
        ax.contourf(x_shown(W), y_shown(L), mins.reshape(W.shape), levels=[0.0, np.inf],
                    colors=[palette.FEASIBLE_REGION], alpha=palette.FEASIBLE_REGION_ALPHA)
    for line in trace(study, design, ws, ld, frame, constraints, required):
        c = line.name
        colour, dash = palette.constraint_style(c)
        binding = float(design[f"margin_{c}"]) - required.get(c, 0.0) < BINDING_MARGIN
        lw = 2.8 if binding else 1.4
        for pts in line.polylines:
            ax.plot(x_shown(pts[:, 0]), y_shown(pts[:, 1]), color=colour,
                    ls=palette.DASHES[dash], lw=lw,
                    path_effects=[patheffects.withTickedStroke(**TICKS), patheffects.Normal()])
        handles.append(plt.Line2D([], [], color=colour, ls=palette.DASHES[dash], lw=lw,
                                  label=CONSTRAINT_LABELS.get(c, c)
                                  + (" (binding)" if binding else "")))
    handles.append(plt.Rectangle((0, 0), 1, 1, color=palette.FEASIBLE_REGION,
                                 alpha=palette.FEASIBLE_REGION_ALPHA,
                                 label="all constraints met"))
    handles.append(plt.Line2D([], [], color="0.3", lw=1.0, label="ticks: side not met",
                              path_effects=[patheffects.withTickedStroke(**TICKS)]))
    if front is not None and len(front):
        same = front[front["flap"] == design["flap"]]
        if len(same):
            st = palette.flap_style(str(design["flap"]))
            ax.scatter(x_shown(same["wing_loading_N_m2"]), y_shown(same[study.loading_column]),
                       s=18,
                       facecolor="none", edgecolor=st["color"], marker=st["marker"], zorder=4)
            handles.append(plt.Line2D([], [], ls="", marker=st["marker"], mfc="none",
                                      mec=st["color"], label="front designs of this flap type "
                                      "(each at its own aspect ratio)"))
    x0 = x_shown(float(design["wing_loading_N_m2"]))
    y0 = y_shown(float(design[study.loading_column]))
    mass, mass_unit = column_display("takeoff_mass_kg", float(design["takeoff_mass_kg"]), system)
    wing_unit = "N/m²" if system == SI else column_display("wing_loading_N_m2", 0.0, system)[1]
    ax.plot(x0, y0, palette.DESIGN_MARKER + "*", ms=15, zorder=5)
    handles.append(plt.Line2D([], [], color=palette.DESIGN_MARKER, marker="*", ls="", ms=11,
                              label=f"{label}: takeoff mass {mass:.0f} {mass_unit}"))
    ax.annotate(f"{label}\n{x0:.0f} {wing_unit}, {y0:.3g}" if system == SI else
                f"{label}\n{x0:.1f} {wing_unit}, {y0:.3g}", (x0, y0), xytext=(10, 10),
                textcoords="offset points", fontsize=8)
    ax.set_xlim(x_shown(ws[0]), x_shown(ws[-1]))
    ax.set_ylim(y_shown(ld[0]), y_shown(ld[-1]))
    ax.set_xlabel(display_label("wing_loading_N_m2", system))
    ax.set_ylabel(display_label(study.loading_column, system))
    ax.legend(handles=handles, fontsize=7,
              title="required-margin lines" if required else "zero-margin lines", title_fontsize=7,
              **LEGEND_OUTSIDE)
    title = (f"{study.name}: constraint diagram at aspect ratio "
             f"{float(design['aspect_ratio']):.2f}, {palette.flap_label(str(design['flap']))}\n"
             f"each line: {_line_meaning(study)}, every point an airplane sized there; the star is the "
             "design at its own sized mass")
    if note:
        title += f"\n{note}"
    ax.set_title(title, fontsize=9)
    ax.grid(alpha=0.3)
    if own:
        finish_layout(fig, study.name, run_utc)
    return fig


def flap_fronts(study, fronts, table, run_utc=None, units=None):
    """Per-flap-option fronts overlaid: trip fuel against engine size (the 2-objective
    non-dominated subset of each option's front as a line, all its front designs as dots),
    and, beside it, the best of each objective per option. Options with no feasible design
    are named in the legend with the failing constraint. ``units``: ``"si"`` or ``"us"``
    for the plotted data, the trip-fuel penalties and the labels (default: the current
    system); the envelopes are found in SI and converted."""
    from ..flaps import lower_envelope
    plt = pyplot()
    system = resolve(units)
    eng = study.engine_size_column
    fig, (ax, ax2) = plt.subplots(1, 2, figsize=(14.5, 5.2),
                                  gridspec_kw={"width_ratios": [1.5, 1]})
    rows = {r["flap"]: r for _, r in table.iterrows()}
    for flap in study.flaps:
        fr = fronts[flap]
        r = rows[flap]
        st = palette.flap_style(flap)
        words = palette.flap_label(flap)
        if len(fr) == 0:
            ax.plot([], [], ls="", marker="x", color=st["color"],
                    label=f"{words}: no feasible design ({r['failing_constraint']} "
                          f"{r['best_margin_failing']:+.0%} at best)")
            continue
        env = lower_envelope(fr[eng], fr["trip_fuel_kg"])
        ax.scatter(_shown(eng, fr[eng], system), _shown("trip_fuel_kg", fr["trip_fuel_kg"],
                                                        system),
                   s=10, color=st["color"], marker=st["marker"], alpha=0.45)
        ref = " (reference)" if r["reference_option"] else ""
        ax.plot(_shown(eng, env[:, 0], system), _shown("trip_fuel_kg", env[:, 1], system),
                ls=st["ls"], marker=st["marker"], ms=4, lw=1.8,
                color=st["color"],
                label=f"{words}{ref}: HV {r['hypervolume']:.3f}, "
                      f"{r['share_of_combined_front']:.0%} of combined front")
    ax.set_xlabel(display_label(eng, system))
    ax.set_ylabel(display_label("trip_fuel_kg", system))
    ax.grid(alpha=0.3)
    ax.set_title("fronts per flap option, same constraints and budget\n(line: trip fuel "
                 "against engine size front of the option)", fontsize=9)
    flaps = list(study.flaps)
    y = np.arange(len(flaps))
    mi = [rows[f]["best_maintenance_index"] if "best_maintenance_index" in rows[f] else
          rows[f]["mean_maintenance_index"] for f in flaps]
    ax2.barh(y, mi, color=[palette.flap_style(f)["color"] for f in flaps])
    for yi, f in zip(y, flaps):
        r = rows[f]
        extra, extra_unit = column_display("trip_fuel_kg",
                                           r["extra_trip_fuel_at_equal_engine_kg"], system)
        txt = ("no feasible design" if not r["feasible_found"] else
               f"trip fuel {extra:+.1f} {extra_unit} at equal engine"
               if not r["reference_option"] and np.isfinite(
                   r["extra_trip_fuel_at_equal_engine_kg"]) else
               "reference" if r["reference_option"] else "no common engine size")
        ax2.text(0.02, yi, txt, va="center", fontsize=7,
                 transform=ax2.get_yaxis_transform())
    ax2.set_yticks(y, [palette.flap_label(f) for f in flaps], fontsize=8)
    ax2.invert_yaxis()
    ax2.set_xlabel("best maintenance index on the option's front [-]")
    ax2.set_title("maintenance and trip-fuel penalty against the reference", fontsize=9)
    ax2.grid(alpha=0.3, axis="x")
    handles, labels = ax.get_legend_handles_labels()
    fig.legend(handles, labels, fontsize=7, title="flap option", title_fontsize=7,
               loc="lower center", bbox_to_anchor=(0.5, 0.02), ncol=2, frameon=False)
    fig.suptitle(f"{study.name}: flap options compared")
    fig.tight_layout(rect=(0, 0.06 + 0.035 * ((len(labels) + 1) // 2), 1, 1))
    from .figures import footer
    footer(fig, study.name, run_utc)
    return fig
