"""Figures of a robustness study (``optimiser robust``): the trip-fuel spread over the
samples and the probability that each constraint is met (:mod:`optimiser.robust` computes
them).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from ..display_units import column_display, column_values, display_label
from ..robust import design_label
from . import palette
from .figures import finish_layout, pyplot, save


def plot_robustness(study, result, folder):
    """Write ``trip_fuel_spread`` and ``constraint_probability`` (PNG and SVG) in ``folder``;
    in the frozen mode also ``fuel_on_board_spread``, the titles name the mode, the legends
    sit below the axes and a footer carries the caution (a re-sizing run's figures are drawn
    exactly as before, so their files compare with earlier ones)."""
    plt = pyplot()
    folder = Path(folder)
    frozen = result.mode == "frozen"
    tag = " (frozen airplane)" if frozen else ""
    _spread(plt, study, result, "trip_fuel_kg", result.trip_fuel.iloc[0],
            f"{study.name}: trip fuel spread{tag}", folder / "trip_fuel_spread")
    if frozen:
        _spread(plt, study, result, "fuel_on_board_kg", result.fuel_on_board.iloc[0],
                f"{study.name}: fuel on board at maximum takeoff mass{tag}",
                folder / "fuel_on_board_spread")

    c = result.constraints
    fig, ax = plt.subplots(figsize=(7.8 if frozen else 7, 0.45 * len(c) + 1.4))
    y = np.arange(len(c))[::-1]
    p = c["probability_met"].to_numpy(float)
    err = np.vstack([p - c["probability_low_95"].to_numpy(float),
                     c["probability_high_95"].to_numpy(float) - p])
    colours = [palette.probability_colour(v) for v in p]
    ax.barh(y, p, color=colours, xerr=err, capsize=3)
    if frozen:  # the constraints in words, the values clear of the whiskers, a colour key
        names = ["every constraint at once" if n == "all" else n.replace("_", " ")
                 for n in c["constraint"]]
        ax.set_yticks(y, names, fontsize=8)
        for yi, v, lo, hi in zip(y, p, err[0], err[1]):
            if v + hi + 0.015 <= 0.9:  # right of the whisker, else inside the bar, left of it
                ax.text(v + hi + 0.015, yi, f"{v:.3f}", va="center", fontsize=8)
            else:
                ax.text(v - lo - 0.015, yi, f"{v:.3f}", va="center", ha="right", fontsize=8)
        from matplotlib.patches import Patch
        keys = [Patch(color=colour, label=f"at least {threshold * 100:.0f} %" if threshold > 0
                      else "below 50 %") for colour, threshold in palette.PROBABILITY_MET]
        ax.legend(handles=keys, fontsize=8, loc="upper left", bbox_to_anchor=(0.0, -0.12),
                  ncol=3, frameon=False, title="probability met", title_fontsize=8)
    else:
        ax.set_yticks(y, c["constraint"])
    ax.set_xlim(0, 1.05)
    ax.set_xlabel("probability the constraint is met [-] (whiskers: Wilson 95 % interval)")
    ax.set_title(f"{study.name}: probability each constraint is met{tag}", fontsize=10)
    if not frozen:
        for yi, v in zip(y, p):
            ax.text(min(v + 0.01, 0.9), yi, f"{v:.3f}", va="center", fontsize=8)
    _layout(fig, study, frozen)
    save(fig, folder / "constraint_probability")


def _spread(plt, study, result, column, t, title, path):
    """Histogram of one mass column of the samples with its nominal, mean, 5 % and 95 %, in
    the reader's units (:func:`~optimiser.display_units.current_system`; SI: as they are)."""
    _, unit = column_display(column, 0.0)
    values = column_values(column, result.samples[column].to_numpy(float))
    t = {k: column_values(column, t[k]) for k in ("nominal_kg", "mean_kg", "p5_kg", "p95_kg")}
    frozen = result.mode == "frozen"
    fig, ax = plt.subplots(figsize=(7.8, 5.2) if frozen else (7, 4.4))  # room for the footer
    ax.hist(values, bins=60, color=palette.ROBUST_HISTOGRAM, edgecolor="white", linewidth=0.4,
            label=f"{result.n_samples} samples")
    ax.axvline(t["nominal_kg"], color=palette.ROBUST_NOMINAL, lw=1.5,
               label=f"study's values {t['nominal_kg']:.1f} {unit}")
    ax.axvline(t["mean_kg"], color=palette.ROBUST_MEAN, lw=1.2, ls="--",
               label=f"mean {t['mean_kg']:.1f} {unit}")
    for q, ls in (("p5_kg", ":"), ("p95_kg", ":")):
        ax.axvline(t[q], color=palette.ROBUST_QUANTILES, lw=1.0, ls=ls)
    ax.plot([], [], color=palette.ROBUST_QUANTILES, ls=":",
            label=f"5 % and 95 %: {t['p5_kg']:.1f}, {t['p95_kg']:.1f} {unit}")
    ax.set_xlabel(display_label(column))
    ax.set_ylabel("number of samples")
    ax.set_title(f"{title}\n{design_label(study, result.design.iloc[0])}", fontsize=10)
    if frozen:
        ax.legend(fontsize=8, loc="upper left", bbox_to_anchor=(0.0, -0.14), ncol=2,
                  frameon=False)
    else:
        ax.legend(fontsize=8)
    _layout(fig, study, frozen)
    save(fig, path)


def _layout(fig, study, frozen: bool):
    if frozen:
        finish_layout(fig, study.name)
    else:
        fig.tight_layout()
