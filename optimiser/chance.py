"""Chance-constrained search: a design is kept only if each constraint is met with at least a
required probability under the study's ``[uncertainty]``.

Setting: ``[search] reliability = 0.95`` (or ``optimiser run --reliability 0.95``) and
``[search] reliability_samples`` (default :data:`~optimiser.uncertainty.RELIABILITY_SAMPLES`).

How a generation is judged
--------------------------
1. Every design is sized at the nominal assumptions (the search's own evaluation).
2. It is frozen as sized (wing, engines, flap, empty mass; :mod:`optimiser.sizing.frozen`)
   and analysed at its maximum takeoff mass with the design payload for each of the run's
   ``N`` samples of the uncertain factors, plus once at the nominal factors: ``P x (N + 1)``
   rows in vectorised calls of :func:`~optimiser.sizing.frozen.analyse_designs` (chunks of
   about :data:`ROWS_PER_CALL` rows, whole designs per chunk; spread over Dask workers by an
   :class:`optimiser.cluster.RowMap` when the run has one, each worker returning per-design
   numbers only).
3. Common random numbers: the ``N`` samples are drawn once per run from the run's seed
   (:func:`draw_samples`) and used for every design of every generation, so the search sees
   a deterministic, smooth problem, resumes exactly and two designs are compared on the same
   samples.
4. For each constraint ``c`` of the sizing that the frozen analysis also checks, with
   ``s = margin - required margin`` per sample (met where ``s >= 0``), the estimated
   probability is ``p = #(s >= 0) / N``. The search's constraint value is the nominal one
   lowered by how far the order statistic ``s_(k)``, ``k = N - ceil(R N)`` (0-based, sorted
   ascending), sits below the nominal frozen row::

       G_c = max(G_nominal_c, G_nominal_c + (s_nominal_c - s_(k)))

   ``s_(k) >= 0`` holds exactly when ``p >= R`` (at least ``ceil(R N)`` samples meet it), and
   ``s_(k)`` moves continuously with the design, unlike ``p``: the search gets a graded
   violation. The ``max`` keeps the nominal requirement too. With every uncertainty width
   zero, each sample equals the nominal row bit for bit, the shift is 0 and the run is the
   deterministic one (tested).
5. The mass closure stays the nominal one (a design that does not close is not analysed:
   its probabilities are 0). The frozen analysis' own ``mission_fuel`` check (does the fuel
   the nominal sizing carries cover the sampled mission with its reserves?) is reported as
   ``probability_mission_fuel`` but not constrained: the fuel load is the sizing's nominal
   choice, and fuel uncertainty is what the reserve rules are for.

Outputs: ``evaluations.csv`` carries ``probability_<constraint>`` and
``meets_reliability``; ``front.csv`` also the Wilson 95 % interval of each probability
(``_low``, ``_high``); run.json and the console summary state the reliability, the sample
count and the interval's half-width at ``p = R`` (how precise the probabilities are).
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass

import numpy as np

from .uncertainty import (RELIABILITY_SAMPLES, nominal_draws, overrides_from_factors,
                          sample_factors, wilson_interval)

ROWS_PER_CALL = 200_000
"""Rows (design x sample) of one vectorised analysis call (ours: bounds the memory of a
call to a few hundred MB whatever the sample count)."""
SAMPLE_STREAM = 0xC4A7
"""Second word of the seed sequence of the run's samples, so they never share a stream with
the search's own generators (:func:`optimiser.search.option_seed`)."""
REPORTED_ONLY = ("mission_fuel",)
"""Constraints of the frozen analysis whose probability is reported, not constrained."""


@dataclass(frozen=True)
class ChanceSetting:
    """The chance constraints of a run: reliability ``R`` (0 < R < 1), samples ``N`` per
    design and the run seed they are drawn from."""

    reliability: float
    samples: int
    seed: int

    def record(self) -> dict:
        """The setting as the checkpoint and run.json store it."""
        return {"reliability": self.reliability, "samples": self.samples,
                "interval_half_width": self.half_width()}

    def half_width(self) -> float:
        """Half-width of the Wilson 95 % interval at ``p = R`` for ``N`` samples [-]: how
        precise each estimated probability is near the threshold."""
        low, high = wilson_interval(self.reliability, self.samples)
        return float(0.5 * (high - low))

    def summary_text(self) -> str:
        """One line for the console: the chance constraints and how precise they are."""
        return _summary_text(self)

    @property
    def order_index(self) -> int:
        """``k = N - ceil(R N)``: ``s_(k) >= 0`` (ascending, 0-based) iff ``p >= R``."""
        return self.samples - int(math.ceil(self.reliability * self.samples - 1e-9))


