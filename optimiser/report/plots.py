"""Plots of a run: objective scatter with the front, 3-D front, decision variables of the
front (parallel coordinates), convergence and a constraint diagram at a representative
design. Each function takes the data and an optional ``ax`` and returns the Figure;
:func:`write_plots` saves PNG and SVG in ``RUN_DIR/plots``. matplotlib comes from
:func:`optimiser.report.figures.pyplot` (Agg, imported on first use), colours from
:mod:`optimiser.report.palette`; ``plt.show()`` is never called.
"""

from __future__ import annotations

import itertools
from pathlib import Path

import numpy as np

from ..columns import CONSTRAINT_LABELS, plot_label
from ..runfolder import names
from ..runfolder.archive import read_archive
from . import palette
from .figures import pyplot, save


def objective_scatter(study, front, feasible_F, ax=None):
    """Pairwise objective scatter: every feasible evaluated design in grey, the front coloured
    by flap type."""
    plt = pyplot()
    cols = list(study.objective_columns())
    pairs = list(itertools.combinations(range(len(cols)), 2))
    if ax is None:
        fig, axes = plt.subplots(1, len(pairs), figsize=(5 * len(pairs), 4.4), squeeze=False)
        axes = axes[0]
    else:
        fig, axes = ax.figure, [ax]
        pairs = pairs[:1]
    colours = palette.flap_colours(study.flaps)
    for a, (i, j) in zip(axes, pairs):
        if len(feasible_F):
            a.scatter(feasible_F[:, i], feasible_F[:, j], s=4, c=palette.FEASIBLE_DESIGNS,
                      label="feasible designs", rasterized=True)
        for flap in study.flaps:
            sel = front[front["flap"] == flap]
            if len(sel):
                a.scatter(sel[cols[i]], sel[cols[j]], s=18, color=colours[flap],
                          edgecolor=palette.DESIGN_MARKER, linewidth=0.3, label=f"front: {flap}")
        a.set_xlabel(plot_label(cols[i]))
        a.set_ylabel(plot_label(cols[j]))
        a.grid(alpha=0.3)
        if len(front):  # zoom on the front and the dominated band next to it
            for k, setter in ((i, a.set_xlim), (j, a.set_ylim)):
                lo, hi = float(front[cols[k]].min()), float(front[cols[k]].max())
                span = max(hi - lo, 0.05 * max(abs(hi), 1.0))
                setter(lo - 0.15 * span, hi + 1.5 * span)
    axes[0].legend(fontsize=7, loc="best")
    if len(front):
        axes[-1].text(1.0, -0.16, "axes zoomed on the front; designs beyond are off the plot",
                      transform=axes[-1].transAxes, ha="right", fontsize=7,
                      color=palette.NOTE_TEXT)
    fig.suptitle(f"{study.name}: objectives (front highlighted)")
    fig.tight_layout()
    return fig


def front_3d(study, front, ax=None):
    """3-D view of the front, coloured by flap type (three objectives only)."""
    plt = pyplot()
    cols = list(study.objective_columns())[:3]
    if ax is None:
        fig = plt.figure(figsize=(6.5, 5.5))
        ax = fig.add_subplot(projection="3d")
    fig = ax.figure
    colours = palette.flap_colours(study.flaps)
    for flap in study.flaps:
        sel = front[front["flap"] == flap]
        if len(sel):
            ax.scatter(sel[cols[0]], sel[cols[1]], sel[cols[2]], color=colours[flap], s=16,
                       label=flap)
    ax.set_xlabel(plot_label(cols[0]), fontsize=8)
    ax.set_ylabel(plot_label(cols[1]), fontsize=8)
    ax.set_zlabel(plot_label(cols[2]), fontsize=8)
    ax.legend(fontsize=7, title="flap type")
    ax.set_title(f"{study.name}: front")
    return fig


