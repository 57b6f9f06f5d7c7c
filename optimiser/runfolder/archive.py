"""The archive (``evaluations.csv``) and the history (``history.csv``): their columns, the
buffered writer the run loop appends through, the truncation on resume, and the one reader.

``evaluations.csv`` holds a fixed set of columns (:func:`archive_columns`), written by Apache
Arrow's CSV writer so every number is exact (it reads back to the same float) and cheap to
write. Its rows and the history lines wait in memory (:class:`Pending`) and are appended in
one call before every checkpoint and every :data:`ARCHIVE_BUFFER_ROWS` rows.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from ..columns import ARCHIVE_SUMMARY_COLUMNS, ENGINE_SIZE_COLUMNS
from ..errors import RunError
from . import checked, files, names

ARCHIVE_BUFFER_ROWS = 20_000
"""Rows of evaluations.csv held in memory at most before they are written (ours: a few MB);
they are also written before every checkpoint, so a checkpoint always finds them on disk."""

READ_CHUNK_ROWS = 200_000
"""Rows of evaluations.csv parsed at a time by :func:`read_archive` (bounds the memory of
the text being parsed; ours)."""


def archive_columns(study, chance=None) -> list[str]:
    """Columns of ``evaluations.csv`` for a study.

    generation, the inputs, flap, the objectives, a summary of the sized design, one margin
    per active constraint, feasible and the limiting constraint, every number exact (it reads
    back to the same float). Every other column of the evaluate table follows from the
    inputs: ``optimiser evaluate STUDY --designs evaluations.csv`` sizes them again (the model
    is deterministic). A chance-constrained run (``chance``, an
    :class:`~optimiser.chance.ChanceSetting`) adds :func:`~optimiser.chance.probability_columns`
    at the end."""
    from ..evaluation import design_columns, override_columns
    from ..sizing import active_constraints
    inputs = list(design_columns(study)[:3])
    objectives = [c for c in dict.fromkeys(study.objective_columns()) if c not in inputs]
    inputs += override_columns(study)  # the optional variables, after the first three
    other = set(ENGINE_SIZE_COLUMNS.values()) - {study.engine_size_column}  # not this family's
    summary = [c for c in ARCHIVE_SUMMARY_COLUMNS if c not in objectives and c not in other]
    margins = [f"margin_{c}" for c in active_constraints(study.spec)]
    cols = ["generation", *inputs, "flap", *objectives, *summary, *margins, "feasible",
            "limiting_constraint"]
    if chance is not None:
        from ..chance import probability_columns
        cols += probability_columns(study.spec)
    return cols


def archive_rows(study, generation, ws, load, ar, flap, sized, chance=None) -> bytes:
    """Rows of ``evaluations.csv`` (no header, UTF-8) for sized designs (``sized``: the dict
    of :func:`~optimiser.sizing.size_designs`, or the columns of the archive it gives);
    ``generation`` is one number or one per design.

    Written by Apache Arrow's CSV writer: floats in their shortest exact form (about three
    times faster than Python's repr for the same text); flap and constraint names are plain
    identifiers, never quoted."""
    import io

    import pyarrow as pa
    import pyarrow.csv as pa_csv
    from ..sizing import checked_constraints
    cols = archive_columns(study, chance)
    flap_names = np.asarray(study.spec.high_lift_names, dtype=object)
    # a batch from outside a search may hold a design outside the model's ranges
    limiting = np.asarray(checked_constraints(study.spec, sized), dtype=object)
    n = len(ws)
    source = {
        "generation": np.broadcast_to(np.asarray(generation, dtype=np.int64), (n,)),
        cols[1]: np.asarray(ws, float), cols[2]: np.asarray(load, float),
        cols[3]: np.asarray(ar, float),
        "flap": pa.array(flap_names[np.asarray(flap, int)].tolist(), type=pa.string()),
        "feasible": np.asarray(sized["feasible"], bool),
        "limiting_constraint": pa.array(limiting[np.asarray(sized["limiting_index"], int)]
                                        .tolist(), type=pa.string()),
    }
    if chance is not None:
        source["meets_reliability"] = np.asarray(sized["meets_reliability"], bool)
    table = pa.table({c: source[c] if c in source else np.asarray(sized[c], float)
                      for c in cols})
    buf = io.BytesIO()
    pa_csv.write_csv(table, buf, pa_csv.WriteOptions(include_header=False,
                                                     quoting_style="none"))
    return buf.getvalue()


def archive_row_bytes(study, gens, chance=None) -> int:
    """An upper bound of the bytes of one evaluations.csv row: 24 per float (the longest
    shortest-exact form of a double), the longest text of each text column."""
    from ..sizing import active_constraints
    longest = {"generation": len(str(gens)),
               "flap": max(map(len, study.spec.high_lift_names)),
               "feasible": len("false"), "meets_reliability": len("false"),
               "limiting_constraint": max(map(len, active_constraints(study.spec)))}
    cols = archive_columns(study, chance)
    return sum(longest.get(c, 24) for c in cols) + len(cols)


def history_text(row) -> str:
    """One history.csv row, as pandas writes it (floats by repr, NaN empty)."""
    cells = []
    for v in row.values():
        if isinstance(v, float):
            cells.append("" if v != v else repr(v))
        else:
            cells.append(str(v))
    return ",".join(cells) + "\n"


def write_headers(run_dir: Path, archive_cols, history_cols) -> tuple[int, int]:
    """Start ``evaluations.csv`` and ``history.csv`` with their headers; their lengths."""
    archive_bytes = files.append(run_dir / names.ARCHIVE, ",".join(archive_cols) + "\n")
    history_bytes = files.append(run_dir / names.HISTORY, ",".join(history_cols) + "\n")
    files.close_appended()
    return archive_bytes, history_bytes


def sync_appended(run_dir: Path):
    """fsync the archive and the history (before a checkpoint records their lengths)."""
    for name in (names.ARCHIVE, names.HISTORY):
        files.sync(run_dir / name)


def truncate_to(run_dir: Path, archive_bytes: int, history_bytes: int):
    """Cut the archive and the history back to the lengths a checkpoint recorded (resume);
    :class:`RunError` if either is shorter."""
    for name, length in ((names.ARCHIVE, archive_bytes), (names.HISTORY, history_bytes)):
        path = run_dir / name
        if not path.exists() or path.stat().st_size < length:
            raise RunError(f"{path}: shorter than the checkpoint records ({length} bytes); "
                           "expected the run folder as the run left it")
        files.truncate(path, length)


class Pending:
    """The archive rows and history lines of the generations since the last write: one
    Arrow call formats many generations at once (about 40 % less time per row than one call
    per generation, measured)."""

    def __init__(self, study, chance=None):
        self.chance = chance
        self.columns = archive_columns(study, chance)
        self.parts, self.history, self.rows = [], [], 0

    def add(self, generation, ws, load, ar, flap, sized, history_line):
        keep = {c: np.asarray(sized[c]) for c in self.columns if c in sized}
        keep["feasible"] = np.asarray(sized["feasible"], bool)
        if "meets_reliability" in sized:
            keep["meets_reliability"] = np.asarray(sized["meets_reliability"], bool)
        keep["limiting_index"] = np.asarray(sized["limiting_index"])
        self.parts.append((np.full(len(ws), generation), ws, load, ar, flap, keep))
        self.history.append(history_line)
        self.rows += len(ws)

    def write(self, study, state, run_dir):
        """Append what is pending (archive first, then history) and record the lengths in
        ``state`` (``archive_bytes``, ``history_bytes``)."""
        if not self.parts:
            return
        gen, ws, load, ar, flap = (np.concatenate([p[k] for p in self.parts]) for k in range(5))
        sized = {c: np.concatenate([p[5][c] for p in self.parts]) for c in self.parts[0][5]}
        history = "".join(self.history)
        # emptied first: a failed write ends the run, and resume starts from the checkpoint
        self.parts, self.history, self.rows = [], [], 0
        state.archive_bytes = files.append(run_dir / names.ARCHIVE,
                                           archive_rows(study, gen, ws, load, ar, flap, sized,
                                                        self.chance))
        state.history_bytes = files.append(run_dir / names.HISTORY, history)


ARCHIVE_EXPECTED = "the archive of evaluated designs as 'optimiser run' wrote it (UTF-8 CSV)"
HISTORY_EXPECTED = "the per-generation history as 'optimiser run' wrote it (UTF-8 CSV)"
TEXT_COLUMNS = ("flap", "limiting_constraint")
"""The text columns of evaluations.csv (every other column but the booleans is a number)."""
BOOLEAN_COLUMNS = ("feasible", "meets_reliability")
"""The true/false columns of evaluations.csv (``meets_reliability``: chance-constrained runs)."""
HISTORY_FINITE = ("generation", "evaluations", "hypervolume")
"""Columns of history.csv that are finite numbers in every row (the others may be empty)."""


def read_archive(run_dir, columns, *, feasible_only=False, flaps=None):
    """``columns`` of a run's ``evaluations.csv`` as a DataFrame (only the feasible rows if
    ``feasible_only``), parsed :data:`READ_CHUNK_ROWS` rows at a time.

    Checked as it is read: every column there once, every number finite, ``feasible`` true or
    false, ``flap`` one of ``flaps`` (if given); :class:`RunError` (one line) otherwise."""
    import pandas as pd
    path = Path(run_dir) / names.ARCHIVE
    columns = list(columns)
    use = columns if not feasible_only or "feasible" in columns else [*columns, "feasible"]
    checked.header_columns(path, checked.first_line(path, ARCHIVE_EXPECTED), use,
                           ARCHIVE_EXPECTED)
    numbers = [c for c in use if c not in TEXT_COLUMNS and c not in BOOLEAN_COLUMNS]
    chunks = checked.parse_csv(path, path, ARCHIVE_EXPECTED, usecols=use,
                               chunksize=READ_CHUNK_ROWS)
    parts, rows = [], 0
    while True:
        with checked.csv_errors(path, ARCHIVE_EXPECTED):
            part = next(chunks, None)
        if part is None:
            break
        checked.check_columns(path, part, finite=numbers,
                              boolean=[c for c in BOOLEAN_COLUMNS if c in use],
                              choices={"flap": flaps} if flaps and "flap" in use else None,
                              row_offset=rows)
        rows += len(part)
        if feasible_only:
            part = part.loc[part["feasible"].astype(bool), columns]
        parts.append(part)
    return pd.concat(parts, ignore_index=True) if parts else pd.DataFrame(columns=columns)


def read_history(run_dir):
    """A run's ``history.csv`` as a DataFrame (one row per generation), checked: its
    generation, evaluation and hypervolume columns there and finite, every other cell a
    number or empty; :class:`RunError` (one line) otherwise."""
    path = Path(run_dir) / names.HISTORY
    history, cols = checked.read_table(path, HISTORY_FINITE, HISTORY_EXPECTED)
    return checked.check_columns(path, history, numeric=cols, finite=HISTORY_FINITE)
