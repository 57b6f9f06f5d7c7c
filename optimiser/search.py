"""The search layer: a vectorised pymoo problem per flap option, the budget split, the
fixed hypervolume reference and the non-dominated merge.

How the flap choice is handled
------------------------------
The flap type is a choice among a handful of options, while wing loading, power loading (or
thrust-to-weight) and aspect ratio are continuous. The search uses the exact decomposition:
one continuous NSGA-II per allowed flap option, with the flap fixed, and the per-option fronts
merged into one non-dominated front. The mixed problem's front is exactly the non-dominated
subset of the union of the per-option fronts, so nothing is approximated; each option keeps
its own population, so no flap type is lost from the front by genetic drift (an integer-coded
flap column treats the options as ordered and can drop one at small budgets), and the
per-option fronts are what a flap comparison needs. The study's budget (population x
generations evaluations) is split evenly: every option runs a population of
``ceil(population / n_options)`` (at least :data:`MIN_OPTION_POPULATION`) and one generation of
the run is one generation of every option, evaluated in turn. benchmarks/search_quality.py
measures the front against a dense enumeration and against an integer-coded NSGA-II.

This module imports pymoo lazily (inside functions) so that ``optimiser --help`` stays fast.
"""

from __future__ import annotations

import itertools
import math

import numpy as np

MIN_OPTION_POPULATION = 8
"""Smallest per-option population (common practice: NSGA-II needs a few parents to mate)."""

REFERENCE_GRID_POINTS = 9
"""Points per free variable of the grid that fixes the hypervolume scales before a search."""

REFERENCE_MARGIN = 1.1
"""The hypervolume reference point is 1.1 in normalised objectives (10 % beyond the nadir)."""


def free_variables(study):
    """The study's variables that the search varies (a fixed variable is left out)."""
    return tuple(v for v in study.variables if not v.fixed)


def flap_indices(study) -> tuple[int, ...]:
    """Indices into ``study.spec.high_lift_names`` of the study's allowed flap options."""
    names = study.spec.high_lift_names
    return tuple(names.index(f) for f in study.flaps)


def _variable_columns(study, X):
    X = np.atleast_2d(np.asarray(X, float))
    n = X.shape[0]
    cols, j = [], 0
    for v in study.variables:
        if v.fixed:
            cols.append(np.full(n, v.lower))
        else:
            cols.append(X[:, j])
            j += 1
    return cols


def design_arrays(study, X):
    """Full (wing loading, loading, aspect ratio) arrays from a matrix of free variables."""
    return _variable_columns(study, X)[:3]


def design_overrides(study, X) -> dict:
    """The per-design sizing overrides the optional variables give (``{"cruise_altitude_m":
    array}`` when the study's cruise altitude is a variable; empty otherwise)."""
    cols = _variable_columns(study, X)
    return {v.column: c for v, c in zip(study.variables[3:], cols[3:])}


def objectives_and_constraints(study, frame):
    """F (objectives, minimised) and G (= required margin - margin, <= 0 is met) from a sized
    frame (a DataFrame, or the dict of arrays of :func:`~optimiser.sizing.size_designs`); the
    required margins are the study's ``[requirements] margins`` (0 where none is given)."""
    from .sizing import active_constraints, required_margins
    F = np.column_stack([np.asarray(frame[c], float) for c in study.objective_columns()])
    G = -np.column_stack([np.asarray(frame[f"margin_{c}"], float)
                          for c in active_constraints(study.spec)])
    required = required_margins(study.spec)
    if required.any():  # no margins required: G is -margin exactly, as before
        G = G + required
    # A non-finite number must not reach the sorting: treat it as a large violation / a bad
    # objective (the sizing model returns finite numbers; this is a guard, not a path).
    G = np.where(np.isfinite(G), G, 1e6)
    F = np.where(np.isfinite(F), F, 1e30)
    return F, G


def make_problem(study, flap_index: int):
    """A vectorised pymoo Problem sizing the whole population with one ``size_frame`` call."""
    from .problem import SizingProblem
    return SizingProblem(study, flap_index)


def option_seed(seed: int, option: int) -> int:
    """The seed of one flap option's NSGA-II, derived deterministically from the run seed."""
    return int(np.random.SeedSequence([int(seed), int(option)]).generate_state(1)[0])


def plan_budget(n_options: int, population: int, generations: int):
    """Per-option population and run generations for a study budget of population x
    generations evaluations split evenly over ``n_options`` flap options."""
    per = max(MIN_OPTION_POPULATION, math.ceil(population / n_options))
    return per, int(generations)


def make_algorithms(study, seed: int, option_population: int, generations: int):
    """One set-up NSGA-II per allowed flap option (ask-and-tell ready)."""
    from pymoo.algorithms.moo.nsga2 import NSGA2
    algos = []
    for k, idx in enumerate(flap_indices(study)):
        problem = make_problem(study, idx)
        algo = NSGA2(pop_size=option_population, eliminate_duplicates=True)
        # The run loop decides when to stop; pymoo's own termination is a generous ceiling.
        algo.setup(problem, termination=("n_gen", 10 ** 9), seed=option_seed(seed, k),
                   verbose=False)
        algos.append(algo)
    return algos


def _covers(A, B) -> np.ndarray:
    """(len(B), len(A)) mask: row j of A is <= row i of B in every objective."""
    out = A[None, :, 0] <= B[:, None, 0]
    for k in range(1, A.shape[1]):
        out &= A[None, :, k] <= B[:, None, k]
    return out


