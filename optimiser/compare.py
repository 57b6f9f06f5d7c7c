"""Comparing finished runs: what changed in their studies, and what it did to their fronts.

:func:`compare_runs` reads two or more run folders (of the same study or of different ones)
and returns a :class:`Comparison`:

- ``changes``: every value of the resolved studies (:mod:`optimiser.study_table`, defaults
  included) that is not the same in all runs, one row per key, one column per run;
- ``summary``: per run, the best of each shared objective on its front, the knee design
  (Deb & Gupta 2011, as :func:`optimiser.decide.choose` picks it) and the hypervolume of its
  front on a COMMON reference: the objectives are normalised by the ideal and nadir of the
  non-dominated union of all fronts and the reference point is 1.1 in each (as a run's own
  reference, :data:`optimiser.search.REFERENCE_MARGIN`), so the numbers can be compared
  across runs, unlike the hypervolume each run reports against its own grid.

Only the objectives every run minimised are compared; fewer than two shared objectives is
an error. Figures are drawn by :mod:`optimiser.report.compare_plots`.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np

from .errors import DecideError


@dataclass(frozen=True)
class Comparison:
    """Runs compared: their labels, folders, the shared objectives, the study changes, the
    summary table and each run's front (DataFrames)."""

    labels: list
    runs: list
    objectives: list
    changes: object
    summary: object
    scales: dict


def _labels(runs) -> list[str]:
    """One label per run: the folder name, made unique with its position where needed."""
    names = [r.run_dir.name for r in runs]
    return [n if names.count(n) == 1 else f"{n} ({k + 1})" for k, n in enumerate(names)]


def _variables_text(study, system) -> str:
    """The study's variables and bounds in one line, in ``system``'s units."""
    from .display_units import SI, column_display, heading
    parts = []
    for v in study.variables:
        (lower, upper), _ = column_display(v.column, (v.lower, v.upper), system)
        name = v.column if system == SI else heading(v.column, system)
        parts.append(f"{name} {lower:g} to {upper:g}")
    return "; ".join(parts)


def study_changes(runs, labels, units: str = "si"):
    """Rows (section, key, value per run) of every resolved-study value that differs; the
    values as text in ``units`` (SI for study_changes.csv, ``"us"`` for the console)."""
    import pandas as pd
    from .display_units import resolve
    from .study_table import resolved_entries, shown_text
    system = resolve(units)
    tables = []
    for r in runs:
        entries = {(e.section, e.key): e for e in resolved_entries(r.study)}
        tables.append(entries)
    keys = list(dict.fromkeys(k for t in tables for k in t))
    rows = []
    for k in keys:
        shown = []
        for t in tables:
            e = t.get(k)
            shown.append("(not in this study)" if e is None else
                         shown_text(e, system) + ("" if e.given is not None else " (default)"))
        values = [t[k].value if k in t else None for t in tables]
        if any(v != values[0] for v in values[1:]):
            rows.append({"section": k[0], "key": k[1], **dict(zip(labels, shown))})
    top = [("name", lambda r: r.study.name), ("certification",
                                              lambda r: r.study.spec.certification.basis),
           ("flaps", lambda r: ", ".join(r.study.flaps)),
           ("variables", lambda r: _variables_text(r.study, system)),
           ("objectives", lambda r: ", ".join(r.study.objectives))]
    for key, get in top:
        values = [get(r) for r in runs]
        if len(set(values)) > 1:
            rows.insert(0, {"section": "study", "key": key, **dict(zip(labels, values))})
    return pd.DataFrame(rows, columns=["section", "key", *labels])


def common_scales(fronts, objectives) -> dict:
    """Ideal and nadir of the non-dominated union of the fronts (raw units), with the
    reference point 1.1 in normalised objectives, in the form of
    :func:`optimiser.search.reference_scales`."""
    from .search import REFERENCE_MARGIN, nondominated_mask
    F = np.vstack([f[objectives].to_numpy(float) for f in fronts if len(f)])
    basis = F[nondominated_mask(F)]
    ideal, nadir = basis.min(axis=0), basis.max(axis=0)
    span = np.where(nadir > ideal, nadir - ideal, np.maximum(np.abs(nadir), 1.0))
    return {"ideal": ideal.tolist(), "nadir": (ideal + span).tolist(),
            "reference_point_normalised": [REFERENCE_MARGIN] * len(objectives),
            "reference_point": (ideal + REFERENCE_MARGIN * span).tolist(),
            "basis": "non-dominated union of the compared fronts"}


