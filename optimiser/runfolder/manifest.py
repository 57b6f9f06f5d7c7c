"""What binds a run folder to its run: a run id, the SHA-256 of its study, and the length,
row count and a hash of every file the run wrote, recorded in the checkpoint's manifest and
in ``run.json``, and checked before anything reads or changes the folder.

Two kinds of record (plain JSON dicts, keyed by file name):

- a small whole file (``study.toml``, ``front.csv``, ``least_violating.csv``): ``bytes``,
  ``sha256`` of the whole content (and ``rows`` for a table);
- an appended file (``evaluations.csv``, ``history.csv``): ``bytes`` and ``rows`` up to where
  the record was taken, and ``tail_sha256``, the SHA-256 of the last :data:`TAIL_BYTES` bytes
  before that length. Hashing the tail costs the same whatever the file's size, and the rows
  there hold the exact numbers of the run's last designs, so the archive of another run (even
  of the same study) does not match.

:func:`check_checkpoint_folder` runs before resume truncates or appends anything;
:func:`check_run_files` runs when a finished run is read (:func:`~.reader.load_run`).
Every refusal is one line naming the file, what was found and what was expected.
"""

from __future__ import annotations

import hashlib
import uuid
from pathlib import Path

from ..errors import RunError, shell_command
from . import names

TAIL_BYTES = 65536
"""Bytes at the end of an appended file that its record hashes (ours: several archive rows
of the last generation, read in well under a millisecond)."""


def new_run_id() -> str:
    """A fresh run id (random UUID, 32 hex digits), made when a run starts."""
    return uuid.uuid4().hex


def text_record(text: str) -> dict:
    """The record of a whole file holding ``text`` (UTF-8)."""
    data = text.encode("utf-8")
    return {"bytes": len(data), "sha256": hashlib.sha256(data).hexdigest()}


def file_record(path: Path, rows=None) -> dict:
    """The record of a whole (small) file as it is now; with ``rows`` for a table."""
    data = Path(path).read_bytes()
    record = {"bytes": len(data), "sha256": hashlib.sha256(data).hexdigest()}
    if rows is not None:
        record["rows"] = int(rows)
    return record


def _tail_sha256(path: Path, length: int) -> str:
    start = max(0, length - TAIL_BYTES)
    with open(path, "rb") as fh:
        fh.seek(start)
        return hashlib.sha256(fh.read(length - start)).hexdigest()


def appended_record(path: Path, length: int, rows: int) -> dict:
    """The record of an appended file up to ``length`` bytes (``rows`` rows below its
    header)."""
    return {"bytes": int(length), "rows": int(rows),
            "tail_sha256": _tail_sha256(path, int(length))}


def checkpoint_files(run_dir: Path, state) -> dict:
    """The records a checkpoint of ``state`` holds: the study, and the archive and history
    up to the lengths the checkpoint resumes from (the files are on disk and synced)."""
    run_dir = Path(run_dir)
    return {names.STUDY: text_record(state.study_text),
            names.ARCHIVE: appended_record(run_dir / names.ARCHIVE, state.archive_bytes,
                                           state.n_evaluations),
            names.HISTORY: appended_record(run_dir / names.HISTORY, state.history_bytes,
                                           state.generation)}


def finished_files(run_dir: Path, state, table_name: str, table_rows: int) -> dict:
    """The records ``run.json`` holds: those of the checkpoint and the table written at the
    end (``front.csv`` or ``least_violating.csv``, ``table_rows`` rows)."""
    records = checkpoint_files(run_dir, state)
    records[table_name] = file_record(Path(run_dir) / table_name, rows=table_rows)
    return records


def restart_command(run_dir: Path) -> str:
    """The command that starts the run of ``run_dir`` again from its study, quoted for a
    shell."""
    return shell_command("optimiser", "run", Path(run_dir) / names.STUDY, "--out", run_dir,
                         "--force")


def _check_study(run_dir: Path, record: dict, recorder: str):
    path = Path(run_dir) / names.STUDY
    if not path.is_file():
        raise RunError(f"{path}: missing; expected the study file the run used "
                       f"(sha256 {record['sha256']}, as {recorder} records)")
    found = file_record(path)
    if found["sha256"] != record["sha256"]:
        raise RunError(f"{path}: not the study this run used (sha256 {found['sha256'][:16]}... "
                       f"differs from the {record['sha256'][:16]}... that {recorder} records: "
                       "the file was edited or replaced); expected the study.toml the run "
                       "wrote (restore it, or run the edited study in a new folder)")


