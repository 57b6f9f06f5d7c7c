"""``evaluate(study, designs) -> DataFrame``: the sizing model with named columns.

The frame holds the design inputs, every sized number (SI, unit suffixes), one
``margin_<constraint>`` per active constraint (positive = met, as a fraction of its limit),
``feasible``, ``limiting_constraint`` (the smallest margin) and ``most_violated`` (the same,
when infeasible; empty otherwise), ``within_bounds`` and ``outside_bounds`` (which inputs lie
outside the study's variable bounds: such designs are evaluated but flagged).

A long designs table is sized :data:`EVALUATE_CHUNK_ROWS` rows at a time
(:func:`evaluate_chunks`) and written chunk by chunk as CSV text (:func:`evaluated_csv_text`),
so memory is bounded by the chunk, not by the table.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from .columns import COLUMN_DOCS  # noqa: F401  (re-exported: the schema's glossary)
from .sizing import checked_constraints, size_designs

EVALUATE_CHUNK_ROWS = 50_000
"""Designs sized and written at a time by ``optimiser evaluate``: memory is bounded by one
chunk's frame (about 90 columns) and its CSV text, whatever the table's length."""

CSV_WRITE_ROWS = 2_000
"""Rows formatted as text at a time when a chunk is written (each cell is a Python string
until it is joined: a small slice keeps that within some megabytes)."""

CSV_FLOAT_FORMAT = "%.17g"
"""The number format of the pandas fallback of :func:`evaluated_csv_text` (17 significant
digits: exact for a double)."""

CAUTION = ("Conceptual-design estimates only: not for certification, airworthiness or "
           "operational use. The applicable airworthiness authority's rules and licensed "
           "engineering practice govern.")
CAUTION_SHORT = ("Conceptual-design estimate only: not for certification or operational use; "
                 "airworthiness rules and licensed engineering practice govern.")
"""The caution in one short line (the footer of every figure)."""


SIZING_PEAK_BYTES_PER_DESIGN = {"piston": 1510, "turboprop": 1510, "turbofan": 1730}
"""Peak memory of sizing a batch at once (:func:`size_frame`, one ``size_designs`` call and
its frame) per design, by propulsion family [bytes]. Measured (ours, 2026-12-04) with
``tracemalloc``: the peak traced bytes of one call over batches of 2 000 and 20 000 random
designs inside the bounds of each bundled study, divided by the designs (1 449 to 1 502 for
the propeller studies, 1 721 to 1 727 for the turbofan study), rounded up."""

MEMORY_SAFETY_FACTOR = 2.0
"""Head-room over a measured peak: allocator overhead and buffers that ``tracemalloc`` does
not see (common practice)."""


def design_bytes_estimate(study) -> int:
    """Memory that sizing one design of a batch needs at most, with the safety factor [bytes].

    A batch of ``n`` designs sized at once needs about ``n * design_bytes_estimate(study)``;
    a chunked evaluation picks its chunk so that this fits :func:`available_memory_bytes`."""
    family = study.spec.propulsion.family
    return int(SIZING_PEAK_BYTES_PER_DESIGN[family] * MEMORY_SAFETY_FACTOR)


def available_memory_bytes() -> int | None:
    """Memory the system can give this process without swapping [bytes]: ``MemAvailable`` of
    ``/proc/meminfo`` on Linux, else the free physical pages (``os.sysconf``); None where
    neither is known (then no memory check is made)."""
    import os
    try:
        with open("/proc/meminfo", encoding="ascii") as f:
            for line in f:
                if line.startswith("MemAvailable:"):
                    return int(line.split()[1]) * 1024  # the file gives kB (KiB)
    except (OSError, ValueError, IndexError):
        pass
    try:
        return int(os.sysconf("SC_AVPHYS_PAGES")) * int(os.sysconf("SC_PAGE_SIZE"))
    except (AttributeError, ValueError, OSError):
        return None


def memory_text(n_bytes) -> str:
    """``"1.5 GB"``: a size in bytes for a message, in decimal units (the memory and the
    free-space checks)."""
    n = float(n_bytes)
    for unit in ("bytes", "kB", "MB", "GB"):
        if n < 1000:
            return f"{n:.0f} {unit}" if unit == "bytes" else f"{n:.1f} {unit}"
        n /= 1000
    return f"{n:.1f} TB"


def memory_shortfall(need_bytes) -> str | None:
    """``None`` when ``need_bytes`` fits the available memory (or it is unknown), else the
    text ``"needs an estimated 12.0 GB; only 3.1 GB of memory is available"``."""
    have = available_memory_bytes()
    if have is None or need_bytes <= have:
        return None
    return (f"needs an estimated {memory_text(need_bytes)}; only {memory_text(have)} of "
            "memory is available")


MIN_CHUNK_ROWS = 1000
"""Fewest rows a chunked evaluation sizes at once (ours: below this the per-call overhead
of the model dominates); a machine that cannot hold them is refused."""


def evaluate_chunk_rows(study) -> int:
    """Rows :func:`evaluate_chunks` sizes at once: :data:`EVALUATE_CHUNK_ROWS`, or fewer where
    the available memory holds fewer (never below :data:`MIN_CHUNK_ROWS`; the caller checks
    that those fit with :func:`memory_shortfall`)."""
    have = available_memory_bytes()
    if have is None:
        return EVALUATE_CHUNK_ROWS
    return max(MIN_CHUNK_ROWS, min(EVALUATE_CHUNK_ROWS, have // design_bytes_estimate(study)))


def design_columns(study) -> tuple[str, ...]:
    """The input columns a designs table must have for this study: wing loading, loading,
    aspect ratio, flap, then the optional variables the study has
    (:func:`override_columns`)."""
    return ("wing_loading_N_m2", study.loading_column, "aspect_ratio", "flap",
            *override_columns(study))


def override_columns(study) -> tuple[str, ...]:
    """Input columns of the study's optional variables (``cruise_altitude_m`` where
    ``[variables] cruise_altitude`` is given), each a sizing override per design."""
    return tuple(v.column for v in study.variables[3:])


def design_overrides(study, table) -> dict:
    """The sizing overrides of a designs table or archive (a DataFrame or a dict of arrays
    with the :func:`override_columns`), as float arrays."""
    return {c: np.asarray(table[c], dtype=float) for c in override_columns(study)}


def row_overrides(study, design, n: int) -> dict:
    """The optional variables of one design (a mapping with their columns), ``n`` times."""
    return {c: np.full(n, float(design[c])) for c in override_columns(study)}


def size_frame(study, wing_loading, loading, aspect_ratio, flap_index,
               overrides=None) -> pd.DataFrame:
    """Size arrays of designs (flap as index into ``study.spec.high_lift``) into a frame;
    ``overrides`` holds the optional variables' columns (:func:`override_columns`) and any
    other per-design values :func:`~optimiser.sizing.size_designs` takes."""
    spec = study.spec
    overrides = overrides or {}
    missing = [c for c in override_columns(study) if c not in overrides]
    if missing:
        raise ValueError(f"size_frame: the study's variable column {missing[0]!r} not given; "
                         "expected it among the overrides")
    out = size_designs(spec, wing_loading, loading, aspect_ratio, flap_index,
                       overrides or None)
    names = checked_constraints(spec, out)
    feasible = out.pop("feasible")
    limiting = np.asarray(names, dtype=object)[out.pop("limiting_index")]
    columns = {
        "wing_loading_N_m2": np.asarray(wing_loading, float),
        study.loading_column: np.asarray(loading, float),
        "aspect_ratio": np.asarray(aspect_ratio, float),
        "flap": np.asarray(spec.high_lift_names, dtype=object)[np.asarray(flap_index, int)],
    }
    for c in override_columns(study):
        columns[c] = np.broadcast_to(np.asarray(overrides[c], float),
                                     columns["aspect_ratio"].shape).copy()
    columns.update(out)
    if spec.requirements.max_span_m is not None:  # the code letter only with a span limit
        columns = _with_code_letter(columns)
    columns["feasible"] = feasible
    columns["limiting_constraint"] = limiting
    columns["most_violated"] = np.where(feasible, "", limiting).astype(object)
    # one block per dtype, built once (cheaper than concatenating frames per generation)
    return pd.DataFrame(columns, copy=False)


def _with_code_letter(columns: dict) -> dict:
    """``columns`` with ``aerodrome_code_letter`` (text) after ``span_m``."""
    from .physics.performance import aerodrome_code_letter
    out = {}
    for k, v in columns.items():
        out[k] = v
        if k == "span_m":
            out["aerodrome_code_letter"] = aerodrome_code_letter(v)
    return out


def evaluate(study, designs) -> pd.DataFrame:
    """Size every design of ``designs`` (a DataFrame, or a dict of columns) for ``study``.

    ``designs`` needs the columns of :func:`design_columns`; ``flap`` holds catalogue names
    (``"fowler"``, ``"single_slotted+slats"``). Raises ``ValueError`` (a
    :class:`~optimiser.errors.StudyError`) naming a missing column, an unknown flap name, or
    the row, column and value of a number that is not finite and positive. A design outside
    the model's valid ranges (:data:`~optimiser.sizing.inputs.MODEL_RANGES`) is sized at the
    nearest limit and flagged: ``outside_model_range`` is its limiting constraint (the
    command line refuses such designs instead).
    """
    from .designs import check_designs
    return evaluate_checked(study, check_designs(study, pd.DataFrame(designs)))


def evaluate_chunks(study, tables):
    """Yield the evaluated frame of each checked designs table of ``tables`` (an iterable,
    e.g. :func:`optimiser.designs.iter_designs_csv`), one at a time."""
    for table in tables:
        yield evaluate_checked(study, table)


def evaluate_checked(study, table) -> pd.DataFrame:
    """:func:`evaluate` of a table already checked by :func:`optimiser.designs.check_designs`
    (float inputs, catalogue flap names)."""
    names = study.spec.high_lift_names
    index = np.array([names.index(f) for f in table["flap"]], dtype=int)
    frame = size_frame(study, table["wing_loading_N_m2"].to_numpy(float),
                       table[study.loading_column].to_numpy(float),
                       table["aspect_ratio"].to_numpy(float), index,
                       design_overrides(study, table))
    outside = []
    for col in (*design_columns(study)[:3], *override_columns(study)):
        v = study.variable(col)
        x = frame[col].to_numpy(float)
        outside.append(np.where((x < v.lower - 1e-9 * abs(v.lower)) | (x > v.upper + 1e-9 * abs(v.upper)),
                                col, ""))
    allowed = np.isin(frame["flap"].to_numpy(object), np.asarray(study.flaps, dtype=object))
    outside.append(np.where(allowed, "", "flap"))
    notes = [";".join(p for p in parts if p) for parts in zip(*outside)]
    flags = pd.DataFrame({"within_bounds": [n == "" for n in notes], "outside_bounds": notes},
                         index=frame.index)
    return pd.concat([frame, flags], axis=1)  # one block added (no fragmented frame)


def evaluated_csv_pieces(frame: pd.DataFrame, header: bool = True):
    """:func:`evaluated_csv_text` of ``frame`` in slices of :data:`CSV_WRITE_ROWS` rows,
    one string each (their concatenation is the whole text)."""
    for start in range(0, max(len(frame), 1), CSV_WRITE_ROWS):
        yield evaluated_csv_text(frame.iloc[start:start + CSV_WRITE_ROWS],
                                 header=header and start == 0)


def evaluated_csv_text(frame: pd.DataFrame, header: bool = True) -> str:
    """``frame`` as CSV text, written by Apache Arrow's CSV writer: every float in its
    shortest exact form (it reads back to the same float), NaN empty, booleans ``true`` /
    ``false``, text unquoted (the tool's names and flags hold no commas, quotes or line
    breaks; a cell that would need quotes takes pandas' writer at full precision instead)."""
    import io

    import pyarrow as pa
    import pyarrow.csv as pa_csv
    names = [str(c) for c in frame.columns]
    text_cols = [c for c in frame.columns if frame[c].dtype.kind == "O"]
    needs_quotes = any(("," in n) or ('"' in n) or ("\n" in n) for n in names) or any(
        frame[c].astype(str).str.contains(r'[,"\n\r]', regex=True).any() for c in text_cols)
    if needs_quotes:
        return frame.to_csv(index=False, header=header, float_format=CSV_FLOAT_FORMAT)
    buf = io.BytesIO()
    if header:
        buf.write((",".join(names) + "\n").encode("utf-8"))
    if len(frame):
        table = pa.Table.from_pandas(frame, preserve_index=False)
        pa_csv.write_csv(table, buf, pa_csv.WriteOptions(include_header=False,
                                                         quoting_style="none"))
    return buf.getvalue().decode("utf-8")