def compare_runs(run_dirs) -> Comparison:
    """Compare finished run folders (two or more); :class:`DecideError` on a bad set."""
    import pandas as pd
    from .decide import choose
    from .runfolder import load_run
    from .search import hypervolume
    if len(run_dirs) < 2:
        raise DecideError(f"compare: got {len(run_dirs)} run folder(s); expected two or more")
    seen = {}
    for d in run_dirs:
        key = Path(d).resolve()
        if key in seen:
            raise DecideError(f"compare: {d}: given twice; expected different run folders")
        seen[key] = d
    runs = [load_run(d) for d in run_dirs]
    labels = _labels(runs)
    shared = [c for c in runs[0].study.objective_columns()
              if all(c in r.study.objective_columns() for r in runs[1:])]
    if len(shared) < 2:
        raise DecideError("compare: the runs share fewer than two objectives ("
                          + ", ".join(shared or ["none"]) + "); expected runs that minimise at "
                          "least two of the same objectives")
    with_front = [r for r in runs if len(r.front)]
    if not with_front:
        raise DecideError("compare: no run has a feasible front; expected at least one")
    scales = common_scales([r.front for r in with_front], shared)
    rows = []
    for label, r in zip(labels, runs):
        row = {"run": label, "study": r.study.name, "run_dir": str(r.run_dir),
               "front_designs": len(r.front)}
        if len(r.front):
            F = r.front[shared].to_numpy(float)
            row["common_hypervolume"] = hypervolume(F, scales)
            for j, c in enumerate(shared):
                row[f"best_{c}"] = float(F[:, j].min())
            knee = choose(r.study, r.front, "knee").design
            row["knee_flap"] = str(knee["flap"])
            for c in shared:
                row[f"knee_{c}"] = float(knee[c])
        rows.append(row)
    return Comparison(labels, runs, shared, study_changes(runs, labels), pd.DataFrame(rows),
                      scales)


def summary_text(cmp: Comparison, units: str | None = None) -> str:
    """The terminal summary: the front per run on the common reference, then the changes;
    numbers in ``units`` (``"si"`` or ``"us"``; default
    :func:`~optimiser.display_units.current_system`; the files stay SI)."""
    from .columns import short_and_unit
    from .display_units import SI, column_display, resolve
    from .evaluation import CAUTION
    system = resolve(units)

    def best_text(r, c):
        if system == SI:
            return f"{short_and_unit(c)[0]} {r[f'best_{c}']:.4g} {short_and_unit(c)[1]}".rstrip()
        value, unit = column_display(c, r[f"best_{c}"], system)
        return f"{short_and_unit(c)[0]} {value:.4g} {unit}".rstrip()

    changes = cmp.changes if system == SI else study_changes(cmp.runs, cmp.labels, system)
    names = cmp.objectives if system == SI else [short_and_unit(c)[0] for c in cmp.objectives]
    lines = [f"compared {len(cmp.runs)} runs on {', '.join(names)} (hypervolume on a "
             "common reference: the non-dominated union of their fronts)"]
    for _, r in cmp.summary.iterrows():
        if not r["front_designs"]:
            lines.append(f"  {r['run']}: no feasible design")
            continue
        best = ", ".join(best_text(r, c) for c in cmp.objectives)
        lines.append(f"  {r['run']}: {int(r['front_designs'])} front designs, common "
                     f"hypervolume {r['common_hypervolume']:.4g}; best {best}")
    if len(changes):
        lines.append(f"  {len(changes)} study value(s) differ:")
        for _, c in changes.head(20).iterrows():
            lines.append(f"    [{c['section']}] {c['key']}: "
                         + " | ".join(str(c[label]) for label in cmp.labels))
        if len(changes) > 20:
            lines.append(f"    ... {len(changes) - 20} more in study_changes.csv")
    else:
        lines.append("  the resolved studies are identical (the runs differ only in budget or "
                     "seed)")
    lines.append(CAUTION)
    return "\n".join(lines)
