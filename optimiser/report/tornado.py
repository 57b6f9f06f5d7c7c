"""Tornado chart of a design's sensitivities (``optimiser sensitivity``): per output, the
change at each input's -step and +step, inputs ranked by the larger change (computed by
:mod:`optimiser.sensitivity`)."""

from __future__ import annotations

from pathlib import Path

import numpy as np

from ..display_units import column_values, display_label, to_display
from ..sensitivity import ranked
from . import palette
from .figures import finish_layout, pyplot, save

TORNADO_ROWS = 12
"""Inputs shown per panel (the largest effects)."""


def plot_tornado(study, table, outputs, stem, title: str):
    """Write ``<stem>.png`` and ``.svg``: one panel per output column of ``outputs``, the
    changes and steps in the reader's units (:func:`~optimiser.display_units.current_system`;
    changes, so no unit offset applies; the table stays SI)."""
    plt = pyplot()
    panels = [ranked(table, c).head(TORNADO_ROWS) for c in outputs]
    height = max(len(p) for p in panels) * 0.32 + 1.8
    fig, axes = plt.subplots(1, len(panels), figsize=(5.2 * len(panels), height), squeeze=False)
    minus = palette.OKABE_ITO["blue"]
    plus = palette.OKABE_ITO["vermillion"]
    for ax, part, column in zip(axes[0], panels, outputs):
        y = np.arange(len(part))[::-1]
        labels = [f"{r.input} ({_step(r)})" for r in part.itertuples()]
        ax.barh(y, column_values(column, part["change_minus"]), color=minus, height=0.6,
                label="input lowered by the step")
        ax.barh(y, column_values(column, part["change_plus"]), color=plus, height=0.6,
                alpha=0.85, label="input raised by the step")
        ax.axvline(0.0, color="k", lw=0.8)
        ax.set_yticks(y, labels, fontsize=8)
        nominal = column_values(column, float(part["output_value"].iloc[0]) if len(part)
                                else float("nan"))
        ax.set_xlabel(f"change of {display_label(column)}\n(at the study's values: "
                      f"{nominal:.4g})", fontsize=9)
    axes[0][0].legend(loc="upper left", bbox_to_anchor=(0.0, -0.28), fontsize=8, ncol=2,
                      frameon=False)
    fig.suptitle(title, fontsize=10)
    finish_layout(fig, study.name)
    return save(fig, Path(stem))


INPUT_DISPLAY = {"design range": {"quantity": "range"},
                 "climb rate": {"column": "climb_rate_m_s"}}
"""Inputs of :data:`optimiser.sensitivity.REQUIREMENTS` shown in another US unit than their
SI unit's default (the range in nmi, the climb rate in ft/min)."""


def _step(row) -> str:
    """``±<step> <unit>`` of an input in the reader's units (SI: the table's unit as it is)."""
    step, unit = to_display(row.step, row.input_unit, **INPUT_DISPLAY.get(row.input, {}))
    unit = "" if unit == "-" else f" {unit}"
    return f"±{step:.3g}{unit}"
