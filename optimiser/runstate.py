"""The state of a run: its budget, the designs it keeps, everything a checkpoint holds, and
what a run returns. Plain dataclasses (numpy only), shared by the loop and the run folder."""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

CHECKPOINT_FORMAT = 3
"""Version of the checkpoint format (:mod:`optimiser.runfolder.checkpoint`); 3: the code-free
``checkpoint.npz`` (2 and before: a pickle, refused unread)."""


@dataclass(frozen=True)
class RunResult:
    """What a run produced. ``front`` is empty when nothing feasible was found (then
    ``least_violating`` holds the designs closest to feasible)."""

    front: object
    history: object
    run_dir: Path
    message: str
    n_evaluations: int
    termination: str
    least_violating: object = None
    best_margin: dict = field(default_factory=dict)
    cluster: dict | None = None
    """Set when the run's sizing went to Dask workers: ``workers``, ``rows_on_workers``,
    ``rows_here``."""
    chance: dict | None = None  # reliability and samples of a chance-constrained run

    def __repr__(self):
        return (f"RunResult({len(self.front)} front designs, {self.n_evaluations} evaluations, "
                f"termination={self.termination!r}, run_dir={str(self.run_dir)!r})")


STALL_TOLERANCE = 1e-4
"""Default relative growth of the front's hypervolume that counts as progress for a stall
stop (common practice for a convergence test: well above rounding, well below a step that a
user would notice on the front)."""


@dataclass
class Budget:
    generations: int
    population: int
    option_population: int
    evaluations: int | None = None
    time_s: float | None = None
    stall_generations: int | None = None
    checkpoint_every: int | None = None  # generations; None: every CHECKPOINT_INTERVAL_S
    # relative growth of the front's hypervolume that counts as progress for
    # stall_generations (a front that only creeps, by rounding-level additions, has stalled)
    stall_tolerance: float = STALL_TOLERANCE


@dataclass
class DesignSet:
    """Designs kept by the loop as plain arrays: the inputs (``designs``: wing loading,
    loading, aspect ratio per row), flap index, generation, objectives ``F`` and a ``key``
    (the total violation of the least-violating set; unused for the front). Every other
    column is sized again from the inputs when the run's tables are written (the model is
    deterministic per design, so the numbers are those of the loop)."""

    designs: np.ndarray
    flap: np.ndarray
    generation: np.ndarray
    F: np.ndarray
    key: np.ndarray

    def __len__(self):
        return len(self.flap)

    def take(self, index) -> "DesignSet":
        return DesignSet(self.designs[index], self.flap[index], self.generation[index],
                         self.F[index], self.key[index])

    def joined(self, other: "DesignSet | None") -> "DesignSet":
        """This set followed by ``other`` (rows in that order)."""
        if other is None:
            return self
        return DesignSet(*(np.concatenate([a, b]) for a, b in zip(
            (self.designs, self.flap, self.generation, self.F, self.key),
            (other.designs, other.flap, other.generation, other.F, other.key))))


@dataclass
class RunState:
    """Everything a run needs to continue; saved as numbers and JSON by
    :mod:`optimiser.runfolder.checkpoint` (``run_id``: made at the start, binds the run
    folder's files to the run, see :mod:`optimiser.runfolder.manifest`)."""

    study_text: str
    study_path: str
    seed: int
    budget: Budget
    algos: list
    scales: dict
    started_utc: str
    generation: int = 0
    n_evaluations: int = 0
    n_feasible: int = 0
    front: object = None             # DesignSet: the merged feasible non-dominated designs
    least: object = None             # DesignSet: the least-violating designs so far
    best_margin: dict = field(default_factory=dict)
    best_hv: float = 0.0
    stall: int = 0
    elapsed_s: float = 0.0
    archive_bytes: int = 0
    history_bytes: int = 0
    termination: str | None = None
    run_id: str = ""
    format: int = CHECKPOINT_FORMAT
    chance: object = None            # optimiser.chance.ChanceSetting of a chance-constrained run
