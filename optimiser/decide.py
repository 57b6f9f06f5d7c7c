"""Decision support: pick one compromise from a front, and compare the flap options.

Picking (:func:`choose`) works on the feasible non-dominated front of a run (``front.csv``),
after optional hard limits on any column (:func:`parse_limit`). Objectives are normalised
with the ideal and nadir of the whole front, *before* the limits, so that a limit removes
candidates without changing what the weights or the aspiration mean:
``nf = (f - ideal) / (nadir - ideal)``. Three published methods:

``weights``
    Pseudo-weights (Deb 2001): each design's pseudo-weight vector says how close it is to the
    best of each objective relative to the others; the design whose pseudo-weights are nearest
    (L1 distance) to the user's preference weights is picked.
``knee``
    Highest trade-off point (Deb & Gupta 2011): for each design, the least trade-off of moving
    to any other design (sum of what is sacrificed over sum of what is gained, normalised
    objectives); the design where every move costs most per unit gained is the knee.
``aspiration``
    Nearest to an aspiration point by the augmented achievement scalarising function
    (Wierzbicki 1980): ``max_i w_i (nf_i - nz_i) + rho sum_i w_i (nf_i - nz_i)``, smallest
    wins; it picks a design on the front even when the aspiration is unreachable or
    over-modest.

Flap comparison (:func:`compare_flaps`) reads a run's archive: the run gave every flap option
its own NSGA-II with the same per-option population, generations and a seed from the same
stream (:func:`optimiser.search.option_seed`), so the per-option feasible non-dominated sets
are per-option fronts under identical constraints and budget.

References
----------
.. [1] K. Deb, "Multi-Objective Optimization Using Evolutionary Algorithms", Wiley, 2001,
   Section 8.7 (pseudo-weight vector; section number from memory).
.. [2] K. Deb and S. Gupta, "Understanding knee points in bicriteria problems and their
   implications as preferred solution principles", Engineering Optimization 43(11), 2011
   (trade-off measure; from memory). L. Rachmawati and D. Srinivasan, "Multiobjective
   evolutionary algorithm with controllable focus on the knees of the Pareto front", IEEE
   Trans. Evol. Comput. 13(4), 2009, discuss the same idea (from memory).
.. [3] A. P. Wierzbicki, "The use of reference objectives in multiobjective optimization",
   in Multiple Criteria Decision Making Theory and Application, Springer LNEMS 177, 1980
   (achievement scalarising function; from memory).
"""

from __future__ import annotations

import json
import math
import re
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from .columns import short_and_unit, unit_of

METHODS = ("weights", "knee", "aspiration")
ASF_AUGMENTATION = 1e-6
"""rho of the augmented ASF: small, so it only breaks ties between weakly optimal designs
(common practice; Wierzbicki's augmentation term)."""
RUNNERS_UP = 5


class DecideError(ValueError):
    """A pick, flap comparison or report that cannot be made for a reason the user can fix."""


# ----------------------------------------------------------------------------- reading a run

@dataclass(frozen=True)
class Run:
    """A finished run folder: its study, its front, its archive path and run.json."""

    study: object
    run_dir: Path
    front: object
    info: dict

    @property
    def evaluations_path(self) -> Path:
        return self.run_dir / "evaluations.csv"


def load_run(run_dir) -> Run:
    """Read a run folder written by ``optimiser run``; :class:`DecideError` if it is not one."""
    import pandas as pd
    from .study import parse_study
    run_dir = Path(run_dir)
    if not run_dir.is_dir():
        raise DecideError(f"{run_dir}: no such run folder; expected a folder written by "
                          "'optimiser run'")
    for name in ("study.toml", "run.json"):
        if not (run_dir / name).is_file():
            raise DecideError(f"{run_dir}: no {name} in it; expected a finished run folder "
                              "written by 'optimiser run'")
    study = parse_study((run_dir / "study.toml").read_text("utf-8"), str(run_dir / "study.toml"))
    info = json.loads((run_dir / "run.json").read_text("utf-8"))
    path = run_dir / "front.csv"
    if path.is_file():
        front = pd.read_csv(path, keep_default_na=False, na_values=[""])
        for c in ("limiting_constraint", "most_violated", "outside_bounds"):
            if c in front:
                front[c] = ["" if pd.isna(v) else str(v) for v in front[c]]
    else:
        front = pd.DataFrame()
    return Run(study=study, run_dir=run_dir, front=front, info=info)


