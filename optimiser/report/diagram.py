"""Zero-margin lines of a constraint diagram, traced without grid artefacts.

A contour of a sized grid follows the grid's cells where a margin jumps (a mass that stops
closing, a cruise speed that changes regime), which draws staircases. Here each line is
solved along one axis instead: on a coarse grid of sized airplanes, every sign change of a
constraint's margin between two neighbouring grid points brackets a point of its line; all
brackets of all constraints are bisected together, one call of the vectorised model per
step, to :data:`BISECTION_STEPS` halvings (the point is then well within a pixel of the
line, or of the jump). A line is solved along the power-loading (thrust-to-weight) axis
when most of its sign changes lie that way, else along the wing-loading axis, and its points
are joined in order along the other axis.

Each polyline is oriented so that the side that does NOT meet the constraint is on its left
(the side matplotlib's ``withTickedStroke`` ticks), which is how the hatching is drawn. Lines
are drawn only where the airplane's mass closes (elsewhere its margins mean nothing).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

BISECTION_STEPS = 14
"""Halvings of each bracket (ours: 2^-14 of a step of a 60-point grid is about 1e-6 of the
axis, far below a pixel; each halving is one call of the model for every line at once)."""


@dataclass(frozen=True)
class ZeroLine:
    """The traced line of one constraint: polylines of (wing loading, loading) points."""

    name: str
    polylines: list  # of (k, 2) arrays, infeasible side on the left of travel


def smallest_excess(frame, constraints, required=None) -> np.ndarray:
    """Per grid point, the smallest margin beyond its required one over ``constraints``
    (``required``: name -> margin, 0 where absent; a non-finite margin counts as -1): where it
    is at least 0 every constraint is met, the diagram's shaded region."""
    required = required or {}
    return np.min([np.where(np.isfinite(m), m - required.get(c, 0.0), -1.0)
                   for c, m in ((c, frame[f"margin_{c}"].to_numpy(float)) for c in constraints)],
                  axis=0)


def _size(study, design, ws, ld):
    from ..evaluation import row_overrides, size_frame
    flap = study.spec.high_lift_names.index(design["flap"])
    return size_frame(study, ws, ld, np.full(len(ws), float(design["aspect_ratio"])),
                      np.full(len(ws), flap), row_overrides(study, design, len(ws)))


def _brackets(M, along_loading: bool):
    """Index pairs of neighbouring grid points with opposite signs of the margin M
    (shape: loading x wing loading). Returns (i0, j0, i1, j1)."""
    s = M >= 0
    if along_loading:
        i, j = np.nonzero(s[:-1, :] != s[1:, :])
        return i, j, i + 1, j
    i, j = np.nonzero(s[:, :-1] != s[:, 1:])
    return i, j, i, j + 1


