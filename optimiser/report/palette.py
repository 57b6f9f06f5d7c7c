"""Every colour of the figures and the report: flap types, constraints, campaign lines.

Plots and the HTML report take their colours from here only. Today's assignment: flap types
and constraints are coloured by their position (in the study's flap list, among the active
constraints) in matplotlib's ``tab10`` cycle; the report's interactive constraint lines take
:data:`REPORT_LINE_COLOURS` by their drawing order.
"""

from __future__ import annotations

CYCLE = "tab10"
"""matplotlib colour map cycled for flap types, constraints and campaign lines."""
CYCLE_LENGTH = 10

FEASIBLE_REGION = "tab:green"
"""Fill of the region of a constraint diagram that meets every constraint."""
FEASIBLE_REGION_HEX = "#2ca02c"
"""The same colour as the report's page script writes it."""
FEASIBLE_REGION_ALPHA = 0.15
FEASIBLE_DESIGNS = "0.78"
"""Grey of every feasible evaluated design behind the front."""
DESIGN_MARKER = "k"
"""The star marking a design on its constraint diagram, and the edge of front points."""
NOTE_TEXT = "0.4"
"""Grey of small explanatory notes on a figure."""
GUIDE_LINES = "0.5"
"""Grey of the axes of the parallel-coordinates plot."""

REPORT_LINE_COLOURS = ("#1f77b4", "#ff7f0e", "#2ca02c", "#d62728", "#9467bd", "#8c564b",
                       "#e377c2", "#7f7f7f", "#bcbd22", "#17becf", "#393b79")
"""Zero-margin lines of the report's interactive constraint diagram, in drawing order."""

ROBUST_HISTOGRAM = "#7a9cc6"
ROBUST_NOMINAL = "k"
ROBUST_MEAN = "#c0392b"
ROBUST_QUANTILES = "#555555"
PROBABILITY_MET = (("#2e8b57", 0.95), ("#e0a030", 0.5), ("#c0392b", 0.0))
"""Bar colour of a constraint's probability of being met: the first whose threshold it
reaches (green from 95 %, amber from 50 %, else red)."""


def cycle_colour(n: int):
    """The ``n``-th colour of :data:`CYCLE` (RGBA), wrapping around."""
    from .figures import pyplot
    return pyplot().get_cmap(CYCLE)(n % CYCLE_LENGTH)


def flap_colours(flaps) -> dict:
    """Flap type -> RGBA, by position in the study's flap list."""
    return {f: cycle_colour(i) for i, f in enumerate(flaps)}


def flap_colours_hex(flaps) -> dict:
    """Flap type -> ``"#rrggbb"`` (the report's page)."""
    import matplotlib.colors as mcolors
    return {f: mcolors.to_hex(c) for f, c in flap_colours(flaps).items()}


def constraint_colours(constraints) -> dict:
    """Constraint name -> RGBA, by position among the study's active constraints."""
    return {c: cycle_colour(k) for k, c in enumerate(constraints)}


def probability_colour(p: float) -> str:
    """Bar colour for a probability ``p`` of meeting a constraint."""
    return next((colour for colour, threshold in PROBABILITY_MET if p >= threshold),
                PROBABILITY_MET[-1][0])


def js_array(colours, per_line=8, indent=15) -> str:
    """A JavaScript array literal of colour strings, ``per_line`` to a line (the page script)."""
    items = [f"'{c}'" for c in colours]
    lines = [", ".join(items[i:i + per_line]) for i in range(0, len(items), per_line)]
    return "[" + (",\n" + " " * indent).join(lines) + "]"