def chance_setting(study, seed, reliability=None):
    """The run's :class:`ChanceSetting` (``reliability`` from ``--reliability`` or the
    study's ``[search] reliability``), or None for a deterministic run."""
    from .errors import RunError
    from .uncertainty import check_reliability
    if reliability is None:
        reliability = study.search.get("reliability")
    if reliability is None:
        return None

    def fail(message):
        raise RunError(f"--reliability: {message}")
    value = check_reliability(reliability, fail)
    if not (study.uncertainty or {}).get("assumptions"):
        raise RunError(f"--reliability: got {value:g} but {study.path} has no uncertain "
                       "assumption; expected an [uncertainty] table (e.g. cd0_clean = { "
                       "distribution = \"normal\", std = 0.05 }) or no reliability")
    samples = int(study.search.get("reliability_samples", RELIABILITY_SAMPLES))
    return ChanceSetting(value, samples, int(seed))


def draw_samples(study, setting: ChanceSetting) -> tuple[dict, dict]:
    """The run's common samples and the nominal row: per-sample spec overrides (``N``
    values per key) and the same keys at factor 1 (the study's own values, as
    :func:`~optimiser.uncertainty.overrides_from_factors` maps them)."""
    rng = np.random.default_rng(np.random.SeedSequence([setting.seed, SAMPLE_STREAM]))
    assumptions = study.uncertainty["assumptions"]
    factors = sample_factors(assumptions, setting.samples, rng)
    nominal = {k: float(v[0]) for k, v in overrides_from_factors(
        study.spec, nominal_draws(factors))[0].items()}
    return overrides_from_factors(study.spec, factors)[0], nominal


def constrained(spec) -> tuple[str, ...]:
    """The sizing's active constraints that the chance constraints replace (all but the
    mass closure, which the frozen analysis does not check)."""
    from .sizing import active_constraints
    return tuple(c for c in active_constraints(spec) if c != "mass_closure")


def probability_columns(spec) -> list[str]:
    """Columns a chance-constrained run adds to ``evaluations.csv``."""
    return [*(f"probability_{c}" for c in (*constrained(spec), *REPORTED_ONLY)),
            "meets_reliability"]


def design_statistics(spec, frozen, masses, samples: dict, nominal: dict, required: dict,
                      order_index: int):
    """Per-design sample statistics of frozen airplanes (a pure function: one Dask task).

    For each design, the nominal row (``nominal``: each override key at factor 1) and one
    row per sample (``samples``: the per-sample overrides, ``N`` values per key) are
    analysed in one call. Returns per
    design: ``s_nominal_<c>``, ``s_order_<c>`` (the order statistic ``s_(k)``) and
    ``met_<c>`` (the count of samples meeting ``c``), ``s = margin - required[c]``."""
    from .sizing.frozen import analyse_designs
    n_designs = frozen.size
    n = len(next(iter(samples.values())))
    rows = n + 1
    rep, rep_masses = _repeated(frozen, rows), _repeated(masses, rows)
    overrides = {k: np.tile(np.concatenate([[nominal[k]], np.asarray(v, float)]), n_designs)
                 for k, v in samples.items()}
    out = analyse_designs(spec, rep, rep_masses, overrides)
    stats = {}
    for c, req in required.items():
        s = (np.asarray(out[f"margin_{c}"], float) - req).reshape(n_designs, rows)
        s = np.where(np.isfinite(s), s, -1e6)
        stats[f"s_nominal_{c}"] = s[:, 0].copy()
        sampled = s[:, 1:]
        stats[f"met_{c}"] = np.count_nonzero(sampled >= 0.0, axis=1)
        stats[f"s_order_{c}"] = np.partition(sampled, order_index, axis=1)[:, order_index] \
            if order_index < n else np.full(n_designs, np.inf)
    return stats


@dataclass(frozen=True)
class ChanceResult:
    """A generation judged under the chance constraints."""

    G: np.ndarray          # constraint values for the search (<= 0 met)
    meets: np.ndarray      # bool per design: nominally feasible and every p >= R
    columns: dict          # probability_<c> and meets_reliability per design
    met_counts: dict       # constraint -> samples meeting it, per design


