"""Reading a finished run folder: :func:`load_run`, the one entry point that the decision
support, campaigns, the report and the command line use, and the checked readers of
``study.toml``, ``front.csv`` and ``least_violating.csv``.

Every failure is one :class:`~optimiser.errors.RunError` line naming the file and what is
wrong (:mod:`~.checked`). A run that found nothing feasible has no ``front.csv`` and a
``least_violating.csv`` instead, and its ``run.json`` says so (``feasible_found`` false): a
``front.csv`` missing from a run that found a front is an error, not an empty front.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

from ..errors import RunError
from . import checked, names
from .manifest import check_run_files
from .runinfo import check_run_info_study, read_run_info

TEXT_COLUMNS = ("limiting_constraint", "most_violated", "outside_bounds", "aerodrome_code_letter")
"""Text columns of front.csv that may be empty: read as "" (never NaN)."""
BOOL_COLUMNS = ("feasible", "within_bounds", "oswald_mach_in_range", "cd0_built_up",
                "meets_reliability")
"""True/false columns of front.csv and least_violating.csv (``meets_reliability``: a
chance-constrained run's)."""
SIZED_EXPECTED = "a table written by 'optimiser run' (UTF-8 CSV, one row per design)"


@dataclass(frozen=True)
class Run:
    """A finished run folder: its study, its front, its archive path and run.json."""

    study: object
    run_dir: Path
    front: object
    info: dict

    @property
    def evaluations_path(self) -> Path:
        return self.run_dir / names.ARCHIVE

    @property
    def history_path(self) -> Path:
        return self.run_dir / names.HISTORY


def read_study_text(run_dir) -> str:
    """The study text a run used (its ``study.toml``)."""
    return checked.read_text(Path(run_dir) / names.STUDY,
                             "the study file the run used (UTF-8 TOML text)")


def sized_columns(study) -> list[str]:
    """The columns every table of sized designs of ``study`` must have (front.csv,
    least_violating.csv): the inputs, the objectives, the takeoff mass, every margin,
    feasibility and the limiting constraint."""
    from ..evaluation import design_columns
    from ..sizing import active_constraints
    return list(dict.fromkeys([*design_columns(study), *study.objective_columns(),
                               "takeoff_mass_kg", "feasible", "limiting_constraint",
                               *(f"margin_{c}" for c in active_constraints(study.spec))]))


def read_sized_table(path: Path, study=None, extra=()):
    """A table of sized designs (front.csv, least_violating.csv) as a DataFrame: every
    column of :func:`sized_columns` (and ``extra``) there once, every number finite, the
    flags true or false, the flaps the study's; the empty text cells read as ""."""
    import pandas as pd
    required = [*(sized_columns(study) if study is not None else ()), *extra]
    table, cols = checked.read_table(path, required, SIZED_EXPECTED, keep_default_na=False,
                                     na_values=[""])
    if len(table) == 0:
        checked.fail(path, "no design rows under the header", SIZED_EXPECTED)
    words = ("flap", *TEXT_COLUMNS, *BOOL_COLUMNS)
    checked.check_columns(
        path, table, finite=[c for c in cols if c not in words],
        boolean=[c for c in BOOL_COLUMNS if c in table],
        choices={"flap": study.spec.high_lift_names} if study is not None else None)
    for c in TEXT_COLUMNS:
        if c in table:
            table[c] = ["" if pd.isna(v) else str(v) for v in table[c]]
    return table


def read_front(run_dir, study=None, info=None):
    """A run's ``front.csv`` as a DataFrame (empty if the run found nothing feasible); the
    text columns that may be empty are read as "".

    With ``info`` (its run.json) the file must agree with it: present with ``front_size``
    rows when the run found a front, absent when it found nothing feasible (then
    ``least_violating.csv`` must be readable)."""
    import pandas as pd
    path = Path(run_dir) / names.FRONT
    if info is None:
        return read_sized_table(path, study) if path.exists() else pd.DataFrame()
    if not info["feasible_found"]:
        if path.exists():
            checked.fail(path, f"present, but {names.RUN_INFO} says the run found no feasible "
                         "design", "no front file beside a run that found nothing feasible")
        read_sized_table(Path(run_dir) / names.LEAST_VIOLATING, study,
                         extra=("total_violation",))
        return pd.DataFrame()
    if not path.exists():
        checked.fail(path, f"missing ({names.RUN_INFO} says the run found "
                     f"{info['front_size']} feasible non-dominated designs)",
                     "the run's front as 'optimiser run' wrote it")
    front = read_sized_table(path, study)
    if len(front) != info["front_size"]:
        checked.fail(path, f"{len(front)} design rows", f"{info['front_size']}, as "
                     f"{names.RUN_INFO} records")
    if not front["feasible"].all():
        checked.fail(path, "a design marked infeasible", "only feasible designs")
    return front


PICK_CHOICE_SCHEMA = {"method": str, "limits": list, "weights": (list, type(None)),
                      "aspiration": (dict, type(None))}
"""The keys of a pick's choice.json that the report reads again, and their types."""
PICK_CHOICE_EXPECTED = "the choice.json of a pick written by 'optimiser pick'"


def read_pick_choice(path: Path) -> dict:
    """A pick's ``choice.json`` (the settings the report repeats the pick with), checked:
    limits are texts, weights and aspiration values finite numbers."""
    import math
    info = checked.read_json_object(Path(path), PICK_CHOICE_SCHEMA, PICK_CHOICE_EXPECTED)

    def number(v):
        return isinstance(v, (int, float)) and not isinstance(v, bool) and math.isfinite(v)
    if not all(isinstance(t, str) for t in info["limits"]):
        checked.fail(path, f"key 'limits' is {checked.json_text(info['limits'])}",
                     "a list of texts such as 'engine_power_kW<=260'")
    if info["weights"] is not None and not all(number(w) for w in info["weights"]):
        checked.fail(path, f"key 'weights' is {checked.json_text(info['weights'])}",
                     "a list of finite numbers or null")
    if info["aspiration"] is not None and not all(number(v) for v in
                                                  info["aspiration"].values()):
        checked.fail(path, f"key 'aspiration' is {checked.json_text(info['aspiration'])}",
                     "an object of finite numbers or null")
    return info


def load_run(run_dir) -> Run:
    """Read a run folder written by ``optimiser run``; :class:`RunError` if it is not one, or
    if its files are not those its ``run.json`` records (:func:`~.manifest.check_run_files`)."""
    from ..study import parse_study
    run_dir = Path(run_dir)
    if not run_dir.is_dir():
        raise RunError(f"{run_dir}: no such run folder; expected a folder written by "
                       "'optimiser run'")
    for name in (names.STUDY, names.RUN_INFO):
        if not (run_dir / name).is_file():
            raise RunError(f"{run_dir}: no {name} in it; expected a finished run folder "
                           "written by 'optimiser run'")
    info = read_run_info(run_dir)
    check_run_files(run_dir, info)  # the files are those the run wrote (run.json records)
    study = parse_study(read_study_text(run_dir), str(run_dir / names.STUDY))
    check_run_info_study(run_dir, info, study)  # read once above, checked against its study
    return Run(study=study, run_dir=run_dir, front=read_front(run_dir, study, info),
               info=info)
