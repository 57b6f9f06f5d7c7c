"""Checkpoints: the whole run state (:class:`~optimiser.runstate.RunState`) in
``checkpoint.pkl``, written atomically after the archive and history are on disk.

The format is a pickle of the state (:data:`~optimiser.runstate.CHECKPOINT_FORMAT`); a
different format would replace :func:`save_checkpoint` and :func:`load_checkpoint` only.
"""

from __future__ import annotations

import math
import os
import pickle
import time
from pathlib import Path

from ..errors import RunError
from . import archive, files, names

TEST_PAUSE_ENV = "OPTIMISER_TEST_PAUSE_IN_CHECKPOINT"
"""Test hook, not a user option: when this environment variable holds a number of seconds,
every checkpoint write sleeps that long after the temporary file is complete and before it
replaces ``checkpoint.pkl``, so that tests/test_kill_resume.py can kill the process inside
the write deterministically."""


def _test_pause():
    text = os.environ.get(TEST_PAUSE_ENV)
    if not text:
        return None
    try:
        seconds = float(text)
    except ValueError:
        return None
    return (lambda: time.sleep(seconds)) if math.isfinite(seconds) and seconds > 0 else None


def checkpoint_bytes(state) -> bytes:
    """The checkpoint file's content for ``state``."""
    return pickle.dumps(state, protocol=pickle.HIGHEST_PROTOCOL)


def has_checkpoint(run_dir) -> bool:
    return (Path(run_dir) / names.CHECKPOINT).exists()


def save_checkpoint(run_dir: Path, state):
    """fsync the archive and history, then replace the checkpoint atomically."""
    archive.sync_appended(run_dir)
    files.write_atomic(run_dir / names.CHECKPOINT, checkpoint_bytes(state),
                       before_replace=_test_pause())


def load_checkpoint(run_dir: Path):
    """The run state saved in ``run_dir``; :class:`RunError` (one line) if there is none or
    it is not a checkpoint of this version."""
    from ..runstate import CHECKPOINT_FORMAT, RunState
    path = Path(run_dir) / names.CHECKPOINT
    if not Path(run_dir).is_dir():
        raise RunError(f"{run_dir}: no such run folder; expected a folder written by "
                       "'optimiser run'")
    if not path.exists():
        raise RunError(f"{run_dir}: no {names.CHECKPOINT} in it; expected a folder written by "
                       "'optimiser run'")
    try:
        state = pickle.loads(path.read_bytes())
    except Exception as exc:  # a damaged or foreign file
        raise RunError(f"{path}: cannot read the checkpoint ({type(exc).__name__}); expected "
                       "a checkpoint written by this version of optimiser") from None
    if not isinstance(state, RunState) or state.format != CHECKPOINT_FORMAT:
        raise RunError(f"{path}: not a checkpoint of this version of optimiser")
    return state
