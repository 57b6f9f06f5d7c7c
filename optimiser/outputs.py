"""The outputs of a run: front.csv (or least_violating.csv), run.json, the plots, the
result object and the summary lines."""

from __future__ import annotations

from pathlib import Path

import numpy as np

from .columns import short_and_unit
from .display_units import SI, column_display, resolve
from .evaluation import CAUTION
from .runfolder import files, manifest, names
from .runfolder.archive import read_history
from .runfolder.runinfo import versions, write_run_info
from .runstate import DesignSet, RunResult, RunState

TERMINATION_TEXT = {
    "generations": "generation budget reached",
    "evaluations": "evaluation budget reached",
    "time": "wall-clock budget reached",
    "stall": "hypervolume stalled",
}


def _best_lines(study, front, system=SI):
    out = []
    for c in list(study.objective_columns()):
        i = int(front[c].to_numpy(float).argmin())
        if system == SI:
            out.append(f"  best {c}: {front[c].iloc[i]:.6g} ({front['flap'].iloc[i]})")
        else:  # the plain name and the displayed unit (the column's name carries SI)
            value, unit = column_display(c, float(front[c].iloc[i]), system)
            shown = f"{value:.6g} {unit}".rstrip()
            out.append(f"  best {short_and_unit(c)[0]}: {shown} ({front['flap'].iloc[i]})")
    return out


def _designs_table(study, kept: DesignSet):
    """The design inputs of ``kept`` as a designs table (flap by name)."""
    import pandas as pd
    from .evaluation import design_columns
    flap_names = np.asarray(study.spec.high_lift_names, dtype=object)
    cols = design_columns(study)
    table = {cols[0]: kept.designs[:, 0], cols[1]: kept.designs[:, 1],
             cols[2]: kept.designs[:, 2], cols[3]: flap_names[kept.flap]}
    for j, c in enumerate(cols[4:]):  # the optional variables, after the first three
        table[c] = kept.designs[:, 3 + j]
    return pd.DataFrame(table)


def _least_table(study, least: DesignSet):
    """The least-violating designs sized again, with their total violation and generation."""
    from .evaluation import override_columns, size_frame
    d = least.designs
    table = size_frame(study, d[:, 0], d[:, 1], d[:, 2], least.flap,
                       {c: d[:, 3 + j] for j, c in enumerate(override_columns(study))})
    import pandas as pd
    head = pd.DataFrame({"total_violation": least.key, "generation": least.generation},
                        index=table.index)
    return pd.concat([head, table], axis=1)  # one block added (no fragmented frame)


def _no_front_message(study, state, least=None) -> str:
    """Why nothing feasible was found, and where the closest designs are.

    ``least`` is the least-violating table (row 0 the closest to feasible): the constraint
    named is the one that design misses worst, with its margin there, so the figure quoted is
    always negative. (Each constraint's best margin on its own can be positive while no
    design meets them all at once, which would read as a contradiction.)"""
    closure = state.best_margin.get("mass_closure", 0.0)
    if closure < 0:  # not one design closed: the mission itself is out of reach
        return (f"no feasible design found in {state.n_evaluations} evaluations: the "
                "mission cannot close - for every design tried, payload, crew, fuel "
                "and empty mass exceed the takeoff mass up to the mass limit "
                f"(mass_closure, best margin reached {closure:+.1%}); shorten the "
                f"range, lighten the payload or widen the bounds; the designs closest "
                f"to feasible are in {names.LEAST_VIOLATING}")
    missed = {}
    required = required_margin_table(study)
    if least is not None and len(least):
        row = least.iloc[0]
        missed = {c[len("margin_"):]: float(row[c]) for c in least.columns
                  if c.startswith("margin_")
                  and float(row[c]) < required.get(c[len("margin_"):], 0.0)}
    if not missed:  # no table to read: the best margin of each constraint on its own
        worst = min(state.best_margin, key=state.best_margin.get)
        return (f"no feasible design found in {state.n_evaluations} evaluations: the "
                "requirements cannot all be met together within the variable bounds "
                f"(hardest: {worst}); the designs closest to feasible are in "
                f"{names.LEAST_VIOLATING}")
    worst = min(missed, key=lambda c: missed[c] - required.get(c, 0.0))
    others = len(missed) - 1
    also = f" and {others} other constraint(s)" if others else ""
    asked = f", {required[worst]:.1%} required" if required.get(worst) else ""
    return (f"no feasible design found in {state.n_evaluations} evaluations: the "
            "requirements cannot all be met together within the variable bounds; the design "
            f"closest to feasible still misses {worst} (margin {missed[worst]:+.1%}{asked})"
            f"{also}; the designs closest to feasible are in {names.LEAST_VIOLATING}")


def required_margin_table(study) -> dict:
    """The study's required design margins by constraint (``[requirements] margins``; only
    those given)."""
    return {name: float(m) for name, m in study.spec.requirements.margins}


