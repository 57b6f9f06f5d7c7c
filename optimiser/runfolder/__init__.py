"""The run folder: its file names, atomic writes, the archive writer and reader, the
checkpoint, run.json and :func:`load_run`. Every file of a run folder is read and written
here; the search loop (:mod:`optimiser.runs`, :mod:`optimiser.loop`) only calls it.

Modules: :mod:`~.names` (file names), :mod:`~.files` (atomic writes, appending, fsync, CSV
bytes), :mod:`~.place` (where a run goes, free space, writability, ``--force``),
:mod:`~.lock` (one writer at a time: the folder's lock file),
:mod:`~.archive` (``evaluations.csv`` and ``history.csv``), :mod:`~.checkpoint` (no code in
it: arrays and JSON), :mod:`~.manifest` (the run id and file records binding a folder to its
run), :mod:`~.runinfo` (``run.json``), :mod:`~.reader` (:func:`load_run`).
:mod:`~.checked` (the checked readers' primitives: every damaged file is one
:class:`~optimiser.errors.RunError` line naming it).

Importing this package pulls in neither pandas nor pyarrow (they are imported where used).
"""

from __future__ import annotations

from . import names
from .archive import archive_columns, archive_rows, read_archive, read_history
from .checkpoint import load_checkpoint, save_checkpoint
from .files import csv_bytes, utc_now, write_atomic
from .place import default_run_dir, prepare_run_dir, timestamped_dir
from .reader import Run, load_run, read_front
from .runinfo import json_bytes, read_run_info, versions, write_run_info

__all__ = ["Run", "archive_columns", "archive_rows", "csv_bytes", "default_run_dir",
           "json_bytes", "load_checkpoint", "load_run", "names", "prepare_run_dir",
           "read_archive", "read_front", "read_history", "read_run_info", "save_checkpoint",
           "timestamped_dir", "utc_now", "versions", "write_atomic", "write_run_info"]