# ----------------------------------------------------------------------------- hard limits

_LIMIT = re.compile(r"^\s*([A-Za-z_][A-Za-z0-9_]*)\s*(<=|>=|<|>|==)\s*([-+0-9.eE]+)\s*$")


@dataclass(frozen=True)
class Limit:
    """A hard limit on one column of the front, e.g. ``engine_power_kW <= 260``."""

    column: str
    op: str
    value: float

    def mask(self, frame) -> np.ndarray:
        x = frame[self.column].to_numpy(float)
        return {"<=": x <= self.value, ">=": x >= self.value, "<": x < self.value,
                ">": x > self.value, "==": np.isclose(x, self.value)}[self.op]

    def __str__(self):
        return f"{self.column}{self.op}{self.value:g}"


def parse_limit(text: str, columns) -> Limit:
    """Parse ``"COLUMN<=VALUE"`` (also ``>=``, ``<``, ``>``, ``==``); ``columns`` are those of
    front.csv. Raises :class:`DecideError` with one line for bad syntax or an unknown column."""
    import difflib
    m = _LIMIT.match(text or "")
    if not m:
        raise DecideError(f"--limit: got {text!r}; expected COLUMN<=VALUE or COLUMN>=VALUE, "
                          "e.g. 'engine_power_kW<=260'")
    col, op, val = m.groups()
    try:
        value = float(val)
    except ValueError:
        raise DecideError(f"--limit: got {text!r}; {val!r} is not a number") from None
    if not math.isfinite(value):
        raise DecideError(f"--limit: got {text!r}; expected a finite number")
    numeric = [c for c in columns if c not in ("flap", "limiting_constraint", "most_violated",
                                                "outside_bounds")]
    if col not in numeric:
        close = difflib.get_close_matches(col, numeric, n=1)
        hint = f" (did you mean {close[0]!r}?)" if close else ""
        raise DecideError(f"--limit: unknown column {col!r}{hint}; expected a numeric column "
                          "of front.csv such as engine_power_kW, maintenance_index, "
                          "takeoff_mass_kg")
    return Limit(col, op, value)


def apply_limits(front, limits):
    """The front rows meeting every limit (original index kept). Raises :class:`DecideError`
    naming the limits when no design is left."""
    keep = np.ones(len(front), bool)
    for lim in limits:
        keep &= lim.mask(front)
    if not keep.any():
        parts = []
        for lim in limits:
            x = front[lim.column].to_numpy(float)
            best = x.min() if lim.op in ("<=", "<") else x.max()
            parts.append(f"{lim} leaves {int(lim.mask(front).sum())} of {len(front)} "
                         f"(front reaches {best:.4g})")
        raise DecideError("--limit: no front design meets every limit: " + "; ".join(parts))
    return front[keep]


# ----------------------------------------------------------------------------- the methods

def normalise(F, ideal=None, nadir=None):
    """``(F - ideal) / (nadir - ideal)``; ideal and nadir default to the columns' min and max.
    An objective with no spread gets a span of 1 (it cannot separate designs)."""
    F = np.asarray(F, float)
    ideal = F.min(axis=0) if ideal is None else np.asarray(ideal, float)
    nadir = F.max(axis=0) if nadir is None else np.asarray(nadir, float)
    span = nadir - ideal
    return (F - ideal) / np.where(span > 0, span, 1.0)