def trace(study, design, ws, ld, frame, constraints, required=None) -> list[ZeroLine]:
    """Lines where each of ``constraints`` has its required margin (``required``: name ->
    margin, 0 where absent), at ``design``'s aspect ratio and flap, over the grid ``ws`` x
    ``ld`` whose sized ``frame`` (row-major, loading the slow axis) is given. Constraints
    whose margin does not cross that value on the grid have no line."""
    required = required or {}
    shape = (len(ld), len(ws))
    jobs = []  # (constraint, along_loading, i0, j0, i1, j1, sign at the first point)
    for c in constraints:
        M = frame[f"margin_{c}"].to_numpy(float).reshape(shape) - required.get(c, 0.0)
        M = np.where(np.isfinite(M), M, -1.0)
        n_vertical = len(_brackets(M, True)[0])
        n_horizontal = len(_brackets(M, False)[0])
        if n_vertical + n_horizontal == 0:
            continue
        along = n_vertical >= n_horizontal
        i0, j0, i1, j1 = _brackets(M, along)
        jobs.append((c, along, i0, j0, i1, j1, M[i0, j0] >= 0))
    if not jobs:
        return []
    # every bracket of every constraint, bisected together
    lo_w = np.concatenate([ws[j[3]] for j in jobs])
    hi_w = np.concatenate([ws[j[5]] for j in jobs])
    lo_l = np.concatenate([ld[j[2]] for j in jobs])
    hi_l = np.concatenate([ld[j[4]] for j in jobs])
    first_ok = np.concatenate([j[6] for j in jobs])
    owner = np.concatenate([np.full(len(j[2]), k) for k, j in enumerate(jobs)])
    names = [j[0] for j in jobs]
    for _ in range(BISECTION_STEPS):
        mw, ml = 0.5 * (lo_w + hi_w), 0.5 * (lo_l + hi_l)
        sized = _size(study, design, mw, ml)
        m = np.empty(len(mw))
        for k, c in enumerate(names):
            sel = owner == k
            m[sel] = sized[f"margin_{c}"].to_numpy(float)[sel] - required.get(c, 0.0)
        ok = np.where(np.isfinite(m), m, -1.0) >= 0
        same = ok == first_ok           # the midpoint is on the first point's side
        lo_w, lo_l = np.where(same, mw, lo_w), np.where(same, ml, lo_l)
        hi_w, hi_l = np.where(same, hi_w, mw), np.where(same, hi_l, ml)
    px, py = 0.5 * (lo_w + hi_w), 0.5 * (lo_l + hi_l)
    # a line is drawn only where the airplane closes: the margins of a design whose mass
    # does not close say nothing about it
    closes = _size(study, design, px, py)["margin_mass_closure"].to_numpy(float) >= 0
    lines = []
    for k, (c, along, i0, j0, _, _, ok0) in enumerate(jobs):
        sel = owner == k
        if c != "mass_closure":
            keep = closes[sel]
            i0, j0, ok0, sel = i0[keep], j0[keep], ok0[keep], np.flatnonzero(sel)[keep]
        step = (ld[1] - ld[0]) if along else (ws[1] - ws[0])
        polylines = _join(px[sel], py[sel], j0 if along else i0, along, ok0, step)
        if polylines:
            lines.append(ZeroLine(c, polylines))
    return lines


JOIN_STEPS = 3.0
"""A point joins a polyline of the previous grid column (or row) when it lies within this
many grid steps of its end, across the solving axis (ours: a steep line moves a few steps
per column; two lines of one constraint are further apart)."""


def _join(x, y, slot, along_loading, first_ok, step):
    """Polylines through the points, in order of the grid column (``along_loading``) or row
    they were found in: each point joins the polyline of the previous column whose end is
    nearest across the solving axis (within :data:`JOIN_STEPS` grid steps ``step``), else
    starts a new one. Oriented with the infeasible side on the left."""
    across = y if along_loading else x
    order = np.lexsort((across, slot))
    x, y, across, slot, first_ok = x[order], y[order], across[order], slot[order], \
        first_ok[order]
    finished, active = [], []          # active: (polyline index list, slot of its end)
    for s in np.unique(slot):
        here = np.flatnonzero(slot == s)
        still = [(line, end) for line, end in active if end == s - 1]
        finished += [line for line, end in active if end != s - 1]
        taken, new_active = set(), []
        for idx in here:
            best, gap = None, JOIN_STEPS * step
            for k, (line, _) in enumerate(still):
                d = abs(across[idx] - across[line[-1]])
                if k not in taken and d <= gap:
                    best, gap = k, d
            if best is None:
                new_active.append(([idx], s))
            else:
                taken.add(best)
                still[best][0].append(idx)
                new_active.append((still[best][0], s))
        finished += [line for k, (line, _) in enumerate(still) if k not in taken]
        active = new_active
    finished += [line for line, _ in active]
    out = []
    for idx in finished:
        if len(idx) < 2:
            continue
        idx = np.asarray(idx)
        pts = np.column_stack([x[idx], y[idx]])
        # travelling in increasing slot order: along the loading axis the line runs toward
        # higher wing loading, its left is higher loading; the first (lower) point of each
        # bracket tells which side meets the constraint
        lower_ok = np.mean(first_ok[idx]) >= 0.5
        if along_loading:
            infeasible_left = lower_ok        # upper side (left of rightward travel) fails
        else:
            infeasible_left = not lower_ok    # travelling up: left is lower wing loading
        out.append(pts if infeasible_left else pts[::-1])
    return out
