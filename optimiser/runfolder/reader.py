"""Reading a finished run folder: :func:`load_run`, the one entry point that the decision
support, campaigns, the report and the command line use."""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

from ..errors import RunError
from . import names
from .runinfo import read_run_info

TEXT_COLUMNS = ("limiting_constraint", "most_violated", "outside_bounds", "aerodrome_code_letter")
"""Text columns of front.csv that may be empty: read as "" (never NaN)."""


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
    return (Path(run_dir) / names.STUDY).read_text("utf-8")


def read_front(run_dir):
    """A run's ``front.csv`` as a DataFrame (empty if the run found nothing feasible); the
    text columns that may be empty are read as ""."""
    import pandas as pd
    path = Path(run_dir) / names.FRONT
    if not path.is_file():
        return pd.DataFrame()
    front = pd.read_csv(path, keep_default_na=False, na_values=[""])
    for c in TEXT_COLUMNS:
        if c in front:
            front[c] = ["" if pd.isna(v) else str(v) for v in front[c]]
    return front


def load_run(run_dir) -> Run:
    """Read a run folder written by ``optimiser run``; :class:`RunError` if it is not one."""
    from ..study import parse_study
    run_dir = Path(run_dir)
    if not run_dir.is_dir():
        raise RunError(f"{run_dir}: no such run folder; expected a folder written by "
                       "'optimiser run'")
    for name in (names.STUDY, names.RUN_INFO):
        if not (run_dir / name).is_file():
            raise RunError(f"{run_dir}: no {name} in it; expected a finished run folder "
                           "written by 'optimiser run'")
    study = parse_study(read_study_text(run_dir), str(run_dir / names.STUDY))
    return Run(study=study, run_dir=run_dir, front=read_front(run_dir),
               info=read_run_info(run_dir))