def _write_tables(study, state: RunState, run_dir: Path):
    """Write front.csv, or least_violating.csv when nothing feasible was found (removing the
    other); (front, least-violating table or None, message)."""
    import pandas as pd
    from .evaluation import evaluate
    if state.front is not None and len(state.front) > 0:
        front = evaluate(study, _designs_table(study, state.front))
        if state.chance is not None:  # each constraint's probability and its interval
            from .chance import front_columns
            extra = pd.DataFrame(front_columns(study, state.chance, front), index=front.index)
            front = pd.concat([front, extra], axis=1).copy()  # one block per dtype
        front = pd.concat([pd.DataFrame({"generation": state.front.generation},
                                        index=front.index), front], axis=1)  # one block added
        front = front.sort_values(list(study.objective_columns()), kind="stable")\
            .reset_index(drop=True)
        files.write_atomic(run_dir / names.FRONT, files.csv_bytes(front))
        (run_dir / names.LEAST_VIOLATING).unlink(missing_ok=True)
        message = (f"{len(front)} feasible non-dominated design(s) from {state.n_evaluations} "
                   f"evaluations ({state.n_feasible} feasible); "
                   f"{TERMINATION_TEXT[state.termination]}")
        return front, None, message
    least = _least_table(study, state.least)
    front = pd.DataFrame(columns=list(least.columns[1:]))
    files.write_atomic(run_dir / names.LEAST_VIOLATING, files.csv_bytes(least))
    (run_dir / names.FRONT).unlink(missing_ok=True)
    return front, least, _no_front_message(study, state, least)


def run_info(study, state: RunState, front, history, message, ended_utc) -> dict:
    """The content of run.json."""
    from .loop import CHECKPOINT_INTERVAL_S
    b = state.budget
    info = {
        "study": study.name, "study_file": state.study_path, "study_sha256": study.sha256,
        "versions": versions(), "seed": state.seed,
        "started_utc": state.started_utc, "ended_utc": ended_utc,
        "active_seconds": round(state.elapsed_s, 3),
        "budget": {"population": b.population, "generations": b.generations,
                   "population_per_flap_option": b.option_population,
                   "flap_options": list(study.flaps),
                   "evaluations": b.evaluations, "time_s": b.time_s,
                   "stall_generations": b.stall_generations,
                   "stall_tolerance": b.stall_tolerance,
                   "checkpoint_every": b.checkpoint_every,
                   "checkpoint_interval_s": (CHECKPOINT_INTERVAL_S if b.checkpoint_every is None
                                             else None)},
        "method": "one NSGA-II (pymoo) per flap option, fronts merged (see optimiser.search)",
        "objectives": list(study.objective_columns()),
        "termination": state.termination,
        "termination_text": TERMINATION_TEXT[state.termination],
        "generations_run": state.generation,
        "n_evaluations": state.n_evaluations, "n_feasible": state.n_feasible,
        "front_size": len(front),
        "feasible_found": state.front is not None and len(state.front) > 0,
        "best_margin_reached": {k: float(v) for k, v in state.best_margin.items()},
        "hypervolume": {"final": float(history["hypervolume"].iloc[-1]) if len(history) else 0.0,
                        **state.scales,
                        "note": "objectives normalised as (f - ideal) / (nadir - ideal); the "
                                "reference point is fixed before the search and never changes"},
        "message": message, "caution": CAUTION,
    }
    required = required_margin_table(study)
    if required:  # recorded only when the study asks for margins (run.json unchanged else)
        info["required_margins"] = required
        info["best_margin_reached_note"] = ("best margin beyond the required one: margin_<c> "
                                            "minus required_margins[c]")
    return info


def finish(study, state: RunState, run_dir: Path, plots=None) -> RunResult:
    """Write front.csv (or least_violating.csv), the figures and run.json (with the run id
    and the records of the folder's files, :mod:`optimiser.runfolder.manifest`); build the
    result.

    ``plots`` draws the run's figures: a callable ``plots(study, run_dir, front, history,
    scales=..., run_utc=..., least_violating=...)`` such as :func:`optimiser.report.plots.write_plots` (the reporting layer,
    which this layer does not import), or None/False for none."""
    history = read_history(run_dir)
    ended = files.utc_now()
    front, least, message = _write_tables(study, state, run_dir)
    info = run_info(study, state, front, history, message, ended)
    # what binds the folder to this run: pick, flaps, report and sweep check these records
    table = (names.FRONT, len(front)) if least is None else (names.LEAST_VIOLATING, len(least))
    info["run_id"] = state.run_id
    if state.chance is not None:
        info["chance_constraints"] = state.chance.record()
    info["files"] = manifest.finished_files(run_dir, state, *table)
    if plots:
        plots(study, run_dir, front, history, scales=state.scales, run_utc=state.started_utc,
              least_violating=least)
    # run.json last: its presence marks a finished run (resume finishes a run killed before)
    write_run_info(run_dir, info)
    return RunResult(front=front, history=history, run_dir=run_dir, message=message,
                     n_evaluations=state.n_evaluations, termination=state.termination,
                     least_violating=least, best_margin=dict(state.best_margin),
                     chance=None if state.chance is None else state.chance.record())


def summary_text(study, result: RunResult, units: str | None = None) -> str:
    """The terminal summary of a run; ``units`` ``"si"`` or ``"us"`` for the best objective
    values (default :func:`~optimiser.display_units.current_system`)."""
    lines = [f"study {study.name}: {result.message}"]
    if len(result.front):
        lines += _best_lines(study, result.front, resolve(units))
    else:
        lines.append("  best margin reached per constraint (negative = not met"
                     + ("; beyond the required margins" if study.spec.requirements.margins
                        else "") + "):")
        lines += [f"    {k}: {v:+.1%}" for k, v in result.best_margin.items()]
    required = required_margin_table(study)
    if required:
        lines.append("  required design margins: " + ", ".join(
            f"{k} {v:.1%}" for k, v in required.items()))
    if result.chance is not None:
        from .chance import ChanceSetting
        lines.append(ChanceSetting(result.chance["reliability"], result.chance["samples"],
                                   0).summary_text())
    lines.append(f"run folder: {result.run_dir}")
    lines.append(CAUTION)
    return "\n".join(lines)
