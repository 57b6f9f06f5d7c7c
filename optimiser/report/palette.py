"""Every colour and line style of the figures and the report: flap types, constraints,
campaign lines, robustness.

Each constraint and each flap type has ONE colour and line style, fixed by its name, in every
figure of every study and in the HTML report (a stall-speed line is vermillion and solid
everywhere; a Fowler flap is rose everywhere). The colours are colour-blind safe:

- constraints: the eight colours of Okabe & Ito, "Color Universal Design (CUD): how to make
  figures and presentations that are friendly to colorblind people" (2008), hex values from
  memory, told apart further by dash patterns;
- flap types: Paul Tol's "muted" qualitative scheme, Tol, "Colour schemes", SRON technical
  note SRON/EPS/TN/09-002 (2021), hex values from memory;
- a study's own flap type or a constraint not listed here takes a colour of the same schemes
  chosen by a checksum of its name, so it too keeps its colour from study to study.
"""

from __future__ import annotations

import zlib

OKABE_ITO = {"black": "#000000", "orange": "#E69F00", "sky_blue": "#56B4E9",
             "bluish_green": "#009E73", "yellow": "#F0E442", "blue": "#0072B2",
             "vermillion": "#D55E00", "reddish_purple": "#CC79A7"}
"""Okabe & Ito (2008), the colour-universal-design set (from memory)."""

TOL_MUTED = {"indigo": "#332288", "cyan": "#88CCEE", "teal": "#44AA99", "green": "#117733",
             "olive": "#999933", "sand": "#DDCC77", "rose": "#CC6677", "wine": "#882255",
             "purple": "#AA4499"}
"""Tol (2021), the "muted" qualitative scheme (from memory)."""

DASHES = {"solid": "-", "dashed": "--", "dotted": ":", "dashdot": "-."}
"""Line styles by name, as matplotlib writes them."""
SVG_DASHES = {"solid": "", "dashed": "7 4", "dotted": "2 3", "dashdot": "7 3 2 3"}
"""The same line styles as SVG ``stroke-dasharray`` values (the report's page)."""

O = OKABE_ITO
CONSTRAINT_STYLES = {
    "mass_closure": (O["black"], "dotted"),
    "mission_fuel": (TOL_MUTED["olive"], "solid"),
    "max_takeoff_mass": (TOL_MUTED["olive"], "dashed"),
    "takeoff_mass_limit": (O["black"], "dashdot"),
    "runway_acceleration": (O["black"], "dashed"),
    "stall_speed": (O["vermillion"], "solid"),
    "takeoff_field": (O["blue"], "solid"),
    "landing_field": (O["sky_blue"], "solid"),
    "climb_rate": (O["bluish_green"], "solid"),
    "climb_gradient": (O["bluish_green"], "dashed"),
    "oei_climb_gradient": (O["reddish_purple"], "solid"),
    "first_segment_climb": (O["reddish_purple"], "dashed"),
    "final_takeoff_climb": (O["reddish_purple"], "dotted"),
    "approach_climb": (O["reddish_purple"], "dashdot"),
    "landing_climb": (O["sky_blue"], "dashed"),
    "cruise_speed": (O["orange"], "solid"),
    "service_ceiling": (TOL_MUTED["wine"], "solid"),
    "cruise_ceiling": (TOL_MUTED["wine"], "dashed"),
    "fuel_volume": (O["orange"], "dashed"),
    "span": (O["blue"], "dashed"),
    "outside_model_range": (O["black"], "solid"),
}
"""Constraint name -> (colour, line style name). Constraints that share a colour are of one
kind (the climb checks with one engine out, the landing checks, the two mass checks of a
frozen design, the two ceiling checks) and differ in dash."""
del O

FLAP_COLOURS = {
    "none": TOL_MUTED["indigo"], "plain": TOL_MUTED["cyan"], "split": TOL_MUTED["teal"],
    "single_slotted": TOL_MUTED["green"], "double_slotted": TOL_MUTED["olive"],
    "fowler": TOL_MUTED["rose"], "single_slotted+slats": TOL_MUTED["wine"],
    "fowler+slats": TOL_MUTED["purple"], "double_slotted+slats": TOL_MUTED["sand"],
}
"""Flap type -> colour. Another "+slats" option takes its flap's colour with a dashed line
and a triangle marker (see :func:`flap_style`)."""

SPARE_COLOURS = (OKABE_ITO["orange"], OKABE_ITO["blue"], OKABE_ITO["vermillion"],
                 OKABE_ITO["bluish_green"], OKABE_ITO["reddish_purple"], OKABE_ITO["sky_blue"],
                 TOL_MUTED["sand"], TOL_MUTED["olive"])
