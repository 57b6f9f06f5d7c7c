"""Sensitivities of a chosen design: how each objective and each constraint margin moves per
unit change of each requirement and each uncertain assumption.

The design keeps its decision variables (wing loading, power loading or thrust-to-weight,
aspect ratio, flap) and is sized again, so the numbers answer "had this requirement or this
assumption been different, what would this design have become?" (mass, engine size and fuel
follow; the stall speed at fixed wing loading does not).

Method: central differences, ``dy/dx = (y(x + h) - y(x - h)) / (2 h)``, the change over the
step ``h`` quoted beside it. Assumptions are per-design overrides of the model
(:data:`optimiser.sizing.inputs.OVERRIDE_KEYS`): every perturbed copy of the design is sized
in ONE vectorised call. Requirements are study-wide values of the spec: each is sized in
one call of its two perturbed copies (a loop over the handful of requirements, not over
designs). Steps: :data:`RELATIVE_STEP` of the value, or the absolute step of
:data:`REQUIREMENTS` for values that may be zero (elevation, temperature offset).

Source of the method: central differences, truncation error O(h^2) (e.g. Press et al.,
"Numerical Recipes", 3rd ed., 2007, sec. 5.7, from memory).
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from .errors import DecideError

RELATIVE_STEP = 0.01
"""Step of a central difference, as a share of the input's value (ours: small enough for
the model's smooth parts, large against the solvers' tolerances of about 1e-9)."""

REQUIREMENTS = (
    # (name, spec section, field, unit, absolute step or None for RELATIVE_STEP)
    ("takeoff field length", "departure", "field_length_m", "m", None),
    ("landing field length", "destination", "field_length_m", "m", None),
    ("departure elevation", "departure", "elevation_m", "m", 50.0),
    ("departure temperature offset", "departure", "temperature_offset_K", "K", 1.0),
    ("stall speed limit", "requirements", "stall_speed_m_s", "m/s", None),
    ("climb rate", "requirements", "climb_rate_m_s", "m/s", None),
    ("service ceiling", "requirements", "service_ceiling_m", "m", None),
    ("design range", "mission", "range_m", "m", None),
    ("cruise speed", "mission", "cruise_speed_m_s", "m/s", None),
    ("cruise altitude", "mission", "cruise_altitude_m", "m", None),
    ("payload", "weights", "payload_kg", "kg", None),
)
"""Requirements perturbed, with their spec field and unit."""


def assumption_inputs(spec) -> list[tuple[str, str, float, str]]:
    """(name, override key, nominal value, unit) of each uncertain assumption of the study's
    propulsion family."""
    pr, ad, wt = spec.propulsion, spec.aerodynamics, spec.weights
    out = []
    if ad.cd0_method == "fixed":
        out.append(("clean CD0", "cd0_clean", ad.cd0_clean, "-"))
    else:
        out.append(("CD0 build-up factor", "cd0_scale", 1.0, "-"))
    out.append(("Oswald factor scale", "oswald_factor_scale", 1.0, "-"))
    if spec.propulsion.family == "turbofan":
        out.append(("cruise TSFC", "tsfc_cruise", pr.tsfc_cruise, "kg/(N s)"))
    else:
        out.append(("cruise propeller efficiency", "propeller_efficiency_cruise",
                    pr.propeller_efficiency_cruise, "-"))
        out.append(("climb propeller efficiency", "propeller_efficiency_climb",
                    pr.propeller_efficiency_climb, "-"))
        out.append(("cruise SFC", "sfc_cruise", pr.sfc_cruise, "kg/J"))
    out.append(("empty-mass factor", "empty_mass_factor", wt.empty_mass_factor, "-"))
    return out


def output_columns(study, sized: dict) -> list[str]:
    """The outputs differentiated: the study's objectives, then every margin."""
    from .sizing import active_constraints
    margins = [f"margin_{c}" for c in active_constraints(study.spec)]
    return [*study.objective_columns(), *(m for m in margins if m in sized)]


def _design_arrays(study, design, n):
    flap = study.spec.high_lift_names.index(str(design["flap"]))
    return (np.full(n, float(design["wing_loading_N_m2"])),
            np.full(n, float(design[study.loading_column])),
            np.full(n, float(design["aspect_ratio"])), np.full(n, flap))