def pseudo_weights(nF):
    """Pseudo-weight vectors of normalised objective rows (Deb 2001, from memory):
    ``w_i = (1 - nf_i) / sum_j (1 - nf_j)``. A row at the nadir of every objective gets
    equal weights."""
    nF = np.asarray(nF, float)
    closeness = np.clip(1.0 - nF, 0.0, None)
    total = closeness.sum(axis=1, keepdims=True)
    m = nF.shape[1]
    return np.where(total > 0, closeness / np.where(total > 0, total, 1.0), 1.0 / m)


def weights_distance(nF, weights):
    """L1 distance between each row's pseudo-weights and the preference ``weights`` (summing
    to 1); the smallest is the pick (as in Deb 2001 and pymoo's ``PseudoWeights``)."""
    return np.abs(pseudo_weights(nF) - np.asarray(weights, float)).sum(axis=1)


def tradeoff(nF):
    """Deb & Gupta (2011) trade-off of each normalised row (from memory): the least, over the
    other rows j, of ``sum max(0, nf_j - nf_i) / sum max(0, nf_i - nf_j)`` (what a move from
    i to j sacrifices per unit it gains). The largest value is the knee. Rows identical to
    another get that pair skipped."""
    nF = np.asarray(nF, float)
    n = len(nF)
    if n == 1:
        return np.array([np.inf])
    diff = nF[None, :, :] - nF[:, None, :]            # [i, j, k] = nf_j - nf_i
    sacrifice = np.maximum(diff, 0.0).sum(axis=2)
    gain = np.maximum(-diff, 0.0).sum(axis=2)
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.where(gain > 0, sacrifice / np.where(gain > 0, gain, 1.0), np.inf)
    np.fill_diagonal(ratio, np.inf)
    return ratio.min(axis=1)


def asf(nF, aspiration_normalised, weights=None, rho=ASF_AUGMENTATION):
    """Augmented achievement scalarising function (Wierzbicki 1980, from memory) of
    normalised rows against a normalised aspiration point; smaller is better. ``weights``
    (default equal) multiply each objective's shortfall: a larger weight matters more."""
    nF = np.asarray(nF, float)
    w = np.ones(nF.shape[1]) if weights is None else np.asarray(weights, float)
    d = w * (nF - np.asarray(aspiration_normalised, float))
    return d.max(axis=1) + rho * d.sum(axis=1)


# ----------------------------------------------------------------------------- options

def parse_weights(text, objective_columns):
    """``"0.5,0.3,0.2"`` -> weights summing to 1, one per objective in study order."""
    cols = list(objective_columns)
    expected = (f"expected {len(cols)} non-negative numbers, one per objective in order "
                f"{', '.join(cols)}, e.g. '" + ",".join(["1"] * len(cols)) + "'")
    try:
        w = np.array([float(p) for p in str(text).split(",")], float)
    except ValueError:
        raise DecideError(f"--weights: got {text!r}; {expected}") from None
    if len(w) != len(cols) or not np.all(np.isfinite(w)) or np.any(w < 0) or w.sum() <= 0:
        raise DecideError(f"--weights: got {text!r}; {expected}")
    return w / w.sum()


def parse_aspiration(text, objective_columns):
    """``"trip_fuel_kg=180,engine_power_kW=240"`` -> {column: value}; objectives left out take
    the front's best value."""
    cols = list(objective_columns)
    out = {}
    expected = (f"expected COLUMN=VALUE pairs separated by commas, columns among "
                f"{', '.join(cols)}")
    for part in str(text or "").split(","):
        if not part.strip():
            continue
        if "=" not in part:
            raise DecideError(f"--aspiration: got {part.strip()!r}; {expected}")
        key, val = (s.strip() for s in part.split("=", 1))
        if key not in cols:
            raise DecideError(f"--aspiration: unknown objective {key!r}; {expected}")
        try:
            out[key] = float(val)
        except ValueError:
            raise DecideError(f"--aspiration: {key}={val!r} is not a number; {expected}") \
                from None
        if not math.isfinite(out[key]):
            raise DecideError(f"--aspiration: {key}={val!r}; expected a finite number")
    if not out:
        raise DecideError(f"--aspiration: got {text!r}; {expected}")
    return out


