"""Figures of a requirement sweep (``optimiser sweep``): ``CAMPAIGN/plots/sweep_<axis>``.

Moved here from :mod:`optimiser.campaign`, which runs the sweep and writes its tables; the
CLI draws these after :func:`optimiser.campaign.run_campaign`.
"""

from __future__ import annotations

import re
from itertools import product
from pathlib import Path

import numpy as np

from ..campaign import pick_text, short_value
from ..display_units import column_display, column_values, display_label
from . import palette
from .figures import finish_layout, pyplot, save

CAMPAIGN_DPI = 120
"""Resolution of the sweep figures [dots per inch] (wide two-panel figures)."""


def axis_label(axis) -> str:
    """x-axis label of a swept requirement, with its unit and the tightening direction."""
    name = axis.key.split(".")
    words = " ".join(name[-1].split("_"))
    where = {"departure": "departure ", "destination": "destination ", "mission": "",
             "requirements": "", "variables": "allowed "}.get(name[0], name[0] + " ")
    unit = f" [{axis.unit}]" if axis.unit else (" [-]" if axis.numbers is not None else "")
    arrow = ""
    if axis.tighter:
        arrow = "  (tighter →)"
    return f"{where}{words}{unit}{arrow}"


def plot_campaign(campaign, summary, folder) -> list:
    """Per axis: trip fuel and engine size of the picked design (solid) and the front's
    smallest value (dashed) against the axis value, one line per setting of the other axes.
    Numeric axes run from loose (left) to tight (right). Writes PNG and SVG; returns paths."""
    plt = pyplot()
    size = campaign.engine_size_column
    out_dir = Path(folder) / "plots"
    out_dir.mkdir(exist_ok=True)
    written = []
    by_index = {c.index: k for k, c in enumerate(campaign.combinations)}
    for ai, axis in enumerate(campaign.axes):
        numeric = axis.numbers is not None
        x_all = np.array(axis.numbers if numeric else range(len(axis.values)), dtype=float)
        fig, axs = plt.subplots(1, 2, figsize=(14, 4.6))
        others = [range(len(a.values)) if j != ai else [None]
                  for j, a in enumerate(campaign.axes)]
        for n, rest in enumerate(product(*others)):
            idx = [tuple(i if j != ai else k for j, i in enumerate(rest))
                   for k in range(len(axis.values))]
            rows = summary.iloc[[by_index[t] for t in idx]]
            held = ", ".join(f"{a.label} {short_value(a.values[i])}" for j, (a, i) in
                             enumerate(zip(campaign.axes, rest)) if j != ai)
            colour = palette.cycle_colour(n)
            order = np.argsort(x_all)
            for ax, column in ((axs[0], "trip_fuel_kg"), (axs[1], size)):
                picked, least = f"picked_{column}", f"min_{column}"
                y = column_values(column, rows[picked].to_numpy(float)) if picked in rows \
                    else np.full(len(idx), np.nan)
                y2 = column_values(column, rows[least].to_numpy(float)) if least in rows \
                    else np.full(len(idx), np.nan)
                ax.plot(x_all[order], y[order], "o-", color=colour,
                        label=f"picked design{', ' + held if held else ''}")
                ax.plot(x_all[order], y2[order], "s--", color=colour, alpha=0.6, ms=4,
                        label=f"smallest on the front{', ' + held if held else ''}")
        for ax, ylabel in ((axs[0], display_label("trip_fuel_kg")),
                           (axs[1], display_label(size))):
            ax.set_xlabel(axis_label(axis))
            ax.set_ylabel(ylabel)
            ax.grid(alpha=0.3)
            if not numeric:
                ax.set_xticks(x_all, [short_value(v) for v in axis.values], rotation=15,
                              fontsize=8)
            if axis.tighter == "smaller":
                ax.invert_xaxis()
        handles, labels = axs[0].get_legend_handles_labels()
        axs[1].legend(handles, labels, fontsize=7, loc="upper left", bbox_to_anchor=(1.02, 1.0))
        fig.suptitle(f"campaign {campaign.name}: trip fuel and engine size against "
                     f"{axis.key}\n(picked: {pick_text(campaign.pick)})", fontsize=9)
        finish_layout(fig, f"campaign {campaign.name}")
        written += save(fig, out_dir / f"sweep_{axis.key.replace('.', '_')}", dpi=CAMPAIGN_DPI)
    if len(campaign.axes) == 2:
        written += save(carpet_plot(campaign, summary), out_dir / "carpet", dpi=CAMPAIGN_DPI)
    return written