def decision_variables(study, front, ax=None):
    """Parallel coordinates of the front's decision variables, each axis normalised to its
    bounds (labelled with the bounds and units); the flap type is the last axis."""
    plt = pyplot()
    if ax is None:
        fig, ax = plt.subplots(figsize=(8, 4.5))
    fig = ax.figure
    vars_ = list(study.variables)
    flaps = list(study.flaps)
    n = len(vars_) + 1
    colours = palette.flap_colours(flaps)
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
        ax.plot(xs, row, color=colours[flap], alpha=0.6, lw=1,
                label=flap if flap not in seen else None)
        seen.add(flap)
    labels = []
    for v in vars_:
        name = plot_label(v.column)
        labels.append(f"{name}\n{v.lower:g} to {v.upper:g}" + (" (fixed)" if v.fixed else ""))
    labels.append("flap type\n(study list order)")
    ax.set_xticks(xs, labels, fontsize=7)
    ax.set_ylabel("position within bounds [-] (0 = lower, 1 = upper)")
    ax.set_ylim(-0.05, 1.05)
    for x in xs:
        ax.axvline(x, color=palette.GUIDE_LINES, lw=0.8)
    ax.legend(fontsize=7, loc="best", title="flap type")
    ax.set_title(f"{study.name}: decision variables of the front")
    fig.tight_layout()
    return fig


def convergence(study, history, ax=None):
    """Hypervolume of the merged feasible front against evaluations."""
    plt = pyplot()
    if ax is None:
        fig, ax = plt.subplots(figsize=(6, 4))
    fig = ax.figure
    ax.plot(history["evaluations"], history["hypervolume"], marker=".", lw=1)
    ax.set_xlabel("evaluations [-]")
    ax.set_ylabel("hypervolume (normalised objectives) [-]")
    ax.grid(alpha=0.3)
    ax.set_title(f"{study.name}: convergence")
    fig.tight_layout()
    return fig


def write_plots(study, run_dir, front, history, scales=None):
    """Save every plot as PNG and SVG in ``run_dir/plots``; returns the written paths."""
    out = Path(run_dir) / names.PLOTS_DIR
    out.mkdir(exist_ok=True)
    written = save(convergence(study, history), out / "convergence")
    if len(front):
        F = read_archive(run_dir, study.objective_columns(), feasible_only=True)\
            .to_numpy(float)
        written += save(objective_scatter(study, front, F), out / "objectives")
        if len(study.objectives) == 3:
            written += save(front_3d(study, front), out / "front_3d")
        written += save(decision_variables(study, front), out / "decision_variables")
        written += save(constraint_diagram(study, representative_design(study, front)),
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


def constraint_diagram(study, design, n=120, ax=None):
    """Constraint diagram at one design's aspect ratio and flap type: over wing loading and
    power loading (or thrust-to-weight) within the bounds, the line where each constraint's
    margin is zero (every point is a completely sized airplane), the region meeting all of
    them shaded, and the design marked."""
    from ..evaluation import size_frame
    from ..sizing import active_constraints
    plt = pyplot()
    if ax is None:
        fig, ax = plt.subplots(figsize=(7, 5))
    fig = ax.figure
    wv, lv = study.variable("wing_loading_N_m2"), study.variable(study.loading_column)
    ws = np.linspace(wv.lower, wv.upper, n) if not wv.fixed else np.linspace(0.8, 1.2, n) * wv.lower
    ld = np.linspace(lv.lower, lv.upper, n) if not lv.fixed else np.linspace(0.8, 1.2, n) * lv.lower
    W, L = np.meshgrid(ws, ld)
    flap = study.spec.high_lift_names.index(design["flap"])
    frame = size_frame(study, W.ravel(), L.ravel(), np.full(W.size, design["aspect_ratio"]),
                       np.full(W.size, flap))
    colours = palette.constraint_colours(active_constraints(study.spec))
    required = dict(study.spec.requirements.margins)
    handles = []
    for c in active_constraints(study.spec):
        M = frame[f"margin_{c}"].to_numpy(float).reshape(W.shape)
        r = required.get(c, 0.0)  # the line where the margin is the required one
        if np.nanmin(M) < r < np.nanmax(M):
            ax.contour(W, L, M, levels=[r], colors=[colours[c]], linewidths=1.5)
            handles.append(plt.Line2D([], [], color=colours[c], label=c.replace("_", " ")))
    feas = frame["feasible"].to_numpy(bool).reshape(W.shape).astype(float)
    ax.contourf(W, L, feas, levels=[0.5, 1.5], colors=[palette.FEASIBLE_REGION],
                    alpha=palette.FEASIBLE_REGION_ALPHA)
    handles.append(plt.Rectangle((0, 0), 1, 1, color=palette.FEASIBLE_REGION,
                                 alpha=palette.FEASIBLE_REGION_ALPHA,
                                 label="all constraints met"))
    ax.plot(design["wing_loading_N_m2"], design[study.loading_column],
            palette.DESIGN_MARKER + "*", ms=12)
    handles.append(plt.Line2D([], [], color=palette.DESIGN_MARKER, marker="*", ls="", ms=10,
                              label="representative front design"))
    ax.set_xlabel(plot_label("wing_loading_N_m2"))
    ax.set_ylabel(plot_label(study.loading_column))
    ax.legend(handles=handles, fontsize=7, loc="best")
    ax.set_title(f"{study.name}: constraints at aspect ratio {design['aspect_ratio']:.2f}, "
                 f"flap {design['flap']}\n(each line: {_line_meaning(study)}; each point a sized "
                 "airplane)", fontsize=9)
    ax.grid(alpha=0.3)
    fig.tight_layout()
    return fig


def _line_meaning(study) -> str:
    """What a line of the constraint diagram marks (the required margin where one is set)."""
    return "margin = required margin" if study.spec.requirements.margins else "margin = 0"


def constraint_grid(study, design, n=80):
    """Wing loading and loading axes of a constraint diagram for ``design`` (the study's
    bounds, widened to include the design) and the sized grid at its aspect ratio and flap.

    Returns (wing loading [N/m^2] 1-D, loading 1-D, frame of n x n sized designs, row-major
    with loading as the slow axis)."""
    from ..evaluation import size_frame
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
                       np.full(W.size, flap))
    return ws, ld, frame