# ----------------------------------------------------------------------------- choosing

@dataclass
class Choice:
    """A picked design and the ranking that picked it.

    ``ranking`` is the candidate front (limits applied) sorted best first with a ``score``
    column; ``design`` is its first row. ``score_meaning`` says what the score is.
    """

    method: str
    design: object
    ranking: object
    score_meaning: str
    limits: tuple = ()
    weights: tuple | None = None
    aspiration: dict | None = None
    ideal: list = field(default_factory=list)
    nadir: list = field(default_factory=list)
    n_front: int = 0

    def describe(self) -> str:
        if self.method == "weights":
            how = "pseudo-weights nearest the preference weights " + ", ".join(
                f"{w:.3g}" for w in self.weights) + " (Deb 2001)"
        elif self.method == "knee":
            how = "knee: highest trade-off point (Deb & Gupta 2011)"
        else:
            how = ("nearest the aspiration point " + ", ".join(
                f"{k}={v:g}" for k, v in self.aspiration.items())
                + " by the achievement scalarising function (Wierzbicki 1980)")
        lim = ("; hard limits " + ", ".join(str(x) for x in self.limits)) if self.limits else ""
        return (f"{how}{lim}; {len(self.ranking)} of {self.n_front} front designs were "
                "candidates")

    def settings(self) -> dict:
        return {"method": self.method, "weights": None if self.weights is None
                else [float(w) for w in self.weights],
                "aspiration": self.aspiration, "limits": [str(x) for x in self.limits],
                "ideal": self.ideal, "nadir": self.nadir, "score": self.score_meaning,
                "n_front": self.n_front, "n_candidates": len(self.ranking)}


def choose(study, front, method="knee", *, weights=None, aspiration=None, limits=()):
    """Pick one design of ``front`` (feasible, non-dominated) by ``method``.

    Parameters
    ----------
    study : Study
        Gives the objective columns (all minimised).
    front : DataFrame
        The run's front (front.csv).
    method : {"weights", "knee", "aspiration"}
    weights : sequence of float, optional
        Preference weights in objective order (``weights``: required; ``aspiration``:
        optional importance of each objective). Normalised to sum 1.
    aspiration : dict, optional
        ``{objective column: value}`` in the column's unit (``aspiration``: required).
    limits : sequence of Limit
        Hard limits applied before choosing.

    Returns
    -------
    Choice
    """
    if method not in METHODS:
        raise DecideError(f"--method: got {method!r}; expected one of {', '.join(METHODS)}")
    if front is None or len(front) == 0:
        raise DecideError("the run has no feasible design (no front.csv); nothing to pick "
                          "from (see least_violating.csv)")
    cols = list(study.objective_columns())
    F_all = front[cols].to_numpy(float)
    ideal, nadir = F_all.min(axis=0), F_all.max(axis=0)
    cand = apply_limits(front, limits)
    nF = normalise(cand[cols].to_numpy(float), ideal, nadir)
    w = None
    if weights is not None:
        w = np.asarray(weights, float)
        if len(w) != len(cols) or np.any(w < 0) or w.sum() <= 0:
            raise DecideError(f"--weights: expected {len(cols)} non-negative numbers in "
                              f"order {', '.join(cols)}")
        w = w / w.sum()
    if method == "weights":
        if w is None:
            raise DecideError("--method weights needs --weights, e.g. --weights "
                              + ",".join(["1"] * len(cols)) + f" (order: {', '.join(cols)})")
        score = weights_distance(nF, w)
        ascending, meaning = True, "L1 distance of pseudo-weights to the preference weights"
    elif method == "knee":
        score = tradeoff(nF)
        ascending, meaning = False, "least trade-off to any other design (higher = knee)"
    else:
        if not aspiration:
            raise DecideError("--method aspiration needs --aspiration, e.g. --aspiration '"
                              + ",".join(f"{c}=..." for c in cols) + "'")
        z = np.array([aspiration.get(c, ideal[k]) for k, c in enumerate(cols)], float)
        nz = normalise(z[None, :], ideal, nadir)[0]
        score = asf(nF, nz, w)
        ascending, meaning = True, "achievement scalarising function (lower = nearer)"
        aspiration = {c: float(aspiration.get(c, ideal[k])) for k, c in enumerate(cols)}
    ranking = cand.copy()
    ranking.insert(0, "score", score)
    ranking.insert(0, "front_row", cand.index.to_numpy())
    key = score if ascending else -score
    order = np.lexsort((cand[cols[0]].to_numpy(float), key))  # ties: the first objective
    ranking = ranking.iloc[order].reset_index(drop=True)
    return Choice(method=method, design=ranking.iloc[0], ranking=ranking,
                  score_meaning=meaning, limits=tuple(limits),
                  weights=None if w is None else tuple(float(x) for x in w),
                  aspiration=aspiration, ideal=ideal.tolist(), nadir=nadir.tolist(),
                  n_front=len(front))


