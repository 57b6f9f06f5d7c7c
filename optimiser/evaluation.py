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
from .sizing import active_constraints, size_designs

EVALUATE_CHUNK_ROWS = 50_000
"""Designs sized and written at a time by ``optimiser evaluate``: memory is bounded by one
chunk's frame (about 90 columns) and its CSV text, whatever the table's length."""

CSV_WRITE_ROWS = 2_000
"""Rows formatted as text at a time when a chunk is written (each cell is a Python string
until it is joined: a small slice keeps that within some megabytes)."""

CSV_FLOAT_FORMAT = "%.10g"
"""The number format of ``optimiser evaluate``'s CSV output (ten significant digits)."""

CAUTION = ("Conceptual-design estimates only: not for certification, airworthiness or "
           "operational use. The applicable airworthiness authority's rules and licensed "
           "engineering practice govern.")


def design_columns(study) -> tuple[str, ...]:
    """The input columns a designs table must have for this study."""
    return ("wing_loading_N_m2", study.loading_column, "aspect_ratio", "flap")


def size_frame(study, wing_loading, loading, aspect_ratio, flap_index) -> pd.DataFrame:
    """Size arrays of designs (flap as index into ``study.spec.high_lift``) into a frame."""
    spec = study.spec
    out = size_designs(spec, wing_loading, loading, aspect_ratio, flap_index)
    names = active_constraints(spec)
    feasible = out.pop("feasible")
    limiting = np.asarray(names, dtype=object)[out.pop("limiting_index")]
    columns = {
        "wing_loading_N_m2": np.asarray(wing_loading, float),
        study.loading_column: np.asarray(loading, float),
        "aspect_ratio": np.asarray(aspect_ratio, float),
        "flap": np.asarray(spec.high_lift_names, dtype=object)[np.asarray(flap_index, int)],
    }
    columns.update(out)
    columns["feasible"] = feasible
    columns["limiting_constraint"] = limiting
    columns["most_violated"] = np.where(feasible, "", limiting).astype(object)
    # one block per dtype, built once (cheaper than concatenating frames per generation)
    return pd.DataFrame(columns, copy=False)


def evaluate(study, designs) -> pd.DataFrame:
    """Size every design of ``designs`` (a DataFrame, or a dict of columns) for ``study``.

    ``designs`` needs the columns of :func:`design_columns`; ``flap`` holds catalogue names
    (``"fowler"``, ``"single_slotted+slats"``). Raises ``ValueError`` naming a missing column
    or an unknown flap name.
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
                       table["aspect_ratio"].to_numpy(float), index)
    outside = []
    for col in design_columns(study)[:3]:
        v = study.variable(col)
        x = frame[col].to_numpy(float)
        outside.append(np.where((x < v.lower - 1e-9 * abs(v.lower)) | (x > v.upper + 1e-9 * abs(v.upper)),
                                col, ""))
    allowed = np.isin(frame["flap"].to_numpy(object), np.asarray(study.flaps, dtype=object))
    outside.append(np.where(allowed, "", "flap"))
    notes = [";".join(p for p in parts if p) for parts in zip(*outside)]
    frame["within_bounds"] = [n == "" for n in notes]
    frame["outside_bounds"] = notes
    return frame


def _csv_cells(column: pd.Series) -> list[str] | None:
    """The CSV cells of one column as pandas writes them with ``float_format``
    :data:`CSV_FLOAT_FORMAT` (NaN and None empty), or None where a cell would need quotes."""
    values = column.to_numpy()
    kind = values.dtype.kind
    if kind == "f":
        cells = list(map(CSV_FLOAT_FORMAT.__mod__, values.tolist()))
        for i in np.flatnonzero(np.isnan(values)).tolist():
            cells[i] = ""
        return cells
    if kind == "b":
        return np.where(values, "True", "False").tolist()
    if kind in "iu":
        return list(map(str, values.tolist()))
    cells = ["" if v is None or (isinstance(v, float) and v != v) else str(v)
             for v in values.tolist()]
    if any(("," in c) or ('"' in c) or ("\n" in c) or ("\r" in c) for c in cells):
        return None
    return cells


def evaluated_csv_pieces(frame: pd.DataFrame, header: bool = True):
    """:func:`evaluated_csv_text` of ``frame`` in slices of :data:`CSV_WRITE_ROWS` rows,
    one string each (their concatenation is the whole text)."""
    for start in range(0, max(len(frame), 1), CSV_WRITE_ROWS):
        yield evaluated_csv_text(frame.iloc[start:start + CSV_WRITE_ROWS],
                                 header=header and start == 0)


def evaluated_csv_text(frame: pd.DataFrame, header: bool = True) -> str:
    """``frame`` as CSV text, the same characters as pandas'
    ``frame.to_csv(index=False, float_format=CSV_FLOAT_FORMAT)`` (with or without the header
    line), several times faster: each column is formatted once and the rows joined."""
    names = [str(c) for c in frame.columns]
    columns = [_csv_cells(frame[c]) for c in frame.columns] if len(frame) else []
    if any(c is None for c in columns) or any(("," in n) or ('"' in n) or ("\n" in n)
                                              for n in names):
        return frame.to_csv(index=False, header=header, float_format=CSV_FLOAT_FORMAT)
    lines = [",".join(names)] if header else []
    lines.extend(map(",".join, zip(*columns)))
    return "\n".join(lines) + "\n" if lines else ""