class ChanceEvaluator:
    """Judges generations of a chance-constrained run (keeps the run's samples)."""

    def __init__(self, study, setting: ChanceSetting, evaluate=None):
        self.study = study
        self.setting = setting
        self.samples, self.nominal = draw_samples(study, setting)
        self.evaluate = evaluate
        spec = study.spec
        from .sizing import required_margins
        names = (*constrained(spec), *REPORTED_ONLY)
        req = dict(zip(constrained(spec), required_margins(spec, constrained(spec))))
        req.update({c: 0.0 for c in REPORTED_ONLY})
        self.required = {c: float(req[c]) for c in names}

    def __call__(self, sized: dict, flap, G_nominal: np.ndarray) -> ChanceResult:
        from .sizing import active_constraints
        from .sizing.frozen import frozen_from_sized, operating_masses
        spec, setting = self.study.spec, self.setting
        n = len(flap)
        closes = np.asarray(sized["margin_mass_closure"], float) >= 0.0
        stats = {f"{kind}_{c}": np.zeros(n) for c in self.required
                 for kind in ("s_nominal", "s_order")}
        stats.update({f"met_{c}": np.zeros(n, dtype=np.int64) for c in self.required})
        idx = np.flatnonzero(closes)
        if idx.size:
            part = {k: np.asarray(v)[idx] for k, v in sized.items()
                    if np.ndim(v) == 1 and len(v) == n}
            frozen = frozen_from_sized(part, np.asarray(flap)[idx], spec.uses_power_loading)
            masses = operating_masses(spec, frozen)
            got = self._statistics(frozen, masses)
            for k, v in got.items():
                stats[k][idx] = v
        G = np.array(G_nominal, dtype=float, copy=True)
        names = active_constraints(spec)
        for c in constrained(spec):
            j = names.index(c)
            shift = np.where(closes, stats[f"s_nominal_{c}"] - stats[f"s_order_{c}"], 0.0)
            G[:, j] = np.maximum(G[:, j], G[:, j] + shift)
        G = np.where(np.isfinite(G), G, 1e6)
        meets = np.all(G <= 0.0, axis=1) & closes & np.asarray(sized["feasible"], bool)
        counts = {c: stats[f"met_{c}"] for c in self.required}
        columns = {f"probability_{c}": counts[c] / setting.samples for c in self.required}
        columns["meets_reliability"] = meets
        return ChanceResult(G, meets, columns, counts)

    def _statistics(self, frozen, masses) -> dict:
        """:func:`design_statistics` over chunks of whole designs (here or on Dask)."""
        per_call = max(1, ROWS_PER_CALL // (self.setting.samples + 1))
        k = self.setting.order_index
        parts = []
        for a in range(0, frozen.size, per_call):
            b = min(a + per_call, frozen.size)
            f = _rows_of(frozen, a, b)
            m = _rows_of(masses, a, b)
            if self.evaluate is not None:
                parts.append(self.evaluate(design_statistics, self.study.spec, f, m,
                                           shared={"samples": self.samples,
                                                   "nominal": self.nominal,
                                                   "required": self.required,
                                                   "order_index": k}))
            else:
                parts.append(design_statistics(self.study.spec, f, m, self.samples,
                                               self.nominal, self.required, k))
        return {key: np.concatenate([p[key] for p in parts]) for key in parts[0]}


def _rows_of(obj, a, b):
    """Designs ``a:b`` of a dataclass of per-design arrays."""
    return dataclasses.replace(obj, **{f.name: getattr(obj, f.name)[a:b]
                                       for f in dataclasses.fields(obj)
                                       if getattr(obj, f.name) is not None})


def _repeated(obj, times: int):
    """Each design of a dataclass of per-design arrays repeated ``times`` times in a row."""
    return dataclasses.replace(obj, **{f.name: np.repeat(getattr(obj, f.name), times)
                                       for f in dataclasses.fields(obj)
                                       if getattr(obj, f.name) is not None})


def interval_columns(result: ChanceResult, setting: ChanceSetting) -> dict:
    """``probability_<c>``, ``_low`` and ``_high`` (Wilson 95 %) per design, and
    ``meets_reliability``: the columns a chance-constrained front carries."""
    out = {}
    for c, count in result.met_counts.items():
        p = count / setting.samples
        low, high = wilson_interval(p, setting.samples)
        out[f"probability_{c}"] = p
        out[f"probability_{c}_low"] = low
        out[f"probability_{c}_high"] = high
    out["meets_reliability"] = result.meets
    return out


def front_columns(study, setting: ChanceSetting, front) -> dict:
    """:func:`interval_columns` of the designs of a front table (evaluate's columns), on the
    run's own samples (the numbers the search judged them by)."""
    from .search import objectives_and_constraints
    flap = np.array([study.spec.high_lift_names.index(f) for f in front["flap"]], dtype=int)
    sized = {c: front[c].to_numpy() for c in front.columns}
    _, G = objectives_and_constraints(study, front)
    result = ChanceEvaluator(study, setting)(sized, flap, G)
    return interval_columns(result, setting)


def _summary_text(setting: ChanceSetting) -> str:
    """One line for the console: what the chance constraints were and how precise."""
    return (f"  chance constraints: each constraint met with probability >= "
            f"{setting.reliability:g}, estimated from {setting.samples} common samples per "
            f"design (Wilson 95 % interval about +-{setting.half_width():.3f} at p = "
            f"{setting.reliability:g})")
