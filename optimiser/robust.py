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

The same table may sample operating conditions (:data:`UNCERTAIN_CONDITIONS`), each drawn
once per sample and independent of the rest::

    temperature_offset = { distribution = "normal", std = "5 K" }        # added to both airfields
    headwind = { distribution = "uniform", low = "-10 kn", high = "20 kn" }  # along both runways
    runway_friction = { distribution = "uniform", low = 0.8, high = 1.25 }   # factor on friction

The temperature change is added to the ISA offsets of the departure and the destination (the
day's weather); the wind component acts along both runways (negative: tailwind) and the field
lengths count 50 % of a headwind and 150 % of a tailwind (14 CFR 25.105(d)(1), 25.125(f);
from memory); the friction factor multiplies the departure's rolling and the destination's
braking friction. Values are held inside the model's ranges
(:data:`optimiser.sizing.inputs.OVERRIDE_RANGES`). In the frozen mode they are the usual
questions about an airplane as built: a hotter day, a tailwind, a wet runway. Their draws are
the ``temperature_offset_change_K``, ``headwind_m_s`` and ``factor_runway_friction`` columns
of ``samples.csv``.

In the ``resize`` mode (:func:`monte_carlo`) the design keeps its wing loading, power loading
(or thrust-to-weight), aspect ratio and flap; every sample is sized completely, so takeoff mass, wing area and engine size follow the
perturbed assumptions. All samples go through ONE call of
:func:`optimiser.sizing.size_designs` with per-design ``overrides`` (no loop over samples).

The ``frozen`` mode (the default of ``optimiser robust``,
:func:`frozen_monte_carlo`) asks instead what the uncertainty does to the airplane once it is
built: the design is sized once at the study's values and frozen
(:func:`optimiser.sizing.frozen.frozen_from_sized`): wing area, aspect ratio, installed rating,
flap and empty mass as sized. The samples are applied to that airplane repeated ``n`` times in
ONE call of :func:`optimiser.sizing.frozen.analyse_designs`: drag, Oswald factor, propeller
efficiency and fuel consumption change its performance and the fuel its mission needs; the
empty-mass factor makes the structure as built heavier or lighter. Every sample flies at the
design's maximum takeoff mass (the sized takeoff mass) with the study's payload, so extra empty
mass comes out of the fuel on board, and the ``mission_fuel`` margin says whether the mission
still closes. Stall and landing depend on mass and CLmax only, so in this mode they do not
vary (unless the conditions are sampled: the landing then follows the destination's
temperature, wind and friction); the frozen constraints (:func:`optimiser.sizing.frozen.analysis_constraints`) replace
``mass_closure`` with ``mission_fuel`` and ``max_takeoff_mass``. A design sized at the study's
values carries exactly its mission fuel (``mission_fuel`` nominal margin 0), so with
assumptions spread both ways that margin is met in about half the samples: the frozen mode
tells how much fuel or payload margin the airplane needs, not only whether it is feasible.

The probability that a constraint is met is the share of samples with a margin >= 0, with its
binomial standard error sqrt(p (1 - p) / N) and the Wilson score interval at 95 %
(E. B. Wilson, "Probable inference, the law of succession, and statistical inference",
J. Am. Stat. Assoc. 22, 1927).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .columns import CONSTRAINT_LABELS
from .uncertainty import (DEFAULT_SAMPLES, DISTRIBUTIONS, EFFICIENCY_CAP,  # noqa: F401
                          FACTOR_FLOOR, FACTOR_RANGE, MAX_SAMPLES, MAX_STD,
                          UNCERTAIN_ASSUMPTIONS, UNCERTAIN_CONDITIONS, Z95, draw_column,
                          overrides_from_factors, read_uncertainty, sample_factors,
                          wilson_interval)

MODES = ("frozen", "resize")
"""The ways of ``optimiser robust``: the airplane sized once and frozen (default), or
re-sized for every sample."""


@dataclass(frozen=True)
class RobustResult:
    """Outcome of :func:`monte_carlo`.

    ``design``: the design (one-row frame, every evaluate column at the study's values);
    ``constraints``: per constraint (and ``all``) the nominal margin, probability met,
    standard error, Wilson 95 % interval and margin percentiles; ``trip_fuel``: one-row frame
    of nominal, mean, std and 5/50/95 percentiles [kg]; ``samples``: per sample the factors,
    trip fuel, takeoff mass, engine size, margins and ``feasible``; ``capped``: share of
    capped efficiency draws; ``mode``: ``"resize"`` or ``"frozen"``; ``fuel_on_board``
    (frozen mode only, else ``None``): one-row frame like ``trip_fuel`` of the fuel on board.
    """

    design: object
    constraints: object
    trip_fuel: object
    samples: object
    n_samples: int
    seed: int
    assumptions: dict
    capped: dict
    mode: str = "resize"
    fuel_on_board: object = None


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
    from .evaluation import row_overrides
    from .sizing import active_constraints, size_designs
    nominal, assumptions, n, seed, factors = _draw(study, design, samples, seed, uncertainty)
    spec = study.spec
    flap_index = spec.high_lift_names.index(nominal["flap"].iloc[0])
    overrides, capped = overrides_from_factors(spec, factors)
    row = nominal.iloc[0]
    out = size_designs(spec, np.full(n, row["wing_loading_N_m2"]),
                       np.full(n, row[study.loading_column]), np.full(n, row["aspect_ratio"]),
                       np.full(n, flap_index), overrides={
                           **row_overrides(study, row, n),
                           **overrides})
    names = active_constraints(spec)
    size_col = study.engine_size_column
    frame = pd.DataFrame({draw_column(k): v for k, v in factors.items()})
    for col in ("trip_fuel_kg", "takeoff_mass_kg", size_col):
        frame[col] = out[col]
    for c in names:
        frame[f"margin_{c}"] = out[f"margin_{c}"]
    frame["feasible"] = out["feasible"]
    frame["limiting_constraint"] = np.asarray(names, dtype=object)[out["limiting_index"]]

    nominal_margins = {c: float(row[f"margin_{c}"]) for c in names}
    table = constraint_table(frame, names, nominal_margins, bool(row["feasible"]),
                             dict(spec.requirements.margins), n)
    trip_stats = spread_table(frame["trip_fuel_kg"].to_numpy(float), float(row["trip_fuel_kg"]),
                              n, seed)
    return RobustResult(design=nominal, constraints=table, trip_fuel=trip_stats,
                        samples=frame, n_samples=n, seed=seed, assumptions=dict(assumptions),
                        capped=capped)


def _draw(study, design, samples, seed, uncertainty):
    """The sized nominal design (evaluate's frame), the assumptions, ``n``, the seed and the
    drawn factors, shared by both modes (same draws for the same seed)."""
    import pandas as pd
    from .evaluation import evaluate
    unc = uncertainty if uncertainty is not None else (study.uncertainty or {})
    assumptions = unc.get("assumptions", {})
    if not assumptions:
        raise ValueError(f"{study.path}: no uncertain assumptions; expected an [uncertainty] "
                         "table with at least one of: "
                         + ", ".join([*UNCERTAIN_ASSUMPTIONS, *UNCERTAIN_CONDITIONS]))
    n = int(samples if samples is not None else unc.get("samples", DEFAULT_SAMPLES))
    seed = int(seed if seed is not None else (unc.get("seed") if unc.get("seed") is not None
                                              else 1))
    table = pd.DataFrame(design)
    if len(table) != 1:
        raise ValueError(f"design: got {len(table)} rows; expected exactly one design")
    nominal = evaluate(study, table)
    factors = sample_factors(assumptions, n, np.random.default_rng(seed))
    return nominal, dict(assumptions), n, seed, factors


def frozen_monte_carlo(study, design, samples=None, seed=None, uncertainty=None) -> RobustResult:
    """Monte Carlo of one design *as built* (the ``frozen`` mode, see the module notes).

    The design is sized once at the study's values and frozen; the samples are applied to
    that airplane repeated ``n`` times in one :func:`~optimiser.sizing.frozen.analyse_designs`
    call, each at the design's maximum takeoff mass with the study's payload (so the fuel on
    board is what an empty-mass factor leaves). Parameters as :func:`monte_carlo`; the
    constraints are those of :func:`~optimiser.sizing.frozen.analysis_checked_constraints`,
    their nominal margins those of the frozen design at its design case (equal to the
    sizing's, ``mission_fuel`` and ``max_takeoff_mass`` 0). ``fuel_on_board`` holds the
    spread of the fuel on board; ``samples`` adds ``fuel_mass_kg`` (the fuel the mission
    needs, with reserves) and ``fuel_on_board_kg``.
    """
    import pandas as pd
    from .evaluation import override_columns
    from .sizing.frozen import (analyse_designs, analysis_checked_constraints, frozen_from_sized,
                                operating_masses)
    nominal, assumptions, n, seed, factors = _draw(study, design, samples, seed, uncertainty)
    spec = study.spec
    flap_index = spec.high_lift_names.index(nominal["flap"].iloc[0])
    overrides, capped = overrides_from_factors(spec, factors)
    one = frozen_from_sized(nominal, [flap_index], spec.uses_power_loading)
    base = analyse_designs(spec, one, operating_masses(spec, one))
    repeated = {k: np.repeat(nominal[k].to_numpy(float), n)
                for k in ("wing_area_m2", "span_m", study.engine_size_column, "empty_mass_kg",
                          "takeoff_mass_kg", *override_columns(study))}
    frozen = frozen_from_sized(repeated, np.full(n, flap_index), spec.uses_power_loading)
    out = analyse_designs(spec, frozen, operating_masses(spec, frozen), overrides=overrides)
    names = analysis_checked_constraints(spec, out)
    frame = pd.DataFrame({draw_column(k): v for k, v in factors.items()})
    for col in ("trip_fuel_kg", "fuel_mass_kg", "fuel_on_board_kg", "takeoff_mass_kg",
                study.engine_size_column):
        frame[col] = out[col]
    for c in names:
        frame[f"margin_{c}"] = out[f"margin_{c}"]
    frame["feasible"] = out["feasible"]
    frame["limiting_constraint"] = np.asarray(names, dtype=object)[out["limiting_index"]]
    nominal_margins = {c: float(base[f"margin_{c}"][0]) if f"margin_{c}" in base else 0.0
                       for c in names}
    table = constraint_table(frame, names, nominal_margins, bool(base["feasible"][0]),
                             dict(spec.requirements.margins), n)
    trip = spread_table(frame["trip_fuel_kg"].to_numpy(float), float(base["trip_fuel_kg"][0]),
                        n, seed)
    on_board = spread_table(frame["fuel_on_board_kg"].to_numpy(float),
                            float(base["fuel_on_board_kg"][0]), n, seed)
    return RobustResult(design=nominal, constraints=table, trip_fuel=trip, samples=frame,
                        n_samples=n, seed=seed, assumptions=assumptions, capped=capped,
                        mode="frozen", fuel_on_board=on_board)


def robustness(study, design, mode: str = "frozen", **options) -> RobustResult:
    """:func:`frozen_monte_carlo` (``mode="frozen"``) or :func:`monte_carlo` (``"resize"``);
    ``options`` as theirs. An unknown mode raises ValueError."""
    if mode == "frozen":
        return frozen_monte_carlo(study, design, **options)
    if mode == "resize":
        return monte_carlo(study, design, **options)
    raise ValueError(f"mode: got {mode!r}; expected frozen or resize")


def constraint_table(frame, names, nominal_margins: dict, nominal_feasible: bool,
                     required: dict, n: int):
    """Per constraint of ``names`` (and ``all``): nominal margin, probability met (margin >=
    the study's required margin, ``all`` from ``frame["feasible"]``), its standard error and
    Wilson 95 % interval, margin percentiles and the share of samples it limits."""
    import pandas as pd
    rows = []
    for c in (*names, "all"):
        met = frame["feasible"].to_numpy(bool) if c == "all" else \
            frame[f"margin_{c}"].to_numpy(float) >= required.get(c, 0.0)
        p = float(met.mean())
        lo, hi = wilson_interval(p, n)
        m = None if c == "all" else frame[f"margin_{c}"].to_numpy(float)
        rows.append({
            "constraint": c,
            "description": "every constraint at once" if c == "all" else CONSTRAINT_LABELS[c],
            "nominal_margin": float("nan") if c == "all" else nominal_margins[c],
            "nominal_met": nominal_feasible if c == "all" else bool(
                nominal_margins[c] >= required.get(c, 0.0)),
            "probability_met": p,
            "standard_error": math.sqrt(p * (1.0 - p) / n),
            "probability_low_95": float(lo), "probability_high_95": float(hi),
            "margin_p5": float("nan") if m is None else float(np.percentile(m, 5)),
            "margin_p50": float("nan") if m is None else float(np.percentile(m, 50)),
            "margin_p95": float("nan") if m is None else float(np.percentile(m, 95)),
            "limiting_share": float(np.mean(frame["limiting_constraint"].to_numpy(object) == c))
            if c != "all" else float("nan"),
        })
    return pd.DataFrame(rows)


def spread_table(values_kg, nominal_kg: float, n: int, seed: int):
    """One-row frame of a mass over the samples: nominal, mean, std and 5/50/95 % [kg]."""
    import pandas as pd
    p5, p50, p95 = np.percentile(values_kg, [5, 50, 95])
    return pd.DataFrame([{
        "nominal_kg": nominal_kg, "mean_kg": float(values_kg.mean()),
        "std_kg": float(values_kg.std(ddof=1)) if n > 1 else 0.0,
        "p5_kg": float(p5), "p50_kg": float(p50), "p95_kg": float(p95),
        "samples": n, "seed": seed}])


def design_label(study, design_row, units=None) -> str:
    """A one-line description of a design (inputs only); ``units`` ``"si"`` or ``"us"``
    (loadings in lbf/ft² and lbf/hp; default :func:`~optimiser.display_units.current_system`)."""
    from .display_units import SI, column_display, resolve
    system = resolve(units)
    load = study.loading_column
    wing, wing_unit = column_display("wing_loading_N_m2", design_row["wing_loading_N_m2"], system)
    loading, unit = column_display(load, design_row[load], system)
    digits = ".0f" if system == SI else ".1f"   # 1 lbf/ft² is about 48 N/m²
    return (f"W/S {wing:{digits}} {wing_unit}, "
            f"{'W/P' if unit else 'T/W'} {loading:.4g}{' ' + unit if unit else ''}, "
            f"AR {design_row['aspect_ratio']:.3g}, flap {design_row['flap']}")


def summary_text(study, result: RobustResult) -> str:
    """The printed report, ending with the caution text."""
    from .evaluation import CAUTION
    d = result.design.iloc[0]
    lines = [f"study {study.name}: robustness of {design_label(study, d)}"]
    if result.mode == "frozen":  # a re-sizing summary keeps its earlier text
        lines.append("  " + mode_text(result.mode))
    lines.append(f"  {result.n_samples} samples, seed {result.seed}; uncertain: "
                 + ", ".join(f"{k} ({_dist_text(v)})" for k, v in result.assumptions.items()))
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
    tables = [("trip fuel", result.trip_fuel)]
    if result.fuel_on_board is not None:
        tables.append(("fuel on board", result.fuel_on_board))
    for name, table in tables:
        lines.append(_spread_line(name, table.iloc[0]))
    lines.append(CAUTION)
    return "\n".join(lines)


def _spread_line(name: str, t) -> str:
    """One line of a fuel spread (nominal, mean, std, 5/50/95 %), in the reader's units
    (:mod:`optimiser.display_units`; the files stay SI)."""
    from .display_units import to_display
    keys = ("nominal_kg", "mean_kg", "std_kg", "p5_kg", "p50_kg", "p95_kg")
    values, unit = to_display(np.array([float(t[k]) for k in keys]), "kg")
    nom, mean, std, p5, p50, p95 = (float(v) for v in values)
    return (f"  {name} [{unit}]: nominal {nom:.1f}, mean {mean:.1f}, std {std:.1f}, "
            f"5/50/95 % {p5:.1f} / {p50:.1f} / {p95:.1f}")


def mode_text(mode: str) -> str:
    """One line saying how the samples were treated (``frozen`` or ``resize``)."""
    if mode == "frozen":
        return ("mode: frozen (sized once at the study's values; every sample flies that "
                "airplane at its maximum takeoff mass with the study's payload)")
    return ("mode: resize (every sample sized anew; wing loading, power loading or "
            "thrust-to-weight, and aspect ratio held)")


def _dist_text(a):
    u = f" {a['unit']}" if a.get("unit") else ""  # additive conditions, in SI
    if a["distribution"] == "normal":
        return f"normal, mean {a['mean']:g}{u}, std {a['std']:g}{u}"
    if a["distribution"] == "uniform":
        return f"uniform {a['low']:g}{u} to {a['high']:g}{u}"
    return f"triangular {a['low']:g} / {a['mode']:g} / {a['high']:g}{u}"
