"""Reading and checking a designs table (CSV) for ``evaluate``."""

from __future__ import annotations

import csv
import difflib
import math
from pathlib import Path

import pandas as pd

from .evaluation import design_columns
from .sizing.inputs import MODEL_RANGES, range_text
from .study import StudyError


def check_designs(study, table: pd.DataFrame, source: str = "designs",
                  model_range: bool = False) -> pd.DataFrame:
    """Check columns, numbers and flap names; return the table with float columns.

    Raises :class:`StudyError` (one line) naming the column, row and value at fault: a
    number that is not finite and positive, and with ``model_range`` (the command line's
    designs) one outside the model's valid range (:data:`~optimiser.sizing.inputs.MODEL_RANGES`),
    which the model would size at the nearest limit and flag ``outside_model_range``.
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
    for c in need[:3]:
        r = MODEL_RANGES[c]
        values = []
        for i, v in enumerate(table[c].tolist()):
            where = f"{source}: " + (f"row {i + 1}, " if len(table) > 1 or source != "--design"
                                     else "") + f"column {c!r}"
            try:
                x = float(str(v).strip()) if not isinstance(v, (int, float)) else float(v)
            except ValueError:
                expected = f"a number {range_text(c)}" if model_range else "a number"
                raise StudyError(f"{where}: got {v!r}; expected {expected}") from None
            if model_range and not (math.isfinite(x) and r.lower <= x <= r.upper):
                raise StudyError(f"{where}: got {v!r}; expected a "
                                 + ("" if math.isfinite(x) else "finite ")
                                 + f"number {range_text(c)}")
            if not math.isfinite(x) or x <= 0:
                raise StudyError(f"{where}: got {v!r}; expected a finite positive number")
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
            raise StudyError(f"{source}: row {i + 1}, column 'flap': unknown flap type "
                             f"{name!r}{hint}; expected one of: " + ", ".join(base)
                             + ", optionally followed by '+slats'")
        flaps.append(name)
    table["flap"] = flaps
    return table


def read_designs_csv(study, path) -> pd.DataFrame:
    """Read a designs CSV file and check it; raises :class:`StudyError` on any problem."""
    p = Path(path)
    try:
        raw = p.read_bytes()
    except OSError as exc:
        raise StudyError(f"{path}: cannot read the designs file ({exc.strerror})") from None
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise StudyError(f"{path}: byte {exc.start} is not UTF-8; expected a UTF-8 CSV "
                         "file") from None
    try:
        rows = list(csv.reader(text.splitlines()))
    except csv.Error as exc:   # e.g. a field over the csv module's size limit
        raise StudyError(f"{path}: not a readable CSV table ({exc}); expected a header "
                         + ",".join(design_columns(study)) + " and design rows") from None
    rows = [r for r in rows if any(cell.strip() for cell in r)]
    if not rows:
        raise StudyError(f"{path}: the file is empty; expected a header "
                         + ",".join(design_columns(study)) + " and design rows")
    header = [h.strip() for h in rows[0]]
    for i, r in enumerate(rows[1:]):
        if len(r) != len(header):
            raise StudyError(f"{path}: row {i + 1} has {len(r)} cells; expected {len(header)} "
                             "like the header")
    table = pd.DataFrame(rows[1:], columns=header, dtype=object)
    return check_designs(study, table, str(path), model_range=True)


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
