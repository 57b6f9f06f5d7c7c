"""Runs: the search loop, its run folder, checkpoints and resume.

A run folder holds ``study.toml`` (the study text), ``run.json`` (versions, seed, budget,
termination, counts, the hypervolume reference, the caution), ``front.csv`` (the feasible
non-dominated designs over all flap options, every evaluate column), ``evaluations.csv``
(every evaluated design: generation, inputs, flap, objectives, a summary, margins and
feasibility, appended in batches before every checkpoint and every
:data:`ARCHIVE_BUFFER_ROWS` rows; see :func:`archive_columns`),
``history.csv`` (per generation: evaluations, feasible count, hypervolume, best of each
objective), ``checkpoint.pkl`` (the whole run state) and ``plots/``. When no design is
feasible, ``least_violating.csv`` replaces ``front.csv``.

Resume is exact: the checkpoint holds every per-option algorithm (with its random generator)
and the byte lengths of ``evaluations.csv`` and ``history.csv`` when it was taken; resume
truncates both files to those lengths, so a resumed run ends with the same files as an
uninterrupted one.

Faults: before anything is created, the free space must hold an estimate of the run's output
(:func:`estimate_output_bytes`) and the folder must take a probe file; a write that fails
during the run (a full disk) ends it with a :class:`RunError` and the last checkpoint kept.
``run.json`` is written last: a run killed after its final checkpoint but before ``run.json``
is finished by :func:`resume`. Stale temporary files of killed atomic writes are removed on
resume and on ``--force``. ``OPTIMISER_TEST_PAUSE_IN_CHECKPOINT`` is a test hook (see
:data:`TEST_PAUSE_ENV`), not a user option.
"""

from __future__ import annotations

import errno
import json
import math
import os
import pickle
import platform
import re
import shutil
import signal
import sys
import threading
import time
from dataclasses import dataclass, field
from datetime import datetime, timezone
from pathlib import Path

import numpy as np

from .columns import ARCHIVE_SUMMARY_COLUMNS, ENGINE_SIZE_COLUMNS
from .evaluation import CAUTION

CHECKPOINT = "checkpoint.pkl"
RUN_FILES = ("study.toml", "run.json", "front.csv", "evaluations.csv", "history.csv",
             "least_violating.csv", CHECKPOINT)
LEAST_VIOLATING_ROWS = 20
CHECKPOINT_FORMAT = 2
CHECKPOINT_INTERVAL_S = 30.0
"""Seconds of running between checkpoints when no generation count is given (common
practice for an autosave: a hard kill loses at most about this much work, and a fast run
spends next to nothing on checkpoints)."""


class RunError(Exception):
    """A run that cannot start or resume for a reason the user can fix (one line)."""


class RunInterrupted(Exception):
    """The run was stopped (Ctrl-C, SIGTERM) after saving a checkpoint it can resume from."""

    def __init__(self, run_dir):
        self.run_dir = Path(run_dir)
        super().__init__(f"interrupted; the run is saved in {self.run_dir}; resume it with: "
                         f"optimiser resume {self.run_dir}")


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

    def __repr__(self):
        return (f"RunResult({len(self.front)} front designs, {self.n_evaluations} evaluations, "
                f"termination={self.termination!r}, run_dir={str(self.run_dir)!r})")


@dataclass
class Budget:
    generations: int
    population: int
    option_population: int
    evaluations: int | None = None
    time_s: float | None = None
    stall_generations: int | None = None
    checkpoint_every: int | None = None  # generations; None: every CHECKPOINT_INTERVAL_S


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
    """Everything a run needs to continue; pickled whole as the checkpoint."""

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
    format: int = CHECKPOINT_FORMAT


# ----------------------------------------------------------------------------- files

def _fsync_dir(folder: Path):
    try:
        fd = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:
        pass
    finally:
        os.close(fd)