def design_constraint_diagram(study, design, label="chosen design", n=120, ax=None):
    """Constraint diagram for one sized design: at its aspect ratio and flap type, over wing
    loading and power loading (or thrust-to-weight), the line where each constraint's margin
    is zero (every grid point a completely sized airplane), the region meeting all of them
    shaded, binding constraints drawn thicker, and the design marked where it was sized, with
    its takeoff mass. At the marked point the grid airplane is the design itself."""
    from ..sizing import active_constraints
    from .sheet import BINDING_MARGIN
    plt = pyplot()
    if ax is None:
        fig, ax = plt.subplots(figsize=(10.5, 5.4))
    fig = ax.figure
    ws, ld, frame = constraint_grid(study, design, n)
    W, L = np.meshgrid(ws, ld)
    colours = palette.constraint_colours(active_constraints(study.spec))
    required = dict(study.spec.requirements.margins)
    handles = []
    for c in active_constraints(study.spec):
        M = frame[f"margin_{c}"].to_numpy(float).reshape(W.shape)
        r = required.get(c, 0.0)  # the line where the margin is the required one
        binding = float(design[f"margin_{c}"]) - r < BINDING_MARGIN
        if np.nanmin(M) < r < np.nanmax(M):
            ax.contour(W, L, M, levels=[r], colors=[colours[c]],
                       linewidths=3.0 if binding else 1.4)
            handles.append(plt.Line2D([], [], color=colours[c], lw=3.0 if binding else 1.4,
                                      label=CONSTRAINT_LABELS.get(c, c)
                                      + (" (binding)" if binding else "")))
    feas = frame["feasible"].to_numpy(bool).reshape(W.shape).astype(float)
    if feas.max() > 0:
        ax.contourf(W, L, feas, levels=[0.5, 1.5], colors=[palette.FEASIBLE_REGION],
                    alpha=palette.FEASIBLE_REGION_ALPHA)
    handles.append(plt.Rectangle((0, 0), 1, 1, color=palette.FEASIBLE_REGION,
                                 alpha=palette.FEASIBLE_REGION_ALPHA,
                                 label="all constraints met"))
    x0, y0 = float(design["wing_loading_N_m2"]), float(design[study.loading_column])
    ax.plot(x0, y0, palette.DESIGN_MARKER + "*", ms=15, zorder=5)
    handles.append(plt.Line2D([], [], color=palette.DESIGN_MARKER, marker="*", ls="", ms=11,
                              label=f"{label}: takeoff mass {float(design['takeoff_mass_kg']):.0f} kg"))
    ax.annotate(f"{label}\n{x0:.0f} N/m², {y0:.3g}", (x0, y0), xytext=(10, 10),
                textcoords="offset points", fontsize=8)
    ax.set_xlabel(plot_label("wing_loading_N_m2"))
    ax.set_ylabel(plot_label(study.loading_column))
    ax.legend(handles=handles, fontsize=7, loc="upper left", bbox_to_anchor=(1.01, 1.0),
              title="required-margin lines" if required else "zero-margin lines",
              title_fontsize=7)
    ax.set_title(f"{study.name}: constraints at aspect ratio {float(design['aspect_ratio']):.2f}, "
                 f"flap {design['flap']}\n(each line: {_line_meaning(study)}; every point an "
                 "airplane sized "
                 "there; the star is the design at its own sized mass)", fontsize=9)
    ax.grid(alpha=0.3)
    fig.tight_layout()
    return fig


