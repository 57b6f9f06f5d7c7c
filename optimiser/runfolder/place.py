"""Where a run folder goes and whether it can take the run: default and timestamped paths,
free space and writability probes, creating, locking (:mod:`.lock`) and (with ``--force``)
clearing the folder.

Every refusal is a :class:`~optimiser.errors.RunError` with one line, raised before anything
is created or replaced (only the folder itself and its lock file, both removed again).
"""

from __future__ import annotations

import os
import shutil
from datetime import datetime, timezone
from pathlib import Path

from ..errors import RunError
from ..evaluation import memory_text as _size_text
from . import lock, names
from .files import make_folder, refuse_unless_regular, temporary_glob


def default_run_dir(study, root="results") -> Path:
    """``results/<study-name>-<UTC timestamp>`` (with ``-2``, ``-3`` ... if taken)."""
    return timestamped_dir(study.name, root)


def timestamped_dir(name: str, root="results") -> Path:
    """A new folder path ``<root>/<name>-<UTC timestamp>`` (``-2``, ``-3`` ... if taken)."""
    stamp = datetime.now(timezone.utc).strftime("%Y%m%dT%H%M%SZ")
    base = Path(root) / f"{name}-{stamp}"
    candidate, k = base, 2
    while candidate.exists():
        candidate = Path(f"{base}-{k}")
        k += 1
    return candidate


def _missing_parents(path: Path) -> list:
    """The folders from ``path`` up that do not exist yet, innermost first."""
    missing = []
    p = Path(os.path.abspath(path))
    while not p.exists() and p != p.parent:
        missing.append(p)
        p = p.parent
    return missing


def _existing_ancestor(path: Path) -> Path:
    missing = _missing_parents(path)
    return missing[-1].parent if missing else Path(os.path.abspath(path))


def check_free_space(run_dir: Path, need_bytes, need_text="", label="--out "):
    """Refuse a run whose estimated output does not fit in the free space (before writing)."""
    if not need_bytes:
        return
    where = _existing_ancestor(run_dir)
    if not where.is_dir():
        raise RunError(f"{label}{run_dir}: {where} is a file, not a folder; expected a path "
                       "inside a writable folder")
    try:
        free = shutil.disk_usage(where).free
    except OSError as exc:
        raise RunError(f"{label}{run_dir}: cannot read the free space of {where} "
                       f"({exc.strerror}); expected a writable folder") from None
    if free < need_bytes:
        raise RunError(f"{label}{run_dir}: only {_size_text(free)} free on {where}; the run "
                       f"needs an estimated {_size_text(need_bytes)}{need_text}; expected at "
                       "least that much free space (free some, or lower --gens, --pop or "
                       "--evals)")


def probe_writable(run_dir: Path, label="--out "):
    """Create, fsync and remove a small file in ``run_dir``: a read-only or full folder fails
    here, before the search starts."""
    probe = run_dir / f".write-probe-{os.getpid()}"
    try:
        with open(probe, "wb") as fh:
            fh.write(b"0" * 4096)
            fh.flush()
            os.fsync(fh.fileno())
    except OSError as exc:
        raise RunError(f"{label}{run_dir}: cannot write in the folder ({exc.strerror}); "
                       "expected a writable folder") from None
    finally:
        try:
            probe.unlink()
        except OSError:
            pass


def _create(run_dir: Path, label: str) -> list:
    """Create ``run_dir``; the folders made here, innermost first."""
    created = [] if run_dir.is_dir() else _missing_parents(run_dir)
    try:
        run_dir.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise RunError(f"{label}{run_dir}: cannot create the folder ({exc.strerror}); "
                       "expected a path inside a writable folder") from None
    return created


def _remove_created(created: list):
    for p in created:  # innermost first: remove only the empty folders made here
        try:
            p.rmdir()
        except OSError:
            break


