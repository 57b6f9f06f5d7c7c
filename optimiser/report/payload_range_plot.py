"""The payload-range chart of frozen designs (``optimiser payload-range``).

Payload [kg] against range [km] (in US customary units lb against nmi) through the corners A-D of
:func:`optimiser.payload_range.payload_range`, one line per design (colours of
:data:`~optimiser.report.palette.CAMPAIGN_COLOURS` in order), the corners lettered, the
study's design point (design range, design payload) marked with a star, the legend outside
the axes and the caution in the footer (:func:`optimiser.report.figures.finish_layout`).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from ..display_units import column_display, display_label, resolve
from .figures import finish_layout, pyplot, save
from .palette import CAMPAIGN_COLOURS, DESIGN_MARKER, NOTE_TEXT

MOST_LINES = 9
"""Most designs drawn in one chart (one colour each); the table holds them all."""


def payload_range_figure(table, study_name: str, design_range_km: float,
                         design_payload_kg: float, run_utc: str | None = None, units=None):
    """The chart of ``table`` (columns ``design``, ``flap``, ``corner``, ``range_km``,
    ``payload_kg``), the first :data:`MOST_LINES` designs, the footer naming the study (and
    the run's start, UTC); returns the figure. ``units``: ``"si"`` (km, kg) or ``"us"`` (nmi,
    lb) for the plotted data, limits and labels together (default
    :func:`~optimiser.display_units.current_system`); the table stays SI."""
    plt = pyplot()
    system = resolve(units)

    def x_shown(v):   # SI: the very same values
        return column_display("range_km", v, system)[0]

    def y_shown(v):
        return column_display("payload_kg", v, system)[0]
    fig, ax = plt.subplots(figsize=(8.2, 4.6))
    designs = list(dict.fromkeys(table["design"].tolist()))
    for k, d in enumerate(designs[:MOST_LINES]):
        rows = table[table["design"] == d].sort_values("corner")
        x = x_shown(rows["range_km"].to_numpy(float))
        y = y_shown(rows["payload_kg"].to_numpy(float))
        colour = CAMPAIGN_COLOURS[k % len(CAMPAIGN_COLOURS)]
        flap = str(rows["flap"].iloc[0])
        ax.plot(x, y, "-o", color=colour, markersize=3.5, linewidth=1.4,
                label=f"design {d}" + (f" ({flap})" if flap else ""))
        labels = list(rows["corner"])
        for i in range(len(labels) - 1, 0, -1):  # coinciding corners share one label
            if x[i] == x[i - 1] and y[i] == y[i - 1]:
                labels[i - 1], labels[i] = labels[i - 1] + "=" + labels[i], ""
        for corner, xi, yi in zip(labels, x, y):
            if corner and np.isfinite(xi):
                ax.annotate(corner, (xi, yi), textcoords="offset points", xytext=(3, 3),
                            fontsize=7, color=colour)
    ax.plot([x_shown(design_range_km)], [y_shown(design_payload_kg)], marker="*",
            markersize=13, linestyle="", color=DESIGN_MARKER,
            label="study's design point\n(design range and payload)")
    ax.set_xlabel(display_label("range_km", system))
    ax.set_ylabel(display_label("payload_kg", system))
    ax.set_xlim(left=0.0)
    ax.set_ylim(bottom=0.0, top=1.12 * y_shown(max(design_payload_kg,
                                                   float(table["payload_kg"].max()))))
    ax.grid(True, linewidth=0.4, alpha=0.5)
    ax.set_title("Payload-range: A max payload, B at max takeoff mass, C full tanks, D ferry",
                 fontsize=9)
    ax.legend(loc="upper left", bbox_to_anchor=(1.02, 1.0), fontsize=7.5, frameon=False)
    if len(designs) > MOST_LINES:
        ax.text(1.02, 0.0, f"first {MOST_LINES} of {len(designs)} designs drawn; all in the "
                "table", transform=ax.transAxes, fontsize=6.5, color=NOTE_TEXT, va="bottom")
    finish_layout(fig, study_name, run_utc)
    return fig


def write_payload_range_figure(table, study_name: str, design_range_km: float,
                               design_payload_kg: float, stem) -> list[Path]:
    """Draw the chart and write ``<stem>.png`` and ``<stem>.svg``; returns the paths."""
    return save(payload_range_figure(table, study_name, design_range_km, design_payload_kg),
                stem)