def runners_up(study, choice: Choice, n=RUNNERS_UP):
    """The next ``n`` designs of the ranking with what each objective trades against the
    choice: ``change_<objective>`` = runner-up minus choice (negative = the runner-up is
    better in that objective) and a plain ``trade`` sentence."""
    import pandas as pd
    cols = list(study.objective_columns())
    top = choice.ranking.iloc[1:1 + n].copy()
    base = choice.design
    rows = []
    for rank, (_, r) in enumerate(top.iterrows(), start=2):
        row = {"rank": rank, "score": r["score"], "flap": r["flap"],
               "wing_loading_N_m2": r["wing_loading_N_m2"],
               study.loading_column: r[study.loading_column], "aspect_ratio": r["aspect_ratio"]}
        words = []
        for c in cols:
            d = float(r[c]) - float(base[c])
            row[c] = r[c]
            row[f"change_{c}"] = d
            name, unit = short_and_unit(c)
            if abs(d) > 1e-9 * max(abs(float(base[c])), 1.0):
                words.append(f"{name} {d:+.4g}{(' ' + unit) if unit else ''}")
        row["takeoff_mass_kg"] = r["takeoff_mass_kg"]
        row["limiting_constraint"] = r["limiting_constraint"]
        row["trade"] = ("; ".join(words) + " against the choice") if words else \
            "same objectives as the choice"
        rows.append(row)
    return pd.DataFrame(rows)


# ----------------------------------------------------------------------------- flap comparison

def _read_archive(path, columns, chunk=200_000):
    import pandas as pd
    parts = [p for p in pd.read_csv(path, usecols=list(columns), chunksize=chunk)]
    return pd.concat(parts, ignore_index=True) if parts else pd.DataFrame(columns=list(columns))


def per_option_fronts(study, archive):
    """{flap: DataFrame of its feasible non-dominated designs} from the archive rows."""
    from .search import nondominated_mask
    cols = list(study.objective_columns())
    out = {}
    for flap in study.flaps:
        sel = archive[(archive["flap"] == flap) & archive["feasible"].astype(bool)]
        out[flap] = sel[nondominated_mask(sel[cols].to_numpy(float))].reset_index(drop=True) \
            if len(sel) else sel.reset_index(drop=True)
    return out


def lower_envelope(x, y):
    """The 2-objective non-dominated points of (x, y) (both minimised), sorted by x; y falls
    as x grows. Between points the fronts are compared by linear interpolation."""
    from .search import nondominated_mask
    P = np.column_stack([np.asarray(x, float), np.asarray(y, float)])
    if len(P) == 0:
        return P
    P = P[nondominated_mask(P)]
    return P[np.argsort(P[:, 0], kind="stable")]