def _check_whole(path: Path, record: dict, recorder: str):
    if not path.is_file():
        raise RunError(f"{path}: missing; expected the file the run wrote ({record['bytes']} "
                       f"bytes, as {recorder} records)")
    found = file_record(path)
    rows = f", {record['rows']} rows" if "rows" in record else ""
    if found["bytes"] != record["bytes"]:
        raise RunError(f"{path}: {found['bytes']} bytes, but {recorder} records "
                       f"{record['bytes']} bytes{rows}; expected the file as the run wrote it "
                       "(truncated or replaced?)")
    if found["sha256"] != record["sha256"]:
        raise RunError(f"{path}: its content differs from what {recorder} records (sha256 "
                       f"{found['sha256'][:16]}... instead of {record['sha256'][:16]}...); "
                       "expected the file as the run wrote it")


def _check_appended(path: Path, record: dict, recorder: str, exact: bool):
    length = record["bytes"]
    size = path.stat().st_size if path.is_file() else None
    if size is None or size < length:
        got = "missing" if size is None else f"{size} bytes"
        raise RunError(f"{path}: shorter than the {recorder} records ({got}; expected at "
                       f"least {length} bytes, {record['rows']} rows); expected the run "
                       "folder as the run left it")
    if exact and size != length:
        raise RunError(f"{path}: {size} bytes, but {recorder} records {length} bytes "
                       f"({record['rows']} rows); expected the file as the run wrote it")
    if _tail_sha256(path, length) != record["tail_sha256"]:
        raise RunError(f"{path}: its rows differ from those the {recorder} records (the "
                       f"hash of its last bytes up to {length} does not match); expected "
                       "the file of this run (a checkpoint or run.json of another run "
                       "copied in?)")


def check_checkpoint_folder(run_dir: Path, record: dict, checkpoint_path: Path):
    """Refuse a checkpoint that does not belong to ``run_dir``: ``record`` is its manifest's
    binding (``run_id`` and ``files``). Checked before resume truncates or appends: the
    run id against ``run.json`` (when there is one), the folder's ``study.toml`` against the
    recorded hash, and ``evaluations.csv``/``history.csv`` at least as long as recorded,
    with the recorded rows at that length."""
    from .runinfo import is_finished, read_run_info
    run_dir = Path(run_dir)
    recorder = "checkpoint"
    if is_finished(run_dir):
        try:
            info_id = read_run_info(run_dir).get("run_id")
        except (OSError, ValueError, AttributeError):
            info_id = None
        if info_id != record["run_id"]:
            raise RunError(f"{checkpoint_path}: belongs to run {record['run_id']}, but "
                           f"{run_dir / names.RUN_INFO} is of run {info_id}; expected the "
                           "checkpoint this run wrote (one of another run copied in?)")
    files = record["files"]
    _check_study(run_dir, files[names.STUDY], recorder)
    for name in (names.ARCHIVE, names.HISTORY):
        _check_appended(run_dir / name, files[name], recorder, exact=False)


def check_run_files(run_dir: Path, info: dict):
    """Refuse a finished run folder whose files are not those ``run.json`` records (an
    edited study, a truncated or replaced table); a ``run.json`` with no records is of an
    older version."""
    run_dir = Path(run_dir)
    files = info.get("files") if isinstance(info, dict) else None
    if not isinstance(files, dict) or names.STUDY not in files or not info.get("run_id"):
        raise RunError(f"{run_dir / names.RUN_INFO}: records no run id and file hashes (a "
                       "run folder of an older version of optimiser); expected a run folder "
                       f"of this version: run it again with: {restart_command(run_dir)}")
    recorder = names.RUN_INFO
    try:
        _check_study(run_dir, files[names.STUDY], recorder)
        for name, record in files.items():
            if name == names.STUDY:
                continue
            if name in (names.ARCHIVE, names.HISTORY):
                _check_appended(run_dir / name, record, recorder, exact=True)
            elif name in (names.FRONT, names.LEAST_VIOLATING):
                _check_whole(run_dir / name, record, recorder)
    except (KeyError, TypeError) as exc:
        raise RunError(f"{run_dir / names.RUN_INFO}: its file records are damaged "
                       f"({type(exc).__name__}: {exc}); expected run.json as the run wrote "
                       "it") from None