def sensitivities(study, design, rel_step: float = RELATIVE_STEP):
    """Table of sensitivities of one design (a mapping with evaluate's input columns).

    Returns a DataFrame, one row per (input, output): ``input``, ``kind`` (requirement,
    assumption, or variable: the design's own cruise altitude where the study makes it one),
    ``input_unit``, ``input_value``, ``step``, ``output``, ``output_value`` (at the study's
    values), ``derivative`` (output units per input unit), ``change_minus`` and
    ``change_plus`` (output change at ``input -/+ step``). Raises :class:`DecideError` for a
    step outside (0, 0.2]."""
    import pandas as pd

    from .evaluation import row_overrides
    from .sizing import size_designs
    if not 0.0 < rel_step <= 0.2:
        raise DecideError(f"--step: got {rel_step:g}; expected a relative step above 0 and at "
                          "most 0.2 (e.g. 0.01 for 1 %)")
    spec = study.spec
    inputs = assumption_inputs(spec)
    k = len(inputs)
    args = _design_arrays(study, design, 1 + 2 * k)
    overrides = row_overrides(study, design, 1 + 2 * k)
    for j, (_, key, value, _) in enumerate(inputs):
        col = np.full(1 + 2 * k, float(value))
        col[1 + 2 * j] = value * (1.0 - rel_step)
        col[2 + 2 * j] = value * (1.0 + rel_step)
        overrides[key] = col
    sized = size_designs(spec, *args, overrides=overrides)  # every assumption at once
    outputs = output_columns(study, sized)
    base = {c: float(np.asarray(sized[c])[0]) for c in outputs}
    rows = []
    for j, (name, key, value, unit) in enumerate(inputs):
        h = value * rel_step
        lo = {c: float(np.asarray(sized[c])[1 + 2 * j]) for c in outputs}
        hi = {c: float(np.asarray(sized[c])[2 + 2 * j]) for c in outputs}
        rows += _rows(name, "assumption", unit, value, h, base, lo, hi)
    own = row_overrides(study, design, 1)
    for name, section, field, unit, absolute in REQUIREMENTS:
        if field in own:  # a variable of this study: the design's own value moves
            value = float(own[field][0])
            h = absolute if absolute is not None else value * rel_step
            pair = [size_designs(spec, *_design_arrays(study, design, 1),
                                 overrides={**own, field: np.array([value + sign * h])})
                    for sign in (-1.0, 1.0)]
            lo, hi = ({c: float(np.asarray(p[c])[0]) for c in outputs} for p in pair)
            rows += _rows(name, "variable", unit, value, h, base, lo, hi)
            continue
        value = float(getattr(getattr(spec, section), field))
        h = absolute if absolute is not None else value * rel_step
        pair = [size_designs(_with(spec, section, field, value + sign * h),
                             *_design_arrays(study, design, 1), overrides=own or None)
                for sign in (-1.0, 1.0)]
        lo, hi = ({c: float(np.asarray(p[c])[0]) for c in outputs} for p in pair)
        rows += _rows(name, "requirement", unit, value, h, base, lo, hi)
    return pd.DataFrame(rows)


def _with(spec, section, field, value):
    """The spec with one field of one section changed."""
    return replace(spec, **{section: replace(getattr(spec, section), **{field: value})})


def _rows(name, kind, unit, value, h, base, lo, hi):
    return [{"input": name, "kind": kind, "input_unit": unit, "input_value": value, "step": h,
             "output": c, "output_value": base[c],
             "derivative": (hi[c] - lo[c]) / (2.0 * h),
             "change_minus": lo[c] - base[c], "change_plus": hi[c] - base[c]}
            for c in base]


def ranked(table, output: str):
    """The rows of one output, ranked by the larger of the two step changes (largest
    first)."""
    part = table[table["output"] == output].copy()
    size = np.maximum(part["change_minus"].abs(), part["change_plus"].abs())
    return part.assign(_size=size).sort_values("_size", ascending=False, kind="stable")\
        .drop(columns="_size").reset_index(drop=True)


ARCHIVE_ROWS_MAX = 200_000
"""Evaluated designs re-sized per requirement step at most (the latest ones kept; ours:
about a second of sizing each)."""


def requirement_prices(study, run_dir, rel_step: float = 0.05):
    """The price of each requirement on the run's own designs, without a new search.

    Every design the search evaluated (``evaluations.csv``, the latest
    :data:`ARCHIVE_ROWS_MAX`) is sized again with the requirement moved by ``-step`` and
    ``+step``; for each objective, the best value among the designs feasible there is taken.
    The price is ``(best(+step) - best(-step)) / (2 step)``, per unit of the requirement.

    This reads the search's archive as a dense sample of the design space: it does not
    re-optimise, so it is a first-order estimate whose resolution is the archive's spacing
    near the front (a campaign, ``optimiser sweep``, re-optimises at each value). A
    requirement that no front design binds prices at 0 within that resolution.

    Returns a DataFrame: ``requirement``, ``unit``, ``value``, ``step``, and per objective
    ``best_<objective>_minus``, ``_nominal``, ``_plus`` and ``price_<objective>`` (objective
    units per requirement unit)."""
    import pandas as pd

    from .evaluation import design_columns, design_overrides, override_columns
    from .runfolder.archive import read_archive
    from .search import objectives_and_constraints
    from .sizing import size_designs
    if not 0.0 < rel_step <= 0.2:
        raise DecideError(f"--step: got {rel_step:g}; expected a relative step above 0 and at "
                          "most 0.2 (e.g. 0.05 for 5 %)")
    spec = study.spec
    cols = list(design_columns(study))
    archive = read_archive(run_dir, cols, flaps=spec.high_lift_names)
    archive = archive.drop_duplicates().tail(ARCHIVE_ROWS_MAX)
    flap = np.array([spec.high_lift_names.index(f) for f in archive["flap"]], dtype=int)
    x = [archive[c].to_numpy(float) for c in cols[:3]]
    own = design_overrides(study, archive) or None
    objectives = list(study.objective_columns())

    def best(s):
        sized = size_designs(s, *x, flap, own)
        F, G = objectives_and_constraints(study, sized)
        ok = np.all(G <= 0.0, axis=1) & np.asarray(sized["feasible"], bool)
        return [float(F[ok, j].min()) if ok.any() else float("nan")
                for j in range(len(objectives))]

    nominal = best(spec)
    rows = []
    for name, section, field, unit, absolute in REQUIREMENTS:
        if field in override_columns(study):
            continue  # a decision variable of the search, not a requirement with a price
        value = float(getattr(getattr(spec, section), field))
        h = absolute if absolute is not None else value * rel_step
        lo, hi = (best(_with(spec, section, field, value + sign * h)) for sign in (-1.0, 1.0))
        row = {"requirement": name, "unit": unit, "value": value, "step": h}
        for j, c in enumerate(objectives):
            row[f"best_{c}_minus"] = lo[j]
            row[f"best_{c}_nominal"] = nominal[j]
            row[f"best_{c}_plus"] = hi[j]
            row[f"price_{c}"] = (hi[j] - lo[j]) / (2.0 * h)
        rows.append(row)
    return pd.DataFrame(rows)
