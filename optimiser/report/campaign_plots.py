"""Figures of a requirement sweep (``optimiser sweep``): ``CAMPAIGN/plots/sweep_<axis>``.

Moved here from :mod:`optimiser.campaign`, which runs the sweep and writes its tables; the
CLI draws these after :func:`optimiser.campaign.run_campaign`.
"""

from __future__ import annotations

from itertools import product
from pathlib import Path

import numpy as np

from ..campaign import pick_text, short_value
from ..columns import plot_label
from . import palette
from .figures import pyplot, save

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
            for ax, picked, least in ((axs[0], "picked_trip_fuel_kg", "min_trip_fuel_kg"),
                                      (axs[1], f"picked_{size}", f"min_{size}")):
                y = rows[picked].to_numpy(float) if picked in rows else np.full(len(idx), np.nan)
                y2 = rows[least].to_numpy(float) if least in rows else np.full(len(idx), np.nan)
                ax.plot(x_all[order], y[order], "o-", color=colour,
                        label=f"picked design{', ' + held if held else ''}")
                ax.plot(x_all[order], y2[order], "s--", color=colour, alpha=0.6, ms=4,
                        label=f"smallest on the front{', ' + held if held else ''}")
        for ax, ylabel in ((axs[0], plot_label("trip_fuel_kg")), (axs[1], plot_label(size))):
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
        fig.tight_layout()
        written += save(fig, out_dir / f"sweep_{axis.key.replace('.', '_')}", dpi=CAMPAIGN_DPI)
    return written