def best_within(env, xs):
    """The smallest y reachable with x no larger than each of ``xs`` along an envelope from
    :func:`lower_envelope` (linear between its points, flat beyond its last point, NaN below
    its first)."""
    xs = np.asarray(xs, float)
    y = np.interp(xs, env[:, 0], env[:, 1])
    return np.where(xs < env[0, 0] - 1e-12 * max(abs(env[0, 0]), 1.0), np.nan, y)


def mean_gap(env_a, env_b, n=101):
    """Mean of ``y_a(x) - y_b(x)`` with ``y(x)`` the smallest y reachable with at most x
    (:func:`best_within`), over x from where both are defined (the larger of the two smallest
    x) to the larger of the two largest x; and that range. NaN if an envelope is empty."""
    if len(env_a) == 0 or len(env_b) == 0:
        return math.nan, (math.nan, math.nan)
    lo = max(env_a[0, 0], env_b[0, 0])
    hi = max(env_a[-1, 0], env_b[-1, 0])
    xs = np.linspace(lo, hi, n) if hi > lo else np.array([lo])
    return float(np.mean(best_within(env_a, xs) - best_within(env_b, xs))), \
        (float(lo), float(hi))


def stall_reach(study, flap, n=9):
    """Best landing-stall margin a flap option reaches within the bounds: the margin at the
    lower wing-loading bound (stall speed grows with wing loading), the best over a grid of
    the other variables. Returns (margin [-], wing loading [N/m^2])."""
    import itertools
    from .evaluation import size_frame
    ws = study.variable("wing_loading_N_m2").lower
    lv, av = study.variable(study.loading_column), study.variable("aspect_ratio")
    grid = np.array(list(itertools.product(np.linspace(lv.lower, lv.upper, n),
                                           np.linspace(av.lower, av.upper, n))))
    idx = study.spec.high_lift_names.index(flap)
    f = size_frame(study, np.full(len(grid), ws), grid[:, 0], grid[:, 1],
                   np.full(len(grid), idx))
    return float(f["margin_stall_speed"].max()), float(ws)


