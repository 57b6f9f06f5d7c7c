"""The flap options compared: a front per option under identical constraints and budget.

Flap comparison (:func:`compare_flaps`) reads a run's archive: the run gave every flap option
its own NSGA-II with the same per-option population, generations and a seed from the same
stream (:func:`optimiser.search.option_seed`), so the per-option feasible non-dominated sets
are per-option fronts under identical constraints and budget.
"""

from __future__ import annotations

import math

import numpy as np

from .columns import unit_of
from .errors import DecideError
from .runfolder import names
from .runfolder.reader import Run, load_run


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
    the other variables (the cruise altitude, where it is one, at its two bounds). Returns
    (margin [-], wing loading [N/m^2])."""
    import itertools
    from .evaluation import override_columns, size_frame
    ws = study.variable("wing_loading_N_m2").lower
    lv, av = study.variable(study.loading_column), study.variable("aspect_ratio")
    extra = [study.variable(c) for c in override_columns(study)]
    grid = np.array(list(itertools.product(np.linspace(lv.lower, lv.upper, n),
                                           np.linspace(av.lower, av.upper, n),
                                           *([v.lower, v.upper] for v in extra))))
    idx = study.spec.high_lift_names.index(flap)
    f = size_frame(study, np.full(len(grid), ws), grid[:, 0], grid[:, 1],
                   np.full(len(grid), idx),
                   {v.column: grid[:, 2 + j] for j, v in enumerate(extra)})
    return float(f["margin_stall_speed"].max()), float(ws)


def compare_flap_options(study, archive, scales):
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
    from .search import nondominated_mask
    cols = list(study.objective_columns())
    eng, fuel = study.engine_size_column, "trip_fuel_kg"
    fronts = per_option_fronts(study, archive)
    pool = pd.concat([f.assign(_flap=k) for k, f in fronts.items() if len(f)], ignore_index=True) \
        if any(len(f) for f in fronts.values()) else None
    combined = pool[nondominated_mask(pool[cols].to_numpy(float))] if pool is not None else None
    rows = [_option_row(study, flap, archive[archive["flap"] == flap], fronts[flap], combined,
                        scales) for flap in study.flaps]
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
    for key, vals in _penalties(study, table, fronts, ref).items():
        table[key] = vals
    return table, fronts


def _option_row(study, flap, mine, fr, combined, scales) -> dict:
    """The row of one flap option (before the reference and the penalties): ``mine`` its
    archive rows, ``fr`` its own front, ``combined`` the non-dominated set of all fronts."""
    from .search import hypervolume
    from .sizing import active_constraints
    cols = list(study.objective_columns())
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
    else:  # the margin beyond the required one (``[requirements] margins``) decides
        required = dict(study.spec.requirements.margins)
        worst = min(margins, key=lambda c: margins[c] - required.get(c, 0.0))
        row["failing_constraint"], row["best_margin_failing"] = worst, margins[worst]
        short = required.get(worst, 0.0) - margins[worst]
        notes.append(f"no feasible design: {worst} short by {short:.1%} at best"
                     + (f" (of a required {required[worst]:.1%})" if worst in required else ""))
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
    return row


def _penalties(study, table, fronts, ref) -> dict:
    """The penalty columns of :func:`compare_flap_options` against the reference option
    ``ref`` (None: no option has a front); sets ``simpler_than_reference`` in ``table``."""
    eng, fuel = study.engine_size_column, "trip_fuel_kg"
    eng_unit = unit_of(eng)
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
    return ext


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


def compare_flaps(run):
    """The flap comparison of a finished run: (table, per-option fronts).

    ``run`` is a :class:`~optimiser.runfolder.Run` (from :func:`~optimiser.runfolder.load_run`)
    or a run folder. The table has one row per allowed flap option
    (:func:`compare_flap_options`); the fronts are ``{flap: DataFrame}``."""
    from .evaluation import size_frame
    from .runfolder.archive import read_archive
    from .search import design_arrays, design_overrides, free_variables
    from .sizing import active_constraints
    if not isinstance(run, Run):
        run = load_run(run)
    study = run.study
    if not run.evaluations_path.is_file():
        raise DecideError(f"{run.run_dir}: no {names.ARCHIVE} in it; expected a run folder "
                          "written by 'optimiser run'")
    x0 = np.array([[v.lower for v in free_variables(study)]])
    cols = list(size_frame(study, *design_arrays(study, x0), [0],
                           design_overrides(study, x0)).columns)
    need = [c for c in cols if c not in ("limiting_constraint", "most_violated")]
    need = [c for c in need if c in ("flap", "feasible", "wing_loading_N_m2", study.loading_column,
                                     "aspect_ratio", "maintenance_index", "takeoff_mass_kg",
                                     *study.objective_columns())
            or c in {f"margin_{k}" for k in active_constraints(study.spec)}]
    archive = read_archive(run.run_dir, need, flaps=study.spec.high_lift_names)
    scales = run.info["hypervolume"]
    return compare_flap_options(study, archive, scales)
