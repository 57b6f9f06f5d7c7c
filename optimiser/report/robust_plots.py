"""Figures of a robustness study (``optimiser robust``): the trip-fuel spread over the
samples and the probability that each constraint is met (:mod:`optimiser.robust` computes
them).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from ..columns import plot_label
from ..robust import design_label
from . import palette
from .figures import pyplot, save


def plot_robustness(study, result, folder):
    """Write ``trip_fuel_spread`` and ``constraint_probability`` (PNG and SVG) in ``folder``."""
    plt = pyplot()
    folder = Path(folder)
    trip = result.samples["trip_fuel_kg"].to_numpy(float)
    t = result.trip_fuel.iloc[0]
    fig, ax = plt.subplots(figsize=(7, 4.4))
    ax.hist(trip, bins=60, color=palette.ROBUST_HISTOGRAM, edgecolor="white", linewidth=0.4,
            label=f"{result.n_samples} samples")
    ax.axvline(t["nominal_kg"], color=palette.ROBUST_NOMINAL, lw=1.5,
               label=f"study's values {t['nominal_kg']:.1f} kg")
    ax.axvline(t["mean_kg"], color=palette.ROBUST_MEAN, lw=1.2, ls="--",
               label=f"mean {t['mean_kg']:.1f} kg")
    for q, ls in (("p5_kg", ":"), ("p95_kg", ":")):
        ax.axvline(t[q], color=palette.ROBUST_QUANTILES, lw=1.0, ls=ls)
    ax.plot([], [], color=palette.ROBUST_QUANTILES, ls=":",
            label=f"5 % and 95 %: {t['p5_kg']:.1f}, {t['p95_kg']:.1f} kg")
    ax.set_xlabel(plot_label("trip_fuel_kg"))
    ax.set_ylabel("number of samples")
    ax.set_title(f"{study.name}: trip fuel spread\n{design_label(study, result.design.iloc[0])}",
                 fontsize=10)
    ax.legend(fontsize=8)
    fig.tight_layout()
    save(fig, folder / "trip_fuel_spread")

    c = result.constraints
    fig, ax = plt.subplots(figsize=(7, 0.45 * len(c) + 1.4))
    y = np.arange(len(c))[::-1]
    p = c["probability_met"].to_numpy(float)
    err = np.vstack([p - c["probability_low_95"].to_numpy(float),
                     c["probability_high_95"].to_numpy(float) - p])
    colours = [palette.probability_colour(v) for v in p]
    ax.barh(y, p, color=colours, xerr=err, capsize=3)
    ax.set_yticks(y, c["constraint"])
    ax.set_xlim(0, 1.05)
    ax.set_xlabel("probability the constraint is met [-] (whiskers: Wilson 95 % interval)")
    ax.set_title(f"{study.name}: probability each constraint is met", fontsize=10)
    for yi, v in zip(y, p):
        ax.text(min(v + 0.01, 0.9), yi, f"{v:.3f}", va="center", fontsize=8)
    fig.tight_layout()
    save(fig, folder / "constraint_probability")
