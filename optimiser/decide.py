"""Decision support: pick one compromise from a front.

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

The flap comparison is in :mod:`optimiser.flaps`.

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

import math
import re
from dataclasses import dataclass, field
import numpy as np

from .columns import short_and_unit
from .errors import DecideError
from .runfolder.reader import Run  # noqa: F401  (the run a choice is made from)

METHODS = ("weights", "knee", "aspiration")
ASF_AUGMENTATION = 1e-6
"""rho of the augmented ASF: small, so it only breaks ties between weakly optimal designs
(common practice; Wierzbicki's augmentation term)."""
RUNNERS_UP = 5


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
                                                "outside_bounds", "aerodrome_code_letter")]
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
        raise DecideError("the run found no feasible design; nothing to pick from; expected "
                          "a run with a front (the designs closest to feasible are in "
                          "least_violating.csv)")
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


