"""Reading and checking a designs table (CSV) for ``evaluate``: whole, or in chunks of rows
(:func:`iter_designs_csv`, bounded memory for a table of millions of rows)."""

from __future__ import annotations

import codecs
import csv
import difflib
import math
from pathlib import Path

import pandas as pd

from .evaluation import design_columns
from .sizing.inputs import CRUISE_ALTITUDE_MAX_M, MODEL_RANGES, range_text
from .study import StudyError


def check_designs(study, table: pd.DataFrame, source: str = "designs",
                  model_range: bool = False, first_row: int = 1) -> pd.DataFrame:
    """Check columns, numbers and flap names; return the table with float columns.

    Raises :class:`StudyError` (one line) naming the column, row and value at fault: a
    number that is not finite and positive, and with ``model_range`` (the command line's
    designs) one outside the model's valid range (:data:`~optimiser.sizing.inputs.MODEL_RANGES`),
    which the model would size at the nearest limit and flag ``outside_model_range``. Rows are
    counted from ``first_row`` (a later chunk of a long table names its rows in the file).
    """
    need = design_columns(study)
    cols = [str(c).strip() for c in table.columns]
    repeated = sorted({c for c in cols if cols.count(c) > 1})
    if repeated:
        raise StudyError(f"{source}: column {repeated[0]!r} appears {cols.count(repeated[0])} "
                         "times; expected each column once: " + ", ".join(need))
    table = table.copy()
    table.columns = cols
    for c in need:
        if c not in cols:
            close = difflib.get_close_matches(c, cols, n=1)
            hint = f" (is {close[0]!r} a misspelling?)" if close else ""
            raise StudyError(f"{source}: missing column {c!r}{hint}; expected columns: "
                             + ", ".join(need))
    if len(table) == 0:
        raise StudyError(f"{source}: no design rows; expected at least one row under the "
                         "header " + ",".join(need))
    def cells(c):
        """(where, given, float or None) of each cell of column ``c``."""
        for i, v in enumerate(table[c].tolist()):
            where = f"{source}: " + (f"row {first_row + i}, " if len(table) > 1 or source != "--design"
                                     else "") + f"column {c!r}"
            try:
                x = float(str(v).strip()) if not isinstance(v, (int, float)) else float(v)
            except ValueError:
                x = None
            yield where, v, x

    for c in need[:3]:
        r = MODEL_RANGES[c]
        values = []
        for where, v, x in cells(c):
            if x is None:
                expected = f"a number {range_text(c)}" if model_range else "a number"
                raise StudyError(f"{where}: got {v!r}; expected {expected}")
            if model_range and not (math.isfinite(x) and r.lower <= x <= r.upper):
                raise StudyError(f"{where}: got {v!r}; expected a "
                                 + ("" if math.isfinite(x) else "finite ")
                                 + f"number {range_text(c)}")
            if not math.isfinite(x) or x <= 0:
                raise StudyError(f"{where}: got {v!r}; expected a finite positive number")
            values.append(x)
        table[c] = values
    for c in need[4:]:  # the optional variables: the cruise altitude [m]
        values = []
        for where, v, x in cells(c):
            if x is None or not (math.isfinite(x) and 0.0 <= x <= CRUISE_ALTITUDE_MAX_M):
                raise StudyError(f"{where}: got {v!r}; expected a cruise pressure altitude in "
                                 f"metres from 0 to {CRUISE_ALTITUDE_MAX_M:g}")
            values.append(x)
        table[c] = values
    names = study.spec.high_lift_names
    flaps = []
    for i, v in enumerate(table["flap"].tolist()):
        name = str(v).strip()
        if name not in names:
            close = difflib.get_close_matches(name, names, n=1)
            hint = f" (did you mean {close[0]!r}?)" if close else ""
            base = sorted({n.split("+")[0] for n in names})
            raise StudyError(f"{source}: row {first_row + i}, column 'flap': unknown flap type "
                             f"{name!r}{hint}; expected one of: " + ", ".join(base)
                             + ", optionally followed by '+slats'")
        flaps.append(name)
    table["flap"] = flaps
    return table


READ_BLOCK_BYTES = 1 << 20
"""Bytes read from a designs file at a time (the text is decoded and split as it comes)."""

_LINE_BREAKS = "\r\n\x0b\x0c\x1c\x1d\x1e\x85\u2028\u2029"   # those of str.splitlines