"""Colours for names not listed above, picked by a checksum of the name."""

FEASIBLE_REGION = "#009E73"
"""Fill of the region of a constraint diagram that meets every constraint (Okabe-Ito
bluish green, light)."""
FEASIBLE_REGION_HEX = FEASIBLE_REGION
"""The same colour as the report's page script writes it."""
FEASIBLE_REGION_ALPHA = 0.13
FEASIBLE_DESIGNS = "0.80"
"""Grey of every feasible evaluated design behind the front."""
DESIGN_MARKER = "k"
"""The star marking a design on its constraint diagram, and the edge of front points."""
NOTE_TEXT = "0.35"
"""Grey of small explanatory notes and the caution footer of a figure."""
GUIDE_LINES = "0.5"
"""Grey of the axes of the parallel-coordinates plot."""

CAMPAIGN_COLOURS = (OKABE_ITO["blue"], OKABE_ITO["vermillion"], OKABE_ITO["bluish_green"],
                    OKABE_ITO["orange"], OKABE_ITO["reddish_purple"], OKABE_ITO["sky_blue"],
                    OKABE_ITO["black"], TOL_MUTED["wine"], TOL_MUTED["olive"])
"""Lines of a campaign figure (one per combination of the other axes), in order."""

ROBUST_HISTOGRAM = "#88CCEE"
ROBUST_NOMINAL = "k"
ROBUST_MEAN = "#D55E00"
ROBUST_QUANTILES = "#555555"
PROBABILITY_MET = (("#009E73", 0.95), ("#E69F00", 0.5), ("#D55E00", 0.0))
"""Bar colour of a constraint's probability of being met: the first whose threshold it
reaches (green from 95 %, orange from 50 %, else vermillion; Okabe-Ito)."""


def _spare(name: str) -> str:
    return SPARE_COLOURS[zlib.crc32(name.encode("utf-8")) % len(SPARE_COLOURS)]


def constraint_style(name: str) -> tuple[str, str]:
    """(colour ``"#rrggbb"``, line style name of :data:`DASHES`) of a constraint."""
    return CONSTRAINT_STYLES.get(name, (_spare(name), "dashdot"))


def flap_style(name: str) -> dict:
    """Colour, line style (matplotlib) and marker of a flap option, fixed by its name."""
    base, _, slats = name.partition("+")
    if name in FLAP_COLOURS:
        colour = FLAP_COLOURS[name]
    else:
        colour = FLAP_COLOURS.get(base, _spare(base))
    return {"color": colour, "ls": "--" if slats else "-", "marker": "^" if slats else "o"}


def flap_colours(flaps) -> dict:
    """Flap type -> ``"#rrggbb"`` for each of ``flaps`` (fixed by name, not by position)."""
    return {f: flap_style(f)["color"] for f in flaps}


flap_colours_hex = flap_colours
"""The same mapping, as the report's page takes it."""


def constraint_colours(constraints) -> dict:
    """Constraint name -> ``"#rrggbb"`` (fixed by name, not by position)."""
    return {c: constraint_style(c)[0] for c in constraints}


def cycle_colour(n: int) -> str:
    """The ``n``-th colour of :data:`CAMPAIGN_COLOURS`, wrapping around."""
    return CAMPAIGN_COLOURS[n % len(CAMPAIGN_COLOURS)]


_FLAP_WORDS = {"none": "no flap", "plain": "plain flap", "split": "split flap",
               "single_slotted": "single-slotted flap", "double_slotted": "double-slotted flap",
               "fowler": "Fowler flap"}


def flap_label(name: str) -> str:
    """A flap option in words: ``"single_slotted+slats"`` -> "single-slotted flap with
    slats"; a study's own type is written with spaces for its underscores."""
    base, _, slats = name.partition("+")
    words = _FLAP_WORDS.get(base, base.replace("_", " ") + " flap")
    if slats:
        words = "slats, no flap" if base == "none" else f"{words} with slats"
    return words


def probability_colour(p: float) -> str:
    """Bar colour for a probability ``p`` of meeting a constraint."""
    return next((colour for colour, threshold in PROBABILITY_MET if p >= threshold),
                PROBABILITY_MET[-1][0])


def js_object(mapping: dict, indent=15) -> str:
    """A JavaScript object literal of string values (the page script)."""
    items = [f"'{k}': '{v}'" for k, v in mapping.items()]
    lines = [", ".join(items[i:i + 4]) for i in range(0, len(items), 4)]
    return "{" + (",\n" + " " * indent).join(lines) + "}"