def flap_fronts(study, fronts, table, ax=None):
    """Per-flap-option fronts overlaid: trip fuel against engine size (the 2-objective
    non-dominated subset of each option's front as a line, all its front designs as dots),
    and, beside it, the best of each objective per option. Options with no feasible design
    are named in the legend with the failing constraint."""
    from ..flaps import lower_envelope
    plt = pyplot()
    eng = study.engine_size_column
    if ax is None:
        fig, (ax, ax2) = plt.subplots(1, 2, figsize=(12.5, 5.0),
                                      gridspec_kw={"width_ratios": [1.5, 1]})
    else:
        fig, ax2 = ax.figure, None
    colours = palette.flap_colours(study.flaps)
    rows = {r["flap"]: r for _, r in table.iterrows()}
    for flap in study.flaps:
        fr = fronts[flap]
        r = rows[flap]
        if len(fr) == 0:
            ax.plot([], [], ls="", marker="x", color=colours[flap],
                    label=f"{flap}: no feasible design ({r['failing_constraint']} "
                          f"{r['best_margin_failing']:+.0%} at best)")
            continue
        env = lower_envelope(fr[eng], fr["trip_fuel_kg"])
        ax.scatter(fr[eng], fr["trip_fuel_kg"], s=10, color=colours[flap], alpha=0.45)
        ref = " (reference)" if r["reference_option"] else ""
        ax.plot(env[:, 0], env[:, 1], "-o", ms=4, lw=1.8, color=colours[flap],
                label=f"{flap}{ref}: HV {r['hypervolume']:.3f}, "
                      f"{r['share_of_combined_front']:.0%} of combined front")
    ax.set_xlabel(plot_label(eng))
    ax.set_ylabel(plot_label("trip_fuel_kg"))
    ax.grid(alpha=0.3)
    ax.legend(fontsize=7, title="flap type (line: trip fuel vs engine size front)",
              title_fontsize=7, loc="best")
    ax.set_title("fronts per flap option, same constraints and budget", fontsize=9)
    if ax2 is not None:
        flaps = list(study.flaps)
        y = np.arange(len(flaps))
        mi = [rows[f]["best_maintenance_index"] if "best_maintenance_index" in rows[f] else
              rows[f]["mean_maintenance_index"] for f in flaps]
        ax2.barh(y, mi, color=[colours[f] for f in flaps])
        for yi, f in zip(y, flaps):
            r = rows[f]
            txt = ("no feasible design" if not r["feasible_found"] else
                   f"trip fuel {r['extra_trip_fuel_at_equal_engine_kg']:+.1f} kg at equal engine"
                   if not r["reference_option"] and np.isfinite(
                       r["extra_trip_fuel_at_equal_engine_kg"]) else
                   "reference" if r["reference_option"] else "no common engine size")
            ax2.text(0.02, yi, txt, va="center", fontsize=7,
                     transform=ax2.get_yaxis_transform())
        ax2.set_yticks(y, flaps, fontsize=8)
        ax2.invert_yaxis()
        ax2.set_xlabel("best maintenance index on the option's front [-]")
        ax2.set_title("maintenance and trip-fuel penalty against the reference", fontsize=9)
        ax2.grid(alpha=0.3, axis="x")
    fig.suptitle(f"{study.name}: flap options compared")
    fig.tight_layout()
    return fig