def lock_run_dir(run_dir: Path, command: str, label="") -> lock.RunLock:
    """Take the lock of an existing run folder for ``command`` ("run", "resume"): one line
    if another process holds it, or if the folder cannot take the lock file."""
    try:
        return lock.acquire(run_dir, command)
    except OSError as exc:
        raise RunError(f"{label}{run_dir}: cannot write in the folder ({exc.strerror}); "
                       "expected a writable folder") from None


def check_run_files(run_dir: Path):
    """Refuse (one line) a run folder where a run file is a symbolic link or not a regular
    file, or ``plots/`` is a link or not a folder: nothing is written through a link."""
    for name in names.RUN_FILES:
        refuse_unless_regular(Path(run_dir) / name)
    plots = Path(run_dir) / names.PLOTS_DIR
    if os.path.lexists(plots):
        make_folder(plots)  # exists: only checked


def _is_empty(run_dir: Path) -> bool:
    """No entry but a lock file (a lock is not a run file: a stale one is taken over)."""
    return all(p.name == names.LOCK for p in run_dir.iterdir())


def _clear_run_files(run_dir: Path):
    """Remove this tool's run files and plots from ``run_dir`` (``--force``)."""
    check_run_files(run_dir)
    for name in names.RUN_FILES:
        (run_dir / name).unlink(missing_ok=True)
    plots = run_dir / names.PLOTS_DIR
    if plots.is_dir():
        for p in plots.iterdir():
            if p.suffix in names.PLOT_SUFFIXES:
                p.unlink()
    remove_stale_temporaries(run_dir)


def _refuse_not_empty(run_dir: Path, label: str):
    raise RunError(f"{label}{run_dir}: folder exists and is not empty; expected a new "
                   "or empty folder (use --force to replace the run files in it)")


def claim_run_dir(out, study, force: bool, need_bytes=None, need_text="",
                  command="run") -> tuple[Path, lock.RunLock]:
    """The run folder, created empty and locked for ``command``: (folder, its
    :class:`~.lock.RunLock`, which the caller releases). A non-empty folder is refused unless
    ``force``; with ``force`` only this tool's run files in it are replaced (refused if one
    is a link or not a regular file). Before anything is created or replaced, the free
    space must hold ``need_bytes`` (the run's estimated output); the lock is taken before
    anything is written in the folder, then the folder must take a probe file. On a refusal
    the lock is released and the folders made here are removed."""
    run_dir = Path(out) if out is not None else default_run_dir(study)
    label = "--out " if out is not None else "run folder "
    if run_dir.exists() and not run_dir.is_dir():
        raise RunError(f"{label}{run_dir}: is a file; expected a folder for the run")
    if run_dir.is_dir() and not _is_empty(run_dir) and not force:
        _refuse_not_empty(run_dir, label)
    check_free_space(run_dir, need_bytes, need_text, label)
    created = _create(run_dir, label)
    try:
        held = lock_run_dir(run_dir, command, label)
    except RunError:
        _remove_created(created)
        raise
    try:
        if not force and not _is_empty(run_dir):  # another run filled it meanwhile
            _refuse_not_empty(run_dir, label)
        probe_writable(run_dir, label)
        if force:
            _clear_run_files(run_dir)
    except BaseException:
        held.release()
        _remove_created(created)
        raise
    return run_dir, held


def prepare_run_dir(out, study, force: bool, need_bytes=None, need_text="") -> Path:
    """:func:`claim_run_dir` without keeping the lock: the folder, created empty (or cleared
    with ``force``), for a caller that writes it alone."""
    run_dir, held = claim_run_dir(out, study, force, need_bytes, need_text)
    held.release()
    return run_dir


def remove_stale_temporaries(run_dir: Path):
    """Temporary files of an atomic write that a killed process left behind."""
    for name in names.RUN_FILES:
        for p in Path(run_dir).glob(temporary_glob(name)):
            p.unlink(missing_ok=True)