def compare_flaps(study, archive, scales):
    """One row per allowed flap option, from a run's archive (every evaluated design).

    Columns: ``flap``; ``feasible_found``; ``evaluated``, ``feasible_designs``;
    ``front_designs`` (its own front); ``failing_constraint`` and ``best_margin_failing``
    (when nothing was feasible: the constraint whose best margin over the option's designs is
    lowest, and that margin, negative = short by that fraction of the limit);
    ``best_stall_margin_in_bounds`` (at the lowest wing loading) and ``note``;
    ``best_<objective>``; ``share_of_combined_front`` (fraction of the non-dominated set of
    all options' fronts that is this option's); ``hypervolume`` (of its own front, with the
    run's fixed reference); ``fuel_engine_hypervolume`` (of its trip fuel vs engine size
    front, normalised over all options); ``mean_maintenance_index``; ``reference_option`` (the
    option with the largest ``fuel_engine_hypervolume``, marked); ``simpler_than_reference`` (lower mean maintenance
    index); and the penalties against the reference along the trip fuel vs engine size
    fronts (each option's 2-objective non-dominated subset, linear between its points):
    ``extra_trip_fuel_at_equal_engine_kg`` is the mean, over engine sizes E in
    ``compared_engine_from/to_<unit>``, of (smallest trip fuel this option reaches with an
    engine no larger than E) minus (the same for the reference), ``_pct`` as a percentage of
    the reference's; ``extra_engine_at_equal_trip_fuel_<unit>`` likewise with the roles of
    trip fuel and engine size swapped. The range starts where both options have a design
    (the larger of their smallest values) and ends at the larger of their largest values.
    Positive = this option is worse than the reference.
    """
    import pandas as pd
    from .search import hypervolume, nondominated_mask
    from .sizing import active_constraints
    cols = list(study.objective_columns())
    eng, fuel = study.engine_size_column, "trip_fuel_kg"
    eng_unit = unit_of(eng)
    fronts = per_option_fronts(study, archive)
    pool = pd.concat([f.assign(_flap=k) for k, f in fronts.items() if len(f)], ignore_index=True) \
        if any(len(f) for f in fronts.values()) else None
    combined = pool[nondominated_mask(pool[cols].to_numpy(float))] if pool is not None else None
    rows = []
    for flap in study.flaps:
        mine = archive[archive["flap"] == flap]
        fr = fronts[flap]
        row = {"flap": flap, "feasible_found": bool(len(fr)), "evaluated": len(mine),
               "feasible_designs": int(mine["feasible"].astype(bool).sum()),
               "front_designs": len(fr)}
        margins = {c: float(mine[f"margin_{c}"].max()) if len(mine) else math.nan
                   for c in active_constraints(study.spec)}
        stall, ws_low = stall_reach(study, flap)
        row["best_stall_margin_in_bounds"] = stall
        notes = []
        if len(fr):
            row["failing_constraint"], row["best_margin_failing"] = "", math.nan
        else:
            worst = min(margins, key=margins.get)
            row["failing_constraint"], row["best_margin_failing"] = worst, margins[worst]
            notes.append(f"no feasible design: {worst} short by {-margins[worst]:.1%} at best")
        if stall < 0:
            notes.append(f"cannot meet the stall limit anywhere within the wing-loading bounds: "
                         f"best stall margin {stall:+.1%} at the lowest wing loading "
                         f"{ws_low:g} N/m2")
        row["note"] = "; ".join(notes)
        for c in cols:
            row[f"best_{c}"] = float(fr[c].min()) if len(fr) else math.nan
        row["share_of_combined_front"] = (float((combined["_flap"] == flap).mean())
                                          if combined is not None and len(combined) else 0.0)
        row["hypervolume"] = hypervolume(fr[cols].to_numpy(float), scales) if len(fr) else 0.0
        row["mean_maintenance_index"] = float(mine["maintenance_index"].mean()) \
            if len(mine) else math.nan
        rows.append(row)
    table = pd.DataFrame(rows)
    # the reference ("best") option is the one with the best trip fuel vs engine size trade:
    # the largest 2-objective hypervolume in that plane (normalised over all options' fronts,
    # reference point 1.1), so that the penalties answer "what does this flap cost in fuel or
    # engine" and the maintenance index, which the simpler options win, does not pick it
    table["fuel_engine_hypervolume"] = _fuel_engine_hv(fronts, study.flaps, fuel, eng)
    ref = table.loc[table["fuel_engine_hypervolume"].idxmax(), "flap"] \
        if table["fuel_engine_hypervolume"].max() > 0 else None
    table["reference_option"] = table["flap"] == ref
    table["simpler_than_reference"] = False
    ext = {k: [] for k in ("extra_trip_fuel_at_equal_engine_kg",
                           "extra_trip_fuel_at_equal_engine_pct",
                           f"compared_engine_from_{eng_unit}", f"compared_engine_to_{eng_unit}",
                           f"extra_engine_at_equal_trip_fuel_{eng_unit}",
                           "extra_engine_at_equal_trip_fuel_pct",
                           "compared_trip_fuel_from_kg", "compared_trip_fuel_to_kg")}
    env_ref = lower_envelope(fronts[ref][eng], fronts[ref][fuel]) if ref else np.zeros((0, 2))
    ref_mi = float(table.loc[table["flap"] == ref, "mean_maintenance_index"].iloc[0]) \
        if ref else math.nan
    for k, flap in enumerate(study.flaps):
        fr = fronts[flap]
        env = lower_envelope(fr[eng], fr[fuel]) if len(fr) else np.zeros((0, 2))
        if ref is None or flap == ref or len(env) == 0:
            gap_f, rng_e, gap_e, rng_f = (0.0 if flap == ref else math.nan), (math.nan,) * 2, \
                (0.0 if flap == ref else math.nan), (math.nan,) * 2
            if flap == ref:
                rng_e = (float(env_ref[0, 0]), float(env_ref[-1, 0]))
                rng_f = (float(env_ref[:, 1].min()), float(env_ref[:, 1].max()))
            ref_fuel_mean = ref_eng_mean = math.nan
        else:
            gap_f, rng_e = mean_gap(env, env_ref)
            # equal trip fuel: swap axes (engine size as a function of trip fuel)
            gap_e, rng_f = mean_gap(env[::-1, ::-1], env_ref[::-1, ::-1])
            ref_fuel_mean = _mean_on(env_ref, rng_e)
            ref_eng_mean = _mean_on(env_ref[::-1, ::-1], rng_f)
        ext["extra_trip_fuel_at_equal_engine_kg"].append(gap_f)
        ext["extra_trip_fuel_at_equal_engine_pct"].append(
            0.0 if flap == ref else 100.0 * gap_f / ref_fuel_mean if ref_fuel_mean else math.nan)
        ext[f"compared_engine_from_{eng_unit}"].append(rng_e[0])
        ext[f"compared_engine_to_{eng_unit}"].append(rng_e[1])
        ext[f"extra_engine_at_equal_trip_fuel_{eng_unit}"].append(gap_e)
        ext["extra_engine_at_equal_trip_fuel_pct"].append(
            0.0 if flap == ref else 100.0 * gap_e / ref_eng_mean if ref_eng_mean else math.nan)
        ext["compared_trip_fuel_from_kg"].append(rng_f[0])
        ext["compared_trip_fuel_to_kg"].append(rng_f[1])
        if ref is not None and flap != ref:
            table.loc[k, "simpler_than_reference"] = bool(
                table.loc[k, "mean_maintenance_index"] < ref_mi)
    for key, vals in ext.items():
        table[key] = vals
    return table, fronts


