"""Cheap checks of a study before a long run: can each requirement be met anywhere in the
variable bounds?

A coarse grid over the free variables (:data:`GRID_POINTS` per variable, every allowed flap
option) is sized in one call of the model; a constraint that no grid design meets is reported
with the study key it comes from and the value as the study wrote it, so a unit slip (a field
length in feet read as metres, a stall speed in m/s typed as knots) shows before an overnight
run. The grid is a screen, not a proof: a constraint met between grid points passes unseen,
so a warning says "no grid design", never "no design".
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass

import numpy as np

from .columns import CONSTRAINT_LABELS
from .search import (design_arrays, design_overrides, flap_indices, free_variables,
                     objectives_and_constraints)
from .sizing import active_constraints, size_designs

GRID_POINTS = 7
"""Grid points per free variable (ours: 7^3 x 6 flap options is about 2 000 designs, a few
milliseconds of sizing, and it holds both bounds of every variable)."""

CONSTRAINT_KEYS = {
    "mass_closure": ("mission", "range"),
    "takeoff_mass_limit": ("requirements", "max_takeoff_mass"),
    "runway_acceleration": ("departure", "runway"),
    "stall_speed": ("requirements", "stall_speed"),
    "takeoff_field": ("departure", "field_length"),
    "landing_field": ("destination", "field_length"),
    "climb_rate": ("requirements", "climb_rate"),
    "cruise_speed": ("mission", "cruise_speed"),
    "service_ceiling": ("requirements", "service_ceiling"),
}
"""The study key that sets each constraint's limit (the others follow from the
certification basis and the airfields)."""


@dataclass(frozen=True)
class Finding:
    """One constraint that no design of the grid meets."""

    constraint: str
    best_margin: float       # best margin over the grid [-] (negative)
    where: str               # the study key, with its value as given and in SI
    text: str                # one line for a person


def _key_text(study, constraint: str, entries) -> str:
    section_key = CONSTRAINT_KEYS.get(constraint)
    if section_key is None:
        return f"certification {study.spec.certification.basis} at the [departure] airfield"
    from .study_table import shown_text
    for e in entries:
        if (e.section, e.key) == section_key:
            si = shown_text(e)   # SI, or the reader's units (--units us)
            shown = e.given if e.given is not None else f"{si} ({e.origin})"
            return (f"[{e.section}] {e.key} = {shown}" if e.given is None or shown == si
                    else f"[{e.section}] {e.key} = {shown} (= {si})")
    return f"[{section_key[0]}] {section_key[1]}"


def grid_margins(study, points: int = GRID_POINTS):
    """Best margin of each active constraint over a grid of the bounds, and the share of
    grid designs that meet every constraint: ``({constraint: best margin}, share)``."""
    axes = [np.linspace(v.lower, v.upper, points) for v in free_variables(study)]
    X = np.array(list(itertools.product(*axes))) if axes else np.zeros((1, 0))
    options = flap_indices(study)
    tiled = np.tile(X, (len(options), 1))
    ws, load, ar = design_arrays(study, tiled)
    sized = size_designs(study.spec, ws, load, ar, np.repeat(options, len(X)),
                         design_overrides(study, tiled) or None)
    _, G = objectives_and_constraints(study, sized)
    best = (-G).max(axis=0)
    share = float(np.mean(np.asarray(sized["feasible"], bool)))
    return dict(zip(active_constraints(study.spec), best.tolist())), share


def findings(study, points: int = GRID_POINTS) -> tuple[list[Finding], float]:
    """Constraints that no grid design meets (best margin below zero), and the feasible
    share of the grid."""
    from .study_table import resolved_entries
    best, share = grid_margins(study, points)
    entries = resolved_entries(study)   # read once for every finding
    out = []
    for c, m in best.items():
        if m >= 0:
            continue
        where = _key_text(study, c, entries)
        out.append(Finding(c, m, where, (
            f"{where}: no design of a {points}-point grid over the bounds meets the "
            f"{CONSTRAINT_LABELS.get(c, c)} (best margin {m:+.1%}); check the value and its "
            "unit, or widen [variables]")))
    return out, share


def summary_lines(study, points: int = GRID_POINTS) -> list[str]:
    """What ``optimiser check`` prints about the grid: the findings, or how much of the
    grid is feasible."""
    found, share = findings(study, points)
    n = points ** len(free_variables(study)) * len(study.flaps)
    if found:
        return [f"warning: {f.text}" for f in found]
    if share == 0.0:
        return [f"warning: each requirement is met by some of {n} grid designs, but none "
                "meets all at once; a search may still find feasible designs between grid "
                "points (widen [variables] if it does not)"]
    return [f"grid check: {share:.1%} of {n} grid designs over the bounds meet every "
            "requirement"]