def _text_lines(path):
    """The lines of a UTF-8 file (an optional byte-order mark skipped), split as
    ``str.splitlines`` splits the whole text, read a block at a time."""
    p = Path(path)
    decoder = codecs.getincrementaldecoder("utf-8")()
    try:
        fh = open(p, "rb")
    except OSError as exc:
        raise StudyError(f"{path}: cannot read the designs file ({exc.strerror})") from None
    with fh:
        offset, carry, bom = 0, "", 0
        while True:
            try:
                block = fh.read(READ_BLOCK_BYTES)
            except OSError as exc:
                raise StudyError(f"{path}: cannot read the designs file ({exc.strerror})") \
                    from None
            held = len(decoder.getstate()[0])
            try:
                text = decoder.decode(block, final=not block)
            except UnicodeDecodeError as exc:
                raise StudyError(f"{path}: byte {offset - held + exc.start - bom} is not UTF-8; "
                                 "expected a UTF-8 CSV file") from None
            if offset == 0 and text.startswith("\ufeff"):
                text, bom = text[1:], 3
            offset += len(block)
            lines = (carry + text).splitlines(True)
            if not block:
                yield from (line.rstrip(_LINE_BREAKS) for line in lines)
                return
            # the last piece may be a partial line (or a CR whose LF is in the next block)
            carry = lines.pop() if lines else ""
            yield from (line.rstrip(_LINE_BREAKS) for line in lines)


def _csv_rows(study, path):
    """The non-blank rows of a designs CSV file, as lists of cells."""
    reader = csv.reader(_text_lines(path))
    while True:
        try:
            row = next(reader)
        except StopIteration:
            return
        except csv.Error as exc:   # e.g. a field over the csv module's size limit
            raise StudyError(f"{path}: not a readable CSV table ({exc}); expected a header "
                             + ",".join(design_columns(study)) + " and design rows") from None
        if any(cell.strip() for cell in row):
            yield row


def iter_designs_csv(study, path, chunk_rows: int):
    """Read a designs CSV file ``chunk_rows`` rows at a time; yield each chunk checked
    (:func:`check_designs`, rows named by their number in the file). Raises
    :class:`StudyError` on the first problem met, so a caller that must write nothing for a
    bad file reads the whole stream before keeping anything it wrote."""
    if chunk_rows < 1:
        raise ValueError(f"chunk_rows must be at least 1, got {chunk_rows}")
    rows = _csv_rows(study, path)
    first = next(rows, None)
    if first is None:
        raise StudyError(f"{path}: the file is empty; expected a header "
                         + ",".join(design_columns(study)) + " and design rows")
    header = [h.strip() for h in first]
    chunk, seen = [], 0
    for r in rows:
        seen += 1
        if len(r) != len(header):
            raise StudyError(f"{path}: row {seen} has {len(r)} cells; expected {len(header)} "
                             "like the header")
        chunk.append(r)
        if len(chunk) == chunk_rows:
            yield check_designs(study, pd.DataFrame(chunk, columns=header, dtype=object),
                                str(path), model_range=True, first_row=seen - len(chunk) + 1)
            chunk = []
    if chunk or seen == 0:   # no rows at all: check_designs says so (after the columns)
        yield check_designs(study, pd.DataFrame(chunk, columns=header, dtype=object),
                            str(path), model_range=True, first_row=seen - len(chunk) + 1)


def read_designs_csv(study, path) -> pd.DataFrame:
    """Read a designs CSV file and check it; raises :class:`StudyError` on any problem."""
    from .evaluation import EVALUATE_CHUNK_ROWS
    chunks = list(iter_designs_csv(study, path, EVALUATE_CHUNK_ROWS))
    return chunks[0] if len(chunks) == 1 else pd.concat(chunks, ignore_index=True)


def parse_design_option(study, text: str) -> pd.DataFrame:
    """One design from the command line: ``"wing_loading_N_m2=1100 power_loading_N_kW=75
    aspect_ratio=8 flap=fowler"`` (spaces or commas between the pairs)."""
    pairs = {}
    example = " ".join(f"{c}=..." for c in design_columns(study))
    items = text.replace(",", " ").split()
    if not items:
        raise StudyError(f"--design: got {text!r} (empty); expected name=value pairs such as "
                         + example)
    for item in items:
        key, eq, value = item.partition("=")
        if not eq:
            raise StudyError(f"--design: got {item!r}; expected name=value pairs such as "
                             + example)
        key = key.strip()
        if key in pairs:
            raise StudyError(f"--design: {key!r} is given twice ({pairs[key]!r} and "
                             f"{value.strip()!r}); expected each name once")
        pairs[key] = value.strip()
    for k in pairs:
        if k not in design_columns(study):
            close = difflib.get_close_matches(k, design_columns(study), n=1)
            hint = f" (did you mean {close[0]!r}?)" if close else ""
            raise StudyError(f"--design: unknown name {k!r}{hint}; expected: "
                             + ", ".join(design_columns(study)))
    return check_designs(study, pd.DataFrame([pairs]), "--design", model_range=True)
