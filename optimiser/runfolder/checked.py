"""The checked readers' primitives: text, CSV tables and JSON objects of a run folder, each
failure one :class:`~optimiser.errors.RunError` line ``<path>: <what is wrong>; expected
<what>``.

A file that is missing (where it is required), empty, not UTF-8, not parsable as CSV or JSON,
has a missing or repeated column, a cell of the wrong kind, a non-finite number where a
finite one is required, or a JSON value of the wrong shape never reaches the caller as a
pandas, JSON or Unicode exception. The readers of each file (:mod:`~.reader`,
:mod:`~.archive`, :mod:`~.runinfo`) say what they require; these functions check it.
"""

from __future__ import annotations

import csv
import io
import math
from contextlib import contextmanager
from pathlib import Path

from ..errors import RunError

BOOL_TEXT = {"True": True, "False": False, "true": True, "false": False}
"""How a boolean cell is written (pandas writes True/False, Arrow true/false)."""


def fail(path, what: str, expected: str):
    """Raise the one-line error of a run-folder file."""
    raise RunError(f"{path}: {what}; expected {expected}")


def _reading(path, expected: str, read):
    """``read()``; a missing file, a folder or an unreadable file is one line."""
    try:
        return read()
    except FileNotFoundError:
        fail(path, "missing", expected)
    except IsADirectoryError:
        fail(path, "is a folder", expected)
    except OSError as exc:
        fail(path, f"cannot be read ({exc.strerror})", expected)


def read_bytes(path: Path, expected: str) -> bytes:
    """The bytes of a file that must be there and not empty."""
    data = _reading(path, expected, Path(path).read_bytes)
    if not data.strip():
        fail(path, "empty", expected)
    return data


def decode(path, data: bytes, expected: str) -> str:
    """``data`` as UTF-8 text; the first byte that is not UTF-8 is named."""
    try:
        text = data.decode("utf-8")
    except UnicodeDecodeError as exc:
        fail(path, f"not UTF-8 text (byte {exc.start})", expected)
    if "\x00" in text:
        fail(path, f"binary, not text (a NUL character at {text.index(chr(0))})", expected)
    return text


def read_text(path: Path, expected: str) -> str:
    """A UTF-8 text file that must be there and not empty."""
    return decode(path, read_bytes(path, expected), expected)


def header_columns(path, first_line: str, required, expected: str) -> list[str]:
    """The column names of a CSV header line; a repeated or missing required column fails."""
    try:
        cols = next(csv.reader([first_line]))
    except (csv.Error, StopIteration):
        fail(path, "the header line is not CSV", expected)
    seen = set()
    for c in cols:
        if c in seen:
            fail(path, f"column {c!r} appears {cols.count(c)} times", "each column once")
        seen.add(c)
    missing = [c for c in required if c not in seen]
    if missing:
        fail(path, f"no column {missing[0]!r}" + (f" (and {len(missing) - 1} more)"
                                                  if len(missing) > 1 else ""), expected)
    return cols


def first_line(path: Path, expected: str) -> str:
    """The first line of a text file (read alone: a large archive is not read twice)."""
    def head():
        with open(path, "rb") as fh:
            return fh.readline(1 << 20)
    line = _reading(path, expected, head)
    if not line.strip():
        fail(path, "empty" if not line else "the header line is empty", expected)
    return decode(path, line, expected).rstrip("\r\n")


@contextmanager
def csv_errors(path, expected: str):
    """Turn pandas' parse and decoding failures inside the block into one line."""
    import pandas as pd
    try:
        yield
    except UnicodeDecodeError as exc:
        fail(path, f"not UTF-8 text ({exc.reason})", expected)
    except pd.errors.EmptyDataError:
        fail(path, "empty", expected)
    except (pd.errors.ParserError, ValueError, csv.Error) as exc:
        fail(path, f"not readable as CSV ({one_line(exc)})", expected)


def parse_csv(path, source, expected: str, **options):
    """``pd.read_csv(source, **options)``; a parse or decoding failure is one line."""
    import pandas as pd
    with csv_errors(path, expected):
        return pd.read_csv(source, **options)


def read_table(path: Path, required, expected: str, **options):
    """A whole CSV file (UTF-8, not empty) with the ``required`` columns each there once:
    (table, its columns); ``options`` go to ``pd.read_csv``."""
    text = read_text(path, expected)
    cols = header_columns(path, text.split("\n", 1)[0].rstrip("\r"), required, expected)
    table = parse_csv(path, io.StringIO(text), expected, **options)
    if [str(c) for c in table.columns] != cols:
        fail(path, "rows have more cells than the header", expected)
    return table, cols


