"""``evaluate(study, designs) -> DataFrame``: the sizing model with named columns.

The frame holds the design inputs, every sized number (SI, unit suffixes), one
``margin_<constraint>`` per active constraint (positive = met, as a fraction of its limit),
``feasible``, ``limiting_constraint`` (the smallest margin) and ``most_violated`` (the same,
when infeasible; empty otherwise), ``within_bounds`` and ``outside_bounds`` (which inputs lie
outside the study's variable bounds: such designs are evaluated but flagged).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from .columns import COLUMN_DOCS  # noqa: F401  (re-exported: the schema's glossary)
from .sizing import active_constraints, size_designs

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
    (``"fowler"``, ``"single_slotted+slats"``). Raises ``ValueError`` naming a missing column
    or an unknown flap name.
    """
    from .designs import check_designs
    table = check_designs(study, pd.DataFrame(designs))
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
