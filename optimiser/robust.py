"""Robustness of one design: a vectorised Monte Carlo over uncertain assumptions.

A study may hold an ``[uncertainty]`` table. Each entry names an assumption and a distribution
of a *factor* that multiplies the study's own value of it (so ``1.0`` is the study's value)::

    [uncertainty]
    samples = 10000                       # default number of samples (optional)
    seed = 1                              # default random seed (optional)
    cd0_clean = { distribution = "normal", std = 0.08 }                  # mean 1 by default
    oswald_factor = { distribution = "uniform", low = 0.95, high = 1.03 }
    propeller_efficiency = { distribution = "triangular", low = 0.96, mode = 1.0, high = 1.02 }
    sfc = { distribution = "normal", mean = 1.02, std = 0.04 }
    empty_mass_factor = { distribution = "normal", std = 0.03 }

The assumptions (:data:`UNCERTAIN_ASSUMPTIONS`): ``cd0_clean`` (clean zero-lift drag),
``oswald_factor`` (the Oswald factor of the study's method, cruise and low speed),
``propeller_efficiency`` (cruise and climb efficiency together, one draw per sample; propeller
studies), ``sfc`` (cruise power-specific or thrust-specific fuel consumption, whichever the
study uses) and ``empty_mass_factor``. Draws are independent. Efficiencies are capped at 0.95
(the spec's upper limit; the cap and the share of capped draws are reported).

The design keeps its wing loading, power loading (or thrust-to-weight), aspect ratio and flap;
every sample is sized completely, so takeoff mass, wing area and engine size follow the
perturbed assumptions. All samples go through ONE call of
:func:`optimiser.sizing.size_designs` with per-design ``overrides`` (no loop over samples).

The probability that a constraint is met is the share of samples with a margin >= 0, with its
binomial standard error sqrt(p (1 - p) / N) and the Wilson score interval at 95 %
(E. B. Wilson, "Probable inference, the law of succession, and statistical inference",
J. Am. Stat. Assoc. 22, 1927).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .columns import CONSTRAINT_LABELS, unit_of
from .uncertainty import (DEFAULT_SAMPLES, DISTRIBUTIONS, EFFICIENCY_CAP,  # noqa: F401
                          FACTOR_FLOOR, FACTOR_RANGE, MAX_SAMPLES, MAX_STD,
                          UNCERTAIN_ASSUMPTIONS, Z95, overrides_from_factors, read_uncertainty,
                          sample_factors, wilson_interval)

@dataclass(frozen=True)
class RobustResult:
    """Outcome of :func:`monte_carlo`.

    ``design``: the design (one-row frame, every evaluate column at the study's values);
    ``constraints``: per constraint (and ``all``) the nominal margin, probability met,
    standard error, Wilson 95 % interval and margin percentiles; ``trip_fuel``: one-row frame
    of nominal, mean, std and 5/50/95 percentiles [kg]; ``samples``: per sample the factors,
    trip fuel, takeoff mass, engine size, margins and ``feasible``; ``capped``: share of
    capped efficiency draws.
    """

    design: object
    constraints: object
    trip_fuel: object
    samples: object
    n_samples: int
    seed: int
    assumptions: dict
    capped: dict


def monte_carlo(study, design, samples=None, seed=None, uncertainty=None) -> RobustResult:
    """Monte Carlo of one design over the study's uncertain assumptions.

    Parameters
    ----------
    study : Study
    design : DataFrame or dict
        One design: ``wing_loading_N_m2``, the loading column, ``aspect_ratio``, ``flap``.
    samples, seed : int, optional
        Default: the study's ``[uncertainty]`` values (10000 samples; seed 1).
    uncertainty : dict, optional
        ``{"assumptions": {...}}`` as returned by :func:`read_uncertainty`; default the
        study's. A study with no uncertain assumption is refused (ValueError).
    """
    import pandas as pd
    from .evaluation import evaluate
    from .sizing import active_constraints, size_designs
    unc = uncertainty if uncertainty is not None else (study.uncertainty or {})
    assumptions = unc.get("assumptions", {})
    if not assumptions:
        raise ValueError(f"{study.path}: no uncertain assumptions; expected an [uncertainty] "
                         "table with at least one of: " + ", ".join(UNCERTAIN_ASSUMPTIONS))
    n = int(samples if samples is not None else unc.get("samples", DEFAULT_SAMPLES))
    seed = int(seed if seed is not None else (unc.get("seed") if unc.get("seed") is not None
                                              else 1))
    table = pd.DataFrame(design)
    if len(table) != 1:
        raise ValueError(f"design: got {len(table)} rows; expected exactly one design")
    nominal = evaluate(study, table)
    spec = study.spec
    flap_index = spec.high_lift_names.index(nominal["flap"].iloc[0])
    rng = np.random.default_rng(seed)
    factors = sample_factors(assumptions, n, rng)
    overrides, capped = overrides_from_factors(spec, factors)
    row = nominal.iloc[0]
    out = size_designs(spec, np.full(n, row["wing_loading_N_m2"]),
                       np.full(n, row[study.loading_column]), np.full(n, row["aspect_ratio"]),
                       np.full(n, flap_index), overrides=overrides)
    names = active_constraints(spec)
    size_col = study.engine_size_column
    frame = pd.DataFrame({f"factor_{k}": v for k, v in factors.items()})
    for col in ("trip_fuel_kg", "takeoff_mass_kg", size_col):
        frame[col] = out[col]
    for c in names:
        frame[f"margin_{c}"] = out[f"margin_{c}"]
    frame["feasible"] = out["feasible"]
    frame["limiting_constraint"] = np.asarray(names, dtype=object)[out["limiting_index"]]

    rows = []
    required = dict(study.spec.requirements.margins)
    for c in (*names, "all"):
        met = frame["feasible"].to_numpy(bool) if c == "all" else \
            frame[f"margin_{c}"].to_numpy(float) >= required.get(c, 0.0)
        p = float(met.mean())
        lo, hi = wilson_interval(p, n)
        m = None if c == "all" else frame[f"margin_{c}"].to_numpy(float)
        rows.append({
            "constraint": c,
            "description": "every constraint at once" if c == "all" else CONSTRAINT_LABELS[c],
            "nominal_margin": float("nan") if c == "all" else float(row[f"margin_{c}"]),
            "nominal_met": bool(row["feasible"]) if c == "all" else bool(
                row[f"margin_{c}"] >= required.get(c, 0.0)),
            "probability_met": p,
            "standard_error": math.sqrt(p * (1.0 - p) / n),
            "probability_low_95": float(lo), "probability_high_95": float(hi),
            "margin_p5": float("nan") if m is None else float(np.percentile(m, 5)),
            "margin_p50": float("nan") if m is None else float(np.percentile(m, 50)),
            "margin_p95": float("nan") if m is None else float(np.percentile(m, 95)),
            "limiting_share": float(np.mean(frame["limiting_constraint"].to_numpy(object) == c))
            if c != "all" else float("nan"),
        })
    trip = frame["trip_fuel_kg"].to_numpy(float)
    p5, p50, p95 = np.percentile(trip, [5, 50, 95])
    trip_stats = pd.DataFrame([{
        "nominal_kg": float(row["trip_fuel_kg"]), "mean_kg": float(trip.mean()),
        "std_kg": float(trip.std(ddof=1)) if n > 1 else 0.0,
        "p5_kg": float(p5), "p50_kg": float(p50), "p95_kg": float(p95),
        "samples": n, "seed": seed}])
    return RobustResult(design=nominal, constraints=pd.DataFrame(rows), trip_fuel=trip_stats,
                        samples=frame, n_samples=n, seed=seed, assumptions=dict(assumptions),
                        capped=capped)


def design_label(study, design_row) -> str:
    """A one-line description of a design (inputs only)."""
    load = study.loading_column
    unit = unit_of(load)
    return (f"W/S {design_row['wing_loading_N_m2']:.0f} N/m², "
            f"{'W/P' if unit else 'T/W'} {design_row[load]:.4g}{' ' + unit if unit else ''}, "
            f"AR {design_row['aspect_ratio']:.3g}, flap {design_row['flap']}")


def summary_text(study, result: RobustResult) -> str:
    """The printed report, ending with the caution text."""
    from .evaluation import CAUTION
    d = result.design.iloc[0]
    lines = [f"study {study.name}: robustness of {design_label(study, d)}",
             f"  {result.n_samples} samples, seed {result.seed}; uncertain: "
             + ", ".join(f"{k} ({_dist_text(v)})" for k, v in result.assumptions.items())]
    for k, share in result.capped.items():
        if share > 0:
            lines.append(f"  note: {share:.1%} of the {k} draws were capped at "
                         f"{EFFICIENCY_CAP}")
    lines.append(f"  {'constraint':<22}{'nominal':>10}{'P(met)':>9}{'std err':>9}"
                 f"{'95 % interval':>17}")
    for _, r in result.constraints.iterrows():
        nom = "" if r["constraint"] == "all" else f"{r['nominal_margin']:+.1%}"
        lines.append(f"  {r['constraint']:<22}{nom:>10}{r['probability_met']:>9.3f}"
                     f"{r['standard_error']:>9.3f}   {r['probability_low_95']:.3f}-"
                     f"{r['probability_high_95']:.3f}")
    t = result.trip_fuel.iloc[0]
    lines.append(f"  trip fuel [kg]: nominal {t['nominal_kg']:.1f}, mean {t['mean_kg']:.1f}, "
                 f"std {t['std_kg']:.1f}, 5/50/95 % {t['p5_kg']:.1f} / {t['p50_kg']:.1f} / "
                 f"{t['p95_kg']:.1f}")
    lines.append(CAUTION)
    return "\n".join(lines)


def _dist_text(a):
    if a["distribution"] == "normal":
        return f"normal, mean {a['mean']:g}, std {a['std']:g}"
    if a["distribution"] == "uniform":
        return f"uniform {a['low']:g} to {a['high']:g}"
    return f"triangular {a['low']:g} / {a['mode']:g} / {a['high']:g}"