def carpet_plot(campaign, summary):
    """Two-axis sweep as a carpet: the picked design's trip fuel against its engine size, a
    line through the combinations that share a value of each axis (so the grid of lines shows
    both requirements at once), and beside it the grid of combinations with each cell's
    picked trip fuel and engine size, the combinations with no feasible design hatched and
    named with the constraint that fails, never left out."""
    plt = pyplot()
    size = campaign.engine_size_column
    a0, a1 = campaign.axes
    by_index = {c.index: k for k, c in enumerate(campaign.combinations)}
    n0, n1 = len(a0.values), len(a1.values)
    trip = np.full((n0, n1), np.nan)
    eng = np.full((n0, n1), np.nan)
    notes = {}
    for (i, j), k in by_index.items():
        row = summary.iloc[k]
        t, e = row.get("picked_trip_fuel_kg"), row.get(f"picked_{size}")
        if t is not None and e is not None and np.isfinite(float(t)) and np.isfinite(float(e)):
            trip[i, j], eng[i, j] = float(t), float(e)
        else:
            notes[(i, j)] = str(row.get("note", "") or row.get("status", ""))
    # the reader's units (current_system); the swept requirements' own axes keep the study's
    trip, eng = column_values("trip_fuel_kg", trip), column_values(size, eng)
    trip_unit, size_unit = column_display("trip_fuel_kg", 0.0)[1], column_display(size, 0.0)[1]
    fig, (ax, ax2) = plt.subplots(1, 2, figsize=(14.5, 5.6),
                                  gridspec_kw={"width_ratios": [1.35, 1]})
    for i in range(n0):   # lines of constant first-axis value
        ok = np.isfinite(trip[i])
        if ok.sum() >= 1:
            ax.plot(eng[i, ok], trip[i, ok], "o-", color=palette.cycle_colour(0), lw=1.4, ms=4)
            last = np.flatnonzero(ok)[-1]
            ax.annotate(f"{a0.label} {short_value(a0.values[i])}", (eng[i, last], trip[i, last]),
                        xytext=(4, 2), textcoords="offset points", fontsize=7,
                        color=palette.cycle_colour(0))
    for j in range(n1):   # lines of constant second-axis value
        ok = np.isfinite(trip[:, j])
        if ok.sum() >= 1:
            ax.plot(eng[ok, j], trip[ok, j], "s--", color=palette.cycle_colour(1), lw=1.2, ms=4)
            first = np.flatnonzero(ok)[0]
            ax.annotate(f"{a1.label} {short_value(a1.values[j])}", (eng[first, j], trip[first, j]),
                        xytext=(4, -9), textcoords="offset points", fontsize=7,
                        color=palette.cycle_colour(1))
    ax.plot([], [], "o-", color=palette.cycle_colour(0), label=f"same {a0.key}")
    ax.plot([], [], "s--", color=palette.cycle_colour(1), label=f"same {a1.key}")
    if notes:
        ax.plot([], [], ls="", marker="x", color="k",
                label=f"{len(notes)} combination(s) with no feasible design: see the grid")
    ax.set_xlabel(display_label(size) + " of the picked design")
    ax.set_ylabel(display_label("trip_fuel_kg") + " of the picked design")
    ax.grid(alpha=0.3)
    ax.legend(fontsize=7, loc="upper left", bbox_to_anchor=(0.0, -0.14), ncol=3, frameon=False)
    ax.set_title("carpet: each point one combination of the two requirements", fontsize=9)
    # the grid of combinations, every one drawn
    shown = np.ma.masked_invalid(trip)
    im = ax2.imshow(shown, cmap="viridis_r", aspect="auto", origin="lower")
    for (i, j) in notes:
        ax2.add_patch(plt.Rectangle((j - 0.5, i - 0.5), 1, 1, facecolor="0.9", hatch="xx",
                                    edgecolor="0.5", lw=0))
    for i in range(n0):
        for j in range(n1):
            if (i, j) in notes:
                failing = re.search(r"misses (\w+)", notes[(i, j)])
                text = "no feasible\ndesign" + (f"\n({failing.group(1).replace('_', ' ')})"
                                                if failing else "")
            else:
                text = f"{trip[i, j]:.0f} {trip_unit}\n{eng[i, j]:.0f} {size_unit}"
            dark = (i, j) not in notes and np.nanmax(trip) > np.nanmin(trip) and \
                (trip[i, j] - np.nanmin(trip)) / (np.nanmax(trip) - np.nanmin(trip)) > 0.6
            ax2.text(j, i, text, ha="center", va="center", fontsize=7,
                     color="white" if dark else "black")
    ax2.set_xticks(range(n1), [short_value(v) for v in a1.values], fontsize=8)
    ax2.set_yticks(range(n0), [short_value(v) for v in a0.values], fontsize=8)
    ax2.set_xlabel(axis_label(a1))
    ax2.set_ylabel(axis_label(a0))
    fig.colorbar(im, ax=ax2, label=display_label("trip_fuel_kg") + " of the picked design")
    ax2.set_title("every combination (hatched: no feasible design)", fontsize=9)
    fig.suptitle(f"campaign {campaign.name}: the picked design across both requirements "
                 f"(picked: {pick_text(campaign.pick)})", fontsize=9)
    finish_layout(fig, f"campaign {campaign.name}")
    return fig