def _fuel_engine_hv(fronts, flaps, fuel, eng):
    """Hypervolume of each option's front in the trip fuel vs engine size plane [-]."""
    from .search import nondominated_mask
    from pymoo.indicators.hv import HV
    pts = [f[[fuel, eng]].to_numpy(float) for f in fronts.values() if len(f)]
    if not pts:
        return [0.0] * len(flaps)
    allp = np.vstack(pts)
    lo, hi = allp.min(axis=0), allp.max(axis=0)
    span = np.where(hi > lo, hi - lo, 1.0)
    out = []
    for flap in flaps:
        f = fronts[flap]
        if not len(f):
            out.append(0.0)
            continue
        P = (f[[fuel, eng]].to_numpy(float) - lo) / span
        P = P[nondominated_mask(P)]
        out.append(float(HV(ref_point=np.array([1.1, 1.1]))(P)))
    return out


def _mean_on(env, rng, n=101):
    lo, hi = rng
    if not (lo <= hi):
        return math.nan
    xs = np.linspace(lo, hi, n) if hi > lo else np.array([lo])
    return float(np.mean(best_within(env, xs)))


def flaps_from_run(run: Run):
    """The flap comparison of a finished run: (table, per-option fronts)."""
    from .evaluation import size_frame
    from .search import design_arrays, free_variables
    from .sizing import active_constraints
    study = run.study
    if not run.evaluations_path.is_file():
        raise DecideError(f"{run.run_dir}: no evaluations.csv in it; expected a run folder "
                          "written by 'optimiser run'")
    x0 = np.array([[v.lower for v in free_variables(study)]])
    cols = list(size_frame(study, *design_arrays(study, x0), [0]).columns)
    need = [c for c in cols if c not in ("limiting_constraint", "most_violated")]
    need = [c for c in need if c in ("flap", "feasible", "wing_loading_N_m2", study.loading_column,
                                     "aspect_ratio", "maintenance_index", "takeoff_mass_kg",
                                     *study.objective_columns())
            or c in {f"margin_{k}" for k in active_constraints(study.spec)}]
    archive = _read_archive(run.evaluations_path, need)
    scales = run.info["hypervolume"]
    return compare_flaps(study, archive, scales)