def write_atomic(path: Path, data: bytes, before_replace=None):
    """Write ``data`` to ``path`` atomically: temp file in the same folder, fsync, replace.
    ``before_replace()`` (if given) is called between the fsync and the replace."""
    path = Path(path)
    tmp = path.with_name(f".{path.name}.tmp-{os.getpid()}")
    try:
        with open(tmp, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        if before_replace is not None:
            before_replace()
        os.replace(tmp, path)
    except OSError as exc:
        raise _named(exc, path) from None
    finally:
        if tmp.exists():
            tmp.unlink()
    _fsync_dir(path.parent)


def _named(exc: OSError, path) -> OSError:
    """The error with the file it concerns (a failed write() names none)."""
    return exc if exc.filename else OSError(exc.errno, exc.strerror, str(path))


def _csv_bytes(frame) -> bytes:
    """``frame`` as CSV with a header (UTF-8), by Apache Arrow's writer: every float in its
    shortest exact form (it reads back to the same float), about six times faster than
    pandas' writer on a front of some hundred rows and ~90 columns. Text is not quoted (our
    names hold no commas); a cell that would need quotes takes pandas' writer instead."""
    import io

    import pyarrow as pa
    import pyarrow.csv as pa_csv
    names = [str(c) for c in frame.columns]
    if any(("," in c) or ('"' in c) or ("\n" in c) for c in names):
        return frame.to_csv(index=False).encode("utf-8")
    buf = io.BytesIO()
    buf.write((",".join(names) + "\n").encode("utf-8"))
    try:
        pa_csv.write_csv(pa.Table.from_pandas(frame, preserve_index=False), buf,
                         pa_csv.WriteOptions(include_header=False, quoting_style="none"))
    except (pa.ArrowInvalid, pa.ArrowTypeError):
        return frame.to_csv(index=False).encode("utf-8")
    return buf.getvalue()


def archive_columns(study) -> list[str]:
    """Columns of ``evaluations.csv`` for a study.

    generation, the inputs, flap, the objectives, a summary of the sized design, one margin
    per active constraint, feasible and the limiting constraint, every number exact (it reads
    back to the same float). Every other column of the evaluate table follows from the
    inputs: ``optimiser evaluate STUDY --designs evaluations.csv`` sizes them again (the model
    is deterministic)."""
    from .evaluation import design_columns
    from .sizing import active_constraints
    inputs = list(design_columns(study)[:3])
    objectives = [c for c in dict.fromkeys(study.objective_columns()) if c not in inputs]
    other = set(ENGINE_SIZE_COLUMNS.values()) - {study.engine_size_column}  # not this family's
    summary = [c for c in ARCHIVE_SUMMARY_COLUMNS if c not in objectives and c not in other]
    margins = [f"margin_{c}" for c in active_constraints(study.spec)]
    return ["generation", *inputs, "flap", *objectives, *summary, *margins, "feasible",
            "limiting_constraint"]


def archive_rows(study, generation, ws, load, ar, flap, sized) -> bytes:
    """Rows of ``evaluations.csv`` (no header, UTF-8) for sized designs (``sized``: the dict
    of :func:`~optimiser.sizing.size_designs`, or the columns of the archive it gives);
    ``generation`` is one number or one per design.

    Written by Apache Arrow's CSV writer: floats in their shortest exact form (about three
    times faster than Python's repr for the same text); flap and constraint names are plain
    identifiers, never quoted."""
    import io

    import pyarrow as pa
    import pyarrow.csv as pa_csv
    from .sizing import active_constraints
    cols = archive_columns(study)
    names = np.asarray(study.spec.high_lift_names, dtype=object)
    limiting = np.asarray(active_constraints(study.spec), dtype=object)
    n = len(ws)
    source = {
        "generation": np.broadcast_to(np.asarray(generation, dtype=np.int64), (n,)),
        cols[1]: np.asarray(ws, float), cols[2]: np.asarray(load, float),
        cols[3]: np.asarray(ar, float),
        "flap": pa.array(names[np.asarray(flap, int)].tolist(), type=pa.string()),
        "feasible": np.asarray(sized["feasible"], bool),
        "limiting_constraint": pa.array(limiting[np.asarray(sized["limiting_index"], int)]
                                        .tolist(), type=pa.string()),
    }
    table = pa.table({c: source[c] if c in source else np.asarray(sized[c], float)
                      for c in cols})
    buf = io.BytesIO()
    pa_csv.write_csv(table, buf, pa_csv.WriteOptions(include_header=False,
                                                     quoting_style="none"))
    return buf.getvalue()


_APPENDING = threading.local()
"""Per thread (runs of a campaign may share a process): ``files``, the files the run loop
appends to, kept open while it runs (see :func:`_close_appended`)."""


def _open_files() -> dict:
    files = getattr(_APPENDING, "files", None)
    if files is None:
        files = _APPENDING.files = {}
    return files


def _append(path: Path, text) -> int:
    """Append ``text`` (str, written as UTF-8, or bytes), flush it to the operating system
    and return the file's length. The file stays open until :func:`_close_appended`."""
    data = text.encode("utf-8") if isinstance(text, str) else text
    key = os.path.abspath(path)
    files = _open_files()
    try:
        fh = files.get(key)
        if fh is None:
            fh = files[key] = open(path, "ab")
        fh.write(data)
        fh.flush()
        return fh.tell()
    except OSError as exc:
        _close_appended()
        raise _named(exc, path) from None


def _close_appended():
    """Close the files :func:`_append` keeps open (the end of a loop, or an error)."""
    files = _open_files()
    while files:
        _, fh = files.popitem()
        try:
            fh.close()
        except OSError:
            pass


def _sync(path: Path):
    with open(path, "rb+") as fh:
        os.fsync(fh.fileno())


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


def save_checkpoint(run_dir: Path, state: RunState):
    for name in ("evaluations.csv", "history.csv"):
        _sync(run_dir / name)
    write_atomic(run_dir / CHECKPOINT, pickle.dumps(state, protocol=pickle.HIGHEST_PROTOCOL),
                 before_replace=_test_pause())


def load_checkpoint(run_dir: Path) -> RunState:
    path = Path(run_dir) / CHECKPOINT
    if not Path(run_dir).is_dir():
        raise RunError(f"{run_dir}: no such run folder; expected a folder written by "
                       "'optimiser run'")
    if not path.exists():
        raise RunError(f"{run_dir}: no {CHECKPOINT} in it; expected a folder written by "
                       "'optimiser run'")
    try:
        state = pickle.loads(path.read_bytes())
    except Exception as exc:  # a damaged or foreign file
        raise RunError(f"{path}: cannot read the checkpoint ({type(exc).__name__}); expected "
                       "a checkpoint written by this version of optimiser") from None
    if not isinstance(state, RunState) or state.format != CHECKPOINT_FORMAT:
        raise RunError(f"{path}: not a checkpoint of this version of optimiser")
    return state


def utc_now() -> str:
    return datetime.now(timezone.utc).strftime("%Y-%m-%dT%H:%M:%SZ")


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


def _size_text(n) -> str:
    n = float(n)
    for unit in ("bytes", "kB", "MB", "GB", "TB"):
        if n < 1000 or unit == "TB":
            return f"{n:.0f} {unit}" if unit == "bytes" else f"{n:.1f} {unit}"
        n /= 1000


def _existing_ancestor(path: Path) -> Path:
    p = Path(os.path.abspath(path))
    while not p.exists() and p != p.parent:
        p = p.parent
    return p


def _check_free_space(run_dir: Path, need_bytes, need_text="", label="--out "):
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


def _probe_writable(run_dir: Path, label="--out "):
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


def prepare_run_dir(out, study, force: bool, need_bytes=None, need_text="") -> Path:
    """The run folder, created empty. A non-empty folder is refused unless ``force``; with
    ``force`` only this tool's run files in it are replaced. Before anything is created or
    replaced, the free space must hold ``need_bytes`` (the run's estimated output) and the
    folder must take a probe file."""
    run_dir = Path(out) if out is not None else default_run_dir(study)
    label = "--out " if out is not None else "run folder "
    if run_dir.exists() and not run_dir.is_dir():
        raise RunError(f"{label}{run_dir}: is a file; expected a folder for the run")
    if run_dir.is_dir() and any(run_dir.iterdir()):
        if not force:
            raise RunError(f"{label}{run_dir}: folder exists and is not empty; expected a new "
                           "or empty folder (use --force to replace the run files in it)")
    _check_free_space(run_dir, need_bytes, need_text, label)
    created = []
    if not run_dir.is_dir():
        p = Path(os.path.abspath(run_dir))
        while not p.exists() and p != p.parent:
            created.append(p)
            p = p.parent
    try:
        run_dir.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise RunError(f"{label}{run_dir}: cannot create the folder ({exc.strerror}); "
                       "expected a path inside a writable folder") from None
    try:
        _probe_writable(run_dir, label)
    except RunError:
        for p in created:  # innermost first: remove only the empty folders made here
            try:
                p.rmdir()
            except OSError:
                break
        raise
    if force:
        for name in RUN_FILES:
            (run_dir / name).unlink(missing_ok=True)
        plots = run_dir / "plots"
        if plots.is_dir():
            for p in plots.iterdir():
                if p.suffix in (".png", ".svg"):
                    p.unlink()
        _remove_stale_temporaries(run_dir)
    return run_dir


def _remove_stale_temporaries(run_dir: Path):
    """Temporary files of an atomic write that a killed process left behind."""
    for name in RUN_FILES:
        for p in Path(run_dir).glob(f".{name}.tmp-*"):
            p.unlink(missing_ok=True)


def versions() -> dict:
    """Versions of Python and the packages a run depends on (a package already imported
    tells its own ``__version__``; the others are looked up in the installed metadata)."""
    from importlib import metadata
    out = {"python": platform.python_version()}
    for pkg in ("optimiser", "pymoo", "numpy", "pandas", "scipy", "matplotlib", "pint",
                "pyarrow"):
        own = getattr(sys.modules.get(pkg), "__version__", None)
        if isinstance(own, str) and pkg != "optimiser":
            out[pkg] = own
            continue
        try:
            out[pkg] = metadata.version(pkg)
        except metadata.PackageNotFoundError:
            out[pkg] = None
    return out


# ----------------------------------------------------------------------------- the loop

def _objective_cols(study):
    return list(study.objective_columns())


ARCHIVE_BUFFER_ROWS = 20_000
"""Rows of evaluations.csv held in memory at most before they are written (ours: a few MB);
they are also written before every checkpoint, so a checkpoint always finds them on disk."""


class _Pending:
    """The archive rows and history lines of the generations since the last write: one
    Arrow call formats many generations at once (about 40 % less time per row than one call
    per generation, measured)."""

    def __init__(self, study):
        self.columns = archive_columns(study)
        self.parts, self.history, self.rows = [], [], 0

    def add(self, generation, ws, load, ar, flap, sized, history_text):
        keep = {c: np.asarray(sized[c]) for c in self.columns if c in sized}
        keep["feasible"] = np.asarray(sized["feasible"], bool)
        keep["limiting_index"] = np.asarray(sized["limiting_index"])
        self.parts.append((np.full(len(ws), generation), ws, load, ar, flap, keep))
        self.history.append(history_text)
        self.rows += len(ws)

    def write(self, study, state, run_dir):
        """Append what is pending (archive first, then history) and record the lengths."""
        if not self.parts:
            return
        gen, ws, load, ar, flap = (np.concatenate([p[k] for p in self.parts]) for k in range(5))
        sized = {c: np.concatenate([p[5][c] for p in self.parts]) for c in self.parts[0][5]}
        history = "".join(self.history)
        # emptied first: a failed write ends the run, and resume starts from the checkpoint
        self.parts, self.history, self.rows = [], [], 0
        state.archive_bytes = _append(run_dir / "evaluations.csv",
                                      archive_rows(study, gen, ws, load, ar, flap, sized))
        state.history_bytes = _append(run_dir / "history.csv", history)


def _merge_front(front, new: DesignSet) -> DesignSet:
    """The feasible non-dominated designs of ``front`` followed by ``new``."""
    from .search import merge_nondominated, nondominated_mask
    if front is None or len(front) == 0:
        return new.take(nondominated_mask(new.F))
    keep_old, keep_new = merge_nondominated(front.F, new.F)
    return front.take(keep_old).joined(new.take(keep_new))


def _update_least(study, state, gen_set: DesignSet, G):
    """Keep the least-violating designs (until a front exists) and the best margin reached
    per constraint."""
    from .sizing import active_constraints
    # the least-violating table is only written when nothing feasible is found: once a
    # feasible front exists it is no longer kept up to date (it is never read again)
    if state.front is None or len(state.front) == 0:
        cand = gen_set if state.least is None else state.least.joined(gen_set)
        order = np.argsort(cand.key, kind="stable")[:LEAST_VIOLATING_ROWS]
        state.least = cand.take(order)
    best = (-G).max(axis=0)
    for c, m in zip(active_constraints(study.spec), best.tolist()):
        state.best_margin[c] = max(state.best_margin.get(c, -math.inf), m)


def _history_row(study, state, n_feasible_gen, hv):
    row = {"generation": state.generation, "evaluations": state.n_evaluations,
           "feasible_in_generation": n_feasible_gen, "feasible_total": state.n_feasible,
           "front_size": 0 if state.front is None else len(state.front),
           "hypervolume": hv}
    have = state.front is not None and len(state.front)
    best = state.front.F.min(axis=0).tolist() if have else None
    for j, c in enumerate(_objective_cols(study)):
        row[f"best_{c}"] = float(best[j]) if have else float("nan")
    row["elapsed_s"] = round(state.elapsed_s, 3)
    return row


def _history_text(row) -> str:
    """One history.csv row, as pandas writes it (floats by repr, NaN empty)."""
    cells = []
    for v in row.values():
        if isinstance(v, float):
            cells.append("" if v != v else repr(v))
        else:
            cells.append(str(v))
    return ",".join(cells) + "\n"


def _one_generation(study, state, pending):
    """Ask, evaluate and tell every option once; add the archive rows and the history line
    to ``pending`` (a :class:`_Pending`; the caller writes it)."""
    from .search import design_arrays, hypervolume, objectives_and_constraints, total_violation
    from .sizing import size_designs
    # ask every option, then size the whole generation with ONE call of the vectorised model
    pops = [algo.ask() for algo in state.algos]
    sizes = [len(p) for p in pops]
    X = np.vstack([p.get("X") for p in pops])
    flap = np.repeat([algo.problem.flap_index for algo in state.algos], sizes)
    ws, load, ar = design_arrays(study, X)
    sized = size_designs(study.spec, ws, load, ar, flap)
    F, G = objectives_and_constraints(study, sized)
    start = 0
    for algo, pop, n in zip(state.algos, pops, sizes):
        pop.set("F", F[start:start + n], "G", G[start:start + n])
        pop.apply(lambda ind: ind.evaluated.update(("F", "G")))
        algo.evaluator.n_eval += n
        algo.tell(infills=pop)
        start += n
    state.generation += 1
    n_gen = len(ws)
    state.n_evaluations += n_gen
    feas = np.asarray(sized["feasible"], bool)
    n_feas = int(feas.sum())
    state.n_feasible += n_feas
    gen_set = DesignSet(np.column_stack([ws, load, ar]), flap,
                        np.full(n_gen, state.generation), F, total_violation(G))
    if n_feas:
        state.front = _merge_front(state.front, gen_set.take(feas))
    _update_least(study, state, gen_set, G)
    hv = hypervolume(state.front.F, state.scales) \
        if state.front is not None and len(state.front) else 0.0
    if hv > state.best_hv * (1 + 1e-9) and hv > 0:
        state.best_hv = hv
        state.stall = 0
    elif state.best_hv > 0:
        state.stall += 1
    row = _history_row(study, state, n_feas, hv)
    pending.add(state.generation, ws, load, ar, flap, sized, _history_text(row))
    return row


def _why_stop(state) -> str | None:
    b = state.budget
    if state.generation >= b.generations:
        return "generations"
    if b.evaluations is not None and state.n_evaluations >= b.evaluations:
        return "evaluations"
    if b.time_s is not None and state.elapsed_s >= b.time_s:
        return "time"
    if b.stall_generations is not None and state.stall >= b.stall_generations:
        return "stall"
    return None


def _eta(state, per_gen_s) -> float | None:
    b = state.budget
    left = [(b.generations - state.generation) * per_gen_s]
    if b.evaluations is not None and state.generation:
        per_eval = state.elapsed_s / max(state.n_evaluations, 1)
        left.append(max(b.evaluations - state.n_evaluations, 0) * per_eval)
    if b.time_s is not None:
        left.append(max(b.time_s - state.elapsed_s, 0.0))
    return max(min(left), 0.0)


def _fmt_s(s):
    if s is None:
        return "?"
    s = int(round(s))
    return f"{s // 3600}:{s % 3600 // 60:02d}:{s % 60:02d}" if s >= 3600 else \
        f"{s // 60}:{s % 60:02d}"


class _Printer:
    """One plain line per generation, or one updating line on a terminal."""

    def __init__(self, stream=None):
        self.stream = stream or sys.stdout
        self.tty = hasattr(self.stream, "isatty") and self.stream.isatty()
        self.dirty = False

    def __call__(self, row, state):
        per_gen = state.elapsed_s / max(state.generation, 1)
        line = (f"generation {row['generation']}/{state.budget.generations}  evaluations "
                f"{row['evaluations']}  feasible {row['feasible_total']}  front "
                f"{row['front_size']}  hypervolume {row['hypervolume']:.5g}  elapsed "
                f"{_fmt_s(state.elapsed_s)}  left ~{_fmt_s(_eta(state, per_gen))}")
        if self.tty:
            self.stream.write("\r" + line + "\x1b[K")
            self.dirty = True
        else:
            self.stream.write(line + "\n")
        self.stream.flush()

    def close(self):
        if self.dirty:
            self.stream.write("\n")
            self.stream.flush()
            self.dirty = False


def run_loop(study, state: RunState, run_dir: Path, progress=None, saved=None):
    """Run generations until a stop rule holds. ``progress(row, state)`` is called after each
    generation. Ctrl-C or SIGTERM (or a KeyboardInterrupt raised by ``progress``) ends the
    generation in hand, saves a checkpoint and raises :class:`RunInterrupted`. ``saved``
    (a dict, optional) gets the generation of each checkpoint written, under "generation"."""
    stop = {"signal": None}
    saved = {} if saved is None else saved

    def handler(signum, frame):
        if stop["signal"] is not None:  # a second signal: stop now (last checkpoint stands)
            raise KeyboardInterrupt
        stop["signal"] = signum

    previous = {}
    if threading.current_thread() is threading.main_thread():
        for sig in (signal.SIGINT, signal.SIGTERM):
            previous[sig] = signal.signal(sig, handler)
    try:
        since_ckpt = 0
        last_ckpt = time.monotonic()
        every = state.budget.checkpoint_every
        pending = _Pending(study)
        while True:
            reason = _why_stop(state)
            if reason is not None:
                state.termination = reason
                break
            t0 = time.monotonic()
            row = _one_generation(study, state, pending)
            state.elapsed_s += time.monotonic() - t0
            row["elapsed_s"] = round(state.elapsed_s, 3)
            since_ckpt += 1
            interrupted = stop["signal"] is not None
            if progress is not None and not interrupted:
                try:
                    progress(row, state)
                except KeyboardInterrupt:
                    interrupted = True
            if interrupted:
                pending.write(study, state, run_dir)
                save_checkpoint(run_dir, state)
                raise RunInterrupted(run_dir)
            due = since_ckpt >= every if every is not None else \
                time.monotonic() - last_ckpt >= CHECKPOINT_INTERVAL_S
            if due or pending.rows >= ARCHIVE_BUFFER_ROWS:
                pending.write(study, state, run_dir)
            if due:
                save_checkpoint(run_dir, state)
                saved["generation"] = state.generation
                since_ckpt = 0
                last_ckpt = time.monotonic()
        pending.write(study, state, run_dir)
    finally:
        _close_appended()
        for sig, h in previous.items():
            signal.signal(sig, h)
    save_checkpoint(run_dir, state)
    saved["generation"] = state.generation
    return state.termination


# ----------------------------------------------------------------------------- outputs

TERMINATION_TEXT = {
    "generations": "generation budget reached",
    "evaluations": "evaluation budget reached",
    "time": "wall-clock budget reached",
    "stall": "hypervolume stalled",
}


def _best_lines(study, front):
    out = []
    for c in _objective_cols(study):
        i = int(front[c].to_numpy(float).argmin())
        out.append(f"  best {c}: {front[c].iloc[i]:.6g} ({front['flap'].iloc[i]})")
    return out


def _designs_table(study, kept: DesignSet):
    """The design inputs of ``kept`` as a designs table (flap by name)."""
    import pandas as pd
    from .evaluation import design_columns
    names = np.asarray(study.spec.high_lift_names, dtype=object)
    cols = design_columns(study)
    return pd.DataFrame({cols[0]: kept.designs[:, 0], cols[1]: kept.designs[:, 1],
                         cols[2]: kept.designs[:, 2], cols[3]: names[kept.flap]})


def _least_table(study, least: DesignSet):
    """The least-violating designs sized again, with their total violation and generation."""
    from .evaluation import size_frame
    d = least.designs
    table = size_frame(study, d[:, 0], d[:, 1], d[:, 2], least.flap)
    table.insert(0, "generation", least.generation)
    table.insert(0, "total_violation", least.key)
    return table


def finish(study, state: RunState, run_dir: Path, plots=True) -> RunResult:
    """Write front.csv (or least_violating.csv), run.json and the plots; build the result."""
    import pandas as pd
    from .evaluation import evaluate
    history = pd.read_csv(run_dir / "history.csv")
    ended = utc_now()
    feasible_found = state.front is not None and len(state.front) > 0
    least = None
    if feasible_found:
        front = evaluate(study, _designs_table(study, state.front))
        front.insert(0, "generation", state.front.generation)
        front = front.sort_values(_objective_cols(study), kind="stable").reset_index(drop=True)
        write_atomic(run_dir / "front.csv", _csv_bytes(front))
        (run_dir / "least_violating.csv").unlink(missing_ok=True)
        message = (f"{len(front)} feasible non-dominated design(s) from {state.n_evaluations} "
                   f"evaluations ({state.n_feasible} feasible); "
                   f"{TERMINATION_TEXT[state.termination]}")
    else:
        least = _least_table(study, state.least)
        front = pd.DataFrame(columns=list(least.columns[1:]))
        write_atomic(run_dir / "least_violating.csv", _csv_bytes(least))
        (run_dir / "front.csv").unlink(missing_ok=True)
        worst = min(state.best_margin, key=state.best_margin.get)
        closure = state.best_margin.get("mass_closure", 0.0)
        if closure < 0:  # not one design closed: the mission itself is out of reach
            message = (f"no feasible design found in {state.n_evaluations} evaluations: the "
                       "mission cannot close - for every design tried, payload, crew, fuel "
                       "and empty mass exceed the takeoff mass up to the mass limit "
                       f"(mass_closure, best margin reached {closure:+.1%}); shorten the "
                       "range, lighten the payload or widen the bounds; the designs closest "
                       "to feasible are in least_violating.csv")
        else:
            message = (f"no feasible design found in {state.n_evaluations} evaluations: the "
                       f"requirements cannot all be met within the variable bounds (hardest: "
                       f"{worst}, best margin reached {state.best_margin[worst]:+.1%}); the "
                       "designs closest to feasible are in least_violating.csv")
    b = state.budget
    info = {
        "study": study.name, "study_file": state.study_path, "study_sha256": study.sha256,
        "versions": versions(), "seed": state.seed,
        "started_utc": state.started_utc, "ended_utc": ended,
        "active_seconds": round(state.elapsed_s, 3),
        "budget": {"population": b.population, "generations": b.generations,
                   "population_per_flap_option": b.option_population,
                   "flap_options": list(study.flaps),
                   "evaluations": b.evaluations, "time_s": b.time_s,
                   "stall_generations": b.stall_generations,
                   "checkpoint_every": b.checkpoint_every,
                   "checkpoint_interval_s": (CHECKPOINT_INTERVAL_S if b.checkpoint_every is None
                                             else None)},
        "method": "one NSGA-II (pymoo) per flap option, fronts merged (see optimiser.search)",
        "objectives": _objective_cols(study),
        "termination": state.termination,
        "termination_text": TERMINATION_TEXT[state.termination],
        "generations_run": state.generation,
        "n_evaluations": state.n_evaluations, "n_feasible": state.n_feasible,
        "front_size": len(front), "feasible_found": feasible_found,
        "best_margin_reached": {k: float(v) for k, v in state.best_margin.items()},
        "hypervolume": {"final": float(history["hypervolume"].iloc[-1]) if len(history) else 0.0,
                        **state.scales,
                        "note": "objectives normalised as (f - ideal) / (nadir - ideal); the "
                                "reference point is fixed before the search and never changes"},
        "message": message, "caution": CAUTION,
    }
    if plots:
        from .report.plots import write_plots
        write_plots(study, run_dir, front, history, scales=state.scales)
    # run.json last: its presence marks a finished run (resume finishes a run killed before)
    write_atomic(run_dir / "run.json", (json.dumps(info, indent=2) + "\n").encode())
    return RunResult(front=front, history=history, run_dir=run_dir, message=message,
                     n_evaluations=state.n_evaluations, termination=state.termination,
                     least_violating=least, best_margin=dict(state.best_margin))


def summary_text(study, result: RunResult) -> str:
    lines = [f"study {study.name}: {result.message}"]
    if len(result.front):
        lines += _best_lines(study, result.front)
    else:
        lines.append("  best margin reached per constraint (negative = not met):")
        lines += [f"    {k}: {v:+.1%}" for k, v in result.best_margin.items()]
    lines.append(f"run folder: {result.run_dir}")
    lines.append(CAUTION)
    return "\n".join(lines)


# ----------------------------------------------------------------------------- entry points

SPACE_SAFETY_FACTOR = 1.5      # common practice: head-room over an estimate of the output
PLOTS_ALLOWANCE_BYTES = 5e6    # the plots of a run measured about 1.1 MB; rounded up (ours)


def _archive_row_bytes(study, gens) -> int:
    """An upper bound of the bytes of one evaluations.csv row: 24 per float (the longest
    shortest-exact form of a double), the longest text of each text column."""
    from .sizing import active_constraints
    longest = {"generation": len(str(gens)),
               "flap": max(map(len, study.spec.high_lift_names)),
               "feasible": len("false"),
               "limiting_constraint": max(map(len, active_constraints(study.spec)))}
    cols = archive_columns(study)
    return sum(longest.get(c, 24) for c in cols) + len(cols)


def estimate_output_bytes(study, state: RunState) -> tuple[int, str]:
    """What a run will write at most (bytes, with the safety factor) and a short account.

    Rows of evaluations.csv: generations x designs per generation, fewer if --evals stops it
    earlier; with --time, also at most the time budget x the measured sizing rate (an upper
    bound: the search adds its own time). Bytes per row: :func:`_archive_row_bytes`.
    Checkpoints: the initial pickle plus the designs of the front and least-violating sets it
    will carry (up to 20 x population rows, ours), twice (temporary file and old file); the
    front table: those rows with every evaluate column, 24 bytes each.
    """
    b = state.budget
    per_gen = b.option_population * len(study.flaps)
    gens = b.generations
    if b.evaluations is not None:
        gens = min(gens, math.ceil(b.evaluations / per_gen))
    rows = gens * per_gen
    if b.time_s is not None:
        from .evaluation import size_frame
        from .search import design_arrays, flap_indices, free_variables
        free = free_variables(study)
        t = np.linspace(0.0, 1.0, per_gen)[:, None]
        X = np.array([v.lower for v in free]) + t * np.array([v.upper - v.lower for v in free])
        flaps = np.asarray(flap_indices(study))[np.resize(np.arange(len(study.flaps)), per_gen)]
        t0 = time.perf_counter()
        size_frame(study, *design_arrays(study, X), flaps)
        rate = per_gen / max(time.perf_counter() - t0, 1e-6)
        rows = min(rows, math.ceil(b.time_s * rate))
        gens = min(gens, math.ceil(rows / per_gen))
    row_bytes = _archive_row_bytes(study, gens)
    from .columns import COLUMN_DOCS
    from .sizing import active_constraints
    full_row_bytes = 25 * (len(COLUMN_DOCS) + len(active_constraints(study.spec)))
    front_rows = min(rows, 20 * b.population) + LEAST_VIOLATING_ROWS
    checkpoint = len(pickle.dumps(state, protocol=pickle.HIGHEST_PROTOCOL)) \
        + front_rows * 8 * (6 + len(_objective_cols(study)))
    history = (gens + 1) * 40 * (8 + len(_objective_cols(study)))
    total = (rows * row_bytes + history + 2 * checkpoint + front_rows * full_row_bytes
             + PLOTS_ALLOWANCE_BYTES) * SPACE_SAFETY_FACTOR
    text = (f" ({rows} rows of evaluations.csv of about {row_bytes} bytes, checkpoints, "
            f"front and plots, x{SPACE_SAFETY_FACTOR:g} head-room)")
    return int(total), text


def _check_positive(name, value, integer=True):
    if value is None:
        return None
    ok = isinstance(value, (int, np.integer)) if integer else isinstance(value, (int, float))
    if isinstance(value, bool) or not ok or not value > 0 or not math.isfinite(value):
        kind = "a whole number" if integer else "a number"
        raise RunError(f"{name}: got {value!r}; expected {kind} greater than 0")
    return value


def start(study, *, out=None, force=False, seed=None, generations=None, population=None,
          evaluations=None, time_budget_s=None, stall_generations=None, checkpoint_every=None):
    """Validate the options, create the run folder and the initial state."""
    from .search import make_algorithms, plan_budget, reference_scales
    _check_positive("--gens", generations)
    _check_positive("--pop", population)
    _check_positive("--evals", evaluations)
    _check_positive("--time", time_budget_s, integer=False)
    _check_positive("--stall-gens", stall_generations)
    _check_positive("--checkpoint-every", checkpoint_every)
    if seed is not None and (isinstance(seed, bool) or not isinstance(seed, (int, np.integer))
                             or not 0 <= seed < 2 ** 32):
        raise RunError(f"--seed: got {seed!r}; expected a whole number from 0 to {2**32 - 1}")
    if population is not None and population < 4:
        raise RunError(f"--pop: got {population}; expected at least 4")
    if not any(not v.fixed for v in study.variables):
        raise RunError(f"{study.path}: every variable is fixed; expected at least one with "
                       "[lower, upper] bounds to search (use 'optimiser evaluate' for one design)")
    seed = study.search["seed"] if seed is None else int(seed)
    pop = population or study.search["population"]
    gens = generations or study.search["generations"]
    per, run_gens = plan_budget(len(study.flaps), pop, gens)
    budget = Budget(generations=run_gens, population=pop, option_population=per,
                    evaluations=evaluations, time_s=time_budget_s,
                    stall_generations=stall_generations, checkpoint_every=checkpoint_every)
    state = RunState(study_text=study.text, study_path=str(study.path), seed=seed,
                     budget=budget, algos=make_algorithms(study, seed, per, run_gens),
                     scales=reference_scales(study), started_utc=utc_now())
    cols = archive_columns(study)
    hist_cols = list(_history_row(study, state, 0, 0.0))
    need, need_text = estimate_output_bytes(study, state)
    run_dir = prepare_run_dir(out, study, force, need_bytes=need, need_text=need_text)
    write_atomic(run_dir / "study.toml", study.text.encode("utf-8"))
    state.archive_bytes = _append(run_dir / "evaluations.csv", ",".join(cols) + "\n")
    state.history_bytes = _append(run_dir / "history.csv", ",".join(hist_cols) + "\n")
    _close_appended()
    save_checkpoint(run_dir, state)
    return state, run_dir


def _progress_fn(progress):
    if progress is True:
        return _Printer()
    if progress in (False, None):
        return None
    return progress


def optimise(study_or_path, *, out=None, seed=None, generations=None, population=None,
             evaluations=None, time_budget_s=None, stall_generations=None,
             checkpoint_every=None, force=False, progress=False, plots=True) -> RunResult:
    """Search the study's variables for the Pareto front of its objectives.

    ``study_or_path`` is a :class:`~optimiser.study.Study` or a study file. Budget: the study's
    [search] population x generations unless given; ``evaluations`` and ``time_budget_s``
    (wall clock, measured here) stop earlier; ``stall_generations`` stops when the merged
    front's hypervolume has not grown for that many generations. ``progress`` is True (print a
    line per generation), False, or a callable ``progress(row, state)``. Writes the run folder
    (``out``, default ``results/<study>-<UTC time>``) and returns a :class:`RunResult`.
    Raises :class:`RunInterrupted` after saving a checkpoint when interrupted.
    """
    from .study import Study, load_study
    study = study_or_path if isinstance(study_or_path, Study) else load_study(study_or_path)
    state, run_dir = start(study, out=out, force=force, seed=seed, generations=generations,
                           population=population, evaluations=evaluations,
                           time_budget_s=time_budget_s, stall_generations=stall_generations,
                           checkpoint_every=checkpoint_every)
    return _drive(study, state, run_dir, _progress_fn(progress), plots)


def _drive(study, state, run_dir, progress, plots):
    # the generation of the last checkpoint on disk, for the message if a write fails
    saved = {"generation": state.generation}
    try:
        run_loop(study, state, run_dir, progress, saved=saved)
        return finish(study, state, run_dir, plots=plots)
    except OSError as exc:  # a full disk, a folder made read-only or removed under the run
        what = exc.strerror or type(exc).__name__
        name = Path(exc.filename).name if exc.filename else "a run file"
        name = re.sub(r"^\.(.+)\.tmp-\d+$", r"\1", name)  # an atomic write's temporary file
        space = " (the disk is full)" if exc.errno in (errno.ENOSPC, errno.EDQUOT) else ""
        raise RunError(f"{run_dir}: cannot write {name} ({what}){space}; the run stopped and "
                       f"its last checkpoint (generation {saved['generation']}) is kept; "
                       f"expected a writable folder with free space: fix it, then run: "
                       f"optimiser resume {run_dir}") from None
    finally:
        if isinstance(progress, _Printer):
            progress.close()


def resume(run_dir, *, progress=False, plots=True) -> RunResult:
    """Continue an interrupted run from its checkpoint to its original budget. With the same
    seed the result equals that of an uninterrupted run."""
    from .study import parse_study
    run_dir = Path(run_dir)
    state = load_checkpoint(run_dir)
    # A run killed after its last checkpoint but before run.json (written last) is finished
    # here: the loop stops at once and the outputs are written again.
    if state.termination is not None and (run_dir / "run.json").exists():
        raise RunError(f"{run_dir}: the run already finished ({state.termination}); expected "
                       "an interrupted run (start a new one with 'optimiser run')")
    _probe_writable(run_dir, label="")
    _remove_stale_temporaries(run_dir)
    study = parse_study(state.study_text, state.study_path)
    for name, length in (("evaluations.csv", state.archive_bytes),
                         ("history.csv", state.history_bytes)):
        path = run_dir / name
        if not path.exists() or path.stat().st_size < length:
            raise RunError(f"{path}: shorter than the checkpoint records ({length} bytes); "
                           "expected the run folder as the run left it")
        with open(path, "rb+") as fh:
            fh.truncate(length)
    return _drive(study, state, run_dir, _progress_fn(progress), plots)