def one_line(exc) -> str:
    """The first line of an exception's message, shortened."""
    text = str(exc).strip().splitlines()
    text = text[0] if text else type(exc).__name__
    return text if len(text) <= 120 else text[:117] + "..."


def check_columns(path, frame, *, numeric=(), finite=(), boolean=(), choices=None,
                  row_offset=0):
    """Check the cells of ``frame`` (columns already known to be there) and convert them.

    ``numeric``: every cell a number (NaN allowed unless the column is also in ``finite``);
    ``finite``: every cell a finite number; ``boolean``: every cell true or false, converted
    to bool; ``choices``: {column: allowed values}. ``row_offset`` numbers the rows of a
    chunk (row 1 is the first data row of the file). Returns ``frame`` (converted)."""
    import numpy as np
    import pandas as pd
    for c in dict.fromkeys([*numeric, *finite]):
        col = frame[c]
        if not pd.api.types.is_numeric_dtype(col) or pd.api.types.is_bool_dtype(col):
            values = pd.to_numeric(col.astype(object), errors="coerce")
            bad = values.isna() & ~col.isna() | col.map(lambda v: isinstance(v, bool))
            if bad.any():
                i = int(np.flatnonzero(bad.to_numpy())[0])
                fail(path, f"row {row_offset + i + 1}, column {c!r}: got {str(col.iloc[i])!r}",
                     "a number")
            frame[c] = values.astype(float)
        if c in finite:
            x = frame[c].to_numpy(float)
            bad = ~np.isfinite(x)
            if bad.any():
                i = int(np.flatnonzero(bad)[0])
                got = "an empty cell" if np.isnan(x[i]) else f"{x[i]!r}"
                fail(path, f"row {row_offset + i + 1}, column {c!r}: got {got}",
                     "a finite number")
    for c in boolean:
        col = frame[c]
        if pd.api.types.is_bool_dtype(col):
            continue
        mapped = col.map(lambda v: BOOL_TEXT.get(v) if isinstance(v, str) else
                         (v if isinstance(v, (bool, np.bool_)) else None))
        bad = mapped.isna()
        if bad.any():
            i = int(np.flatnonzero(bad.to_numpy())[0])
            fail(path, f"row {row_offset + i + 1}, column {c!r}: got {str(col.iloc[i])!r}",
                 "true or false")
        frame[c] = mapped.astype(bool)
    for c, allowed in (choices or {}).items():
        allowed = sorted(set(allowed))
        col = frame[c]
        bad = ~col.isin(allowed)
        if bad.any():
            i = int(np.flatnonzero(bad.to_numpy())[0])
            fail(path, f"row {row_offset + i + 1}, column {c!r}: got {str(col.iloc[i])!r}",
                 "one of " + ", ".join(allowed))
    return frame


def read_json_object(path: Path, schema: dict, expected: str) -> dict:
    """A JSON file holding one object whose keys in ``schema`` ({key: type or tuple of
    types, or a nested schema dict}) are there with those types. Extra keys are kept."""
    import json
    text = read_text(path, expected)
    try:
        value = json.loads(text)
    except json.JSONDecodeError as exc:
        fail(path, f"not JSON ({exc.msg} at line {exc.lineno} column {exc.colno})", expected)
    except RecursionError:
        fail(path, "not JSON (nested too deeply)", expected)
    check_shape(path, value, schema, "", expected)
    return value


_TYPE_WORDS = {dict: "an object", list: "a list", str: "a text", bool: "true or false",
               int: "a whole number", float: "a number", type(None): "null"}


def _type_text(types) -> str:
    types = types if isinstance(types, tuple) else (types,)
    return " or ".join(dict.fromkeys(_TYPE_WORDS[t] for t in types))


def check_shape(path, value, schema, where: str, expected: str):
    """``value`` is an object with every key of ``schema`` of its type (recursively)."""
    if not isinstance(value, dict):
        fail(path, f"{where or 'the content'} is {_type_text(type(value))}, not an object",
             expected)
    for key, want in schema.items():
        name = f"{where}.{key}" if where else key
        if key not in value:
            fail(path, f"no key {name!r}", expected)
        got = value[key]
        if isinstance(want, dict):
            check_shape(path, got, want, name, expected)
            continue
        types = want if isinstance(want, tuple) else (want,)
        ok = isinstance(got, types) and not (isinstance(got, bool) and bool not in types)
        if ok and isinstance(got, float) and not math.isfinite(got):
            ok = False
        if not ok:
            fail(path, f"key {name!r} is {json_text(got)}", f"{_type_text(want)} ({expected})")


def json_text(value) -> str:
    import json
    text = json.dumps(value)
    return text if len(text) <= 40 else text[:37] + "..."