def nondominated_mask(F, chunk=512) -> np.ndarray:
    """Mask of the rows of F (minimised) that no other row dominates; of identical rows only
    the first is kept. Vectorised pairwise comparison in chunks of rows (memory ~ chunk x n).

    Among distinct rows, a row <= another in every objective is better in at least one, so
    dominance is "<= everywhere" by some row other than itself."""
    F = np.asarray(F, float)
    n = len(F)
    keep = np.ones(n, bool)
    if n == 0:
        return keep
    _, first = np.unique(F, axis=0, return_index=True)
    unique = np.zeros(n, bool)
    unique[first] = True
    U = F[unique]
    dominated = np.zeros(len(U), bool)
    for a in range(0, len(U), chunk):
        dominated[a:a + chunk] = _covers(U, U[a:a + chunk]).sum(axis=1) > 1  # itself + one
    keep[:] = False
    keep[np.flatnonzero(unique)[~dominated]] = True
    return keep


def merge_nondominated(F_old, F_new, chunk=2048):
    """Masks (old, new) of the rows of ``vstack([F_old, F_new])`` that
    :func:`nondominated_mask` keeps, for ``F_old`` already mutually non-dominated with no
    identical rows (a front): O(n_old x n_new) instead of O((n_old + n_new)^2).

    A new row equal to or dominated by an old one goes; the new rows left are thinned among
    themselves; an old row goes when a new survivor dominates it (dominance is transitive,
    so the survivors suffice; a survivor is never identical to an old row, so "<=
    everywhere" is dominance)."""
    F_old = np.asarray(F_old, float)
    F_new = np.asarray(F_new, float)
    keep_old = np.ones(len(F_old), bool)
    if len(F_old) == 0 or len(F_new) == 0:
        return keep_old, nondominated_mask(F_new)  # nothing to compare across
    keep_new = np.ones(len(F_new), bool)
    for a in range(0, len(F_old), chunk):
        keep_new &= ~_covers(F_old[a:a + chunk], F_new).any(axis=1)
    survivors = np.flatnonzero(keep_new)
    if survivors.size:
        S = F_new[survivors]
        inner = nondominated_mask(S)
        keep_new[survivors[~inner]] = False
        S = S[inner]
        for a in range(0, len(F_old), chunk):
            keep_old[a:a + chunk] = ~_covers(S, F_old[a:a + chunk]).any(axis=1)
    return keep_old, keep_new


def reference_scales(study):
    """Fixed objective scales for the hypervolume, from the study alone, before any search.

    A grid of :data:`REFERENCE_GRID_POINTS` values per free variable over the bounds, for every
    allowed flap option, is sized; ``ideal`` and ``nadir`` are the best and worst of each
    objective over the grid's non-dominated feasible designs (its Pareto front; over all grid
    designs when none is feasible), so the reference point sits just beyond the front, where
    the quality of a front shows, not beyond the worst feasible design. Objectives are
    normalised as ``(f - ideal) / (nadir - ideal)`` and the reference point is
    :data:`REFERENCE_MARGIN` in every normalised objective.
    """
    from .sizing import size_designs
    axes = [np.linspace(v.lower, v.upper, REFERENCE_GRID_POINTS) for v in free_variables(study)]
    X = np.array(list(itertools.product(*axes))) if axes else np.zeros((1, 0))
    options = flap_indices(study)
    tiled = np.tile(X, (len(options), 1))
    ws, load, ar = design_arrays(study, tiled)
    sized = size_designs(study.spec, ws, load, ar, np.repeat(options, len(X)),  # one call
                         design_overrides(study, tiled))
    F, _ = objectives_and_constraints(study, sized)
    ok = np.asarray(sized["feasible"], bool)
    basis = F[ok] if ok.any() else F
    basis = basis[nondominated_mask(basis)]
    ideal = basis.min(axis=0)
    nadir = basis.max(axis=0)
    span = nadir - ideal
    span = np.where(span > 0, span, np.maximum(np.abs(nadir), 1.0))
    return {"ideal": ideal.tolist(), "nadir": (ideal + span).tolist(),
            "reference_point_normalised": [REFERENCE_MARGIN] * len(ideal),
            "reference_point": (ideal + REFERENCE_MARGIN * span).tolist(),
            "basis": ("non-dominated feasible grid designs" if ok.any()
                      else "non-dominated grid designs (none feasible)"),
            "grid_points_per_variable": REFERENCE_GRID_POINTS}


def hypervolume(F, scales) -> float:
    """Hypervolume of objective rows F (raw units) against the fixed normalised reference."""
    from pymoo.indicators.hv import HV
    F = np.asarray(F, float)
    if len(F) == 0:
        return 0.0
    ideal = np.asarray(scales["ideal"])
    span = np.asarray(scales["nadir"]) - ideal
    Fn = (F - ideal) / span
    ref = np.asarray(scales["reference_point_normalised"], float)
    Fn = Fn[np.all(Fn < ref, axis=1)]
    if len(Fn) == 0:
        return 0.0
    return float(HV(ref_point=ref)(Fn))


def total_violation(G) -> np.ndarray:
    """Sum of the constraint shortfalls (normalised margins below zero) of each row of the
    constraint matrix G of :func:`objectives_and_constraints`."""
    return np.maximum(np.asarray(G, float), 0.0).sum(axis=1)
