"""The figure and files of ``optimiser compare``: the fronts of several runs overlaid (the
first two shared objectives, each run's staircase and its knee design marked), and the
tables written beside it."""

from __future__ import annotations

from pathlib import Path

from ..display_units import SI, column_values, current_system, display_label
from . import palette
from .figures import finish_layout, pyplot, save

RUN_MARKERS = ("o", "s", "^", "D", "v", "P", "X", "*")
"""Marker of each compared run, in order (with :data:`palette.CAMPAIGN_COLOURS`)."""


def compare_fronts(cmp):
    """Fronts of the compared runs in the first two shared objectives, one colour and marker
    per run, each run's 2-objective staircase drawn, its knee design ringed; in the reader's
    units (:func:`~optimiser.display_units.current_system`; the tables stay SI)."""
    from .plots import LEGEND_OUTSIDE, _staircase
    plt = pyplot()
    ycol, xcol = cmp.objectives[0], cmp.objectives[1]
    converted = current_system() != SI
    fig, ax = plt.subplots(figsize=(10.2, 5.4))
    for k, (label, run) in enumerate(zip(cmp.labels, cmp.runs)):
        colour = palette.cycle_colour(k)
        marker = RUN_MARKERS[k % len(RUN_MARKERS)]
        front = run.front
        if converted and len(front):
            front = front.assign(**{c: column_values(c, front[c].to_numpy(float))
                                    for c in (xcol, ycol)})
        if not len(front):
            ax.plot([], [], ls="", marker="x", color=colour, label=f"{label}: no feasible design")
            continue
        stairs, _ = _staircase(front[xcol], front[ycol])
        ax.scatter(front[xcol], front[ycol], s=18, color=colour, marker=marker, alpha=0.55)
        ax.step(stairs[:, 0], stairs[:, 1], where="post", color=colour, lw=1.6,
                label=f"{label} ({run.study.name}, {len(front)} designs)")
        row = cmp.summary.iloc[k]
        knee = column_values(xcol, row[f"knee_{xcol}"]), column_values(ycol, row[f"knee_{ycol}"])
        ax.scatter([knee[0]], [knee[1]], s=140, facecolor="none",
                   edgecolor=colour, linewidth=2.0, zorder=4)
    ax.scatter([], [], s=140, facecolor="none", edgecolor="k", linewidth=2.0,
               label="ringed: each run's knee design")
    ax.set_xlabel(display_label(xcol))
    ax.set_ylabel(display_label(ycol))
    ax.grid(alpha=0.3)
    ax.legend(fontsize=7, title="run", title_fontsize=7, **LEGEND_OUTSIDE)
    ax.set_title("fronts compared (line: each run's designs that none of its others beats in "
                 "both plotted objectives)", fontsize=9)
    finish_layout(fig, " vs ".join(dict.fromkeys(r.study.name for r in cmp.runs)))
    return fig


def write_comparison(cmp, out: Path, force=False) -> Path:
    """Write ``compare.csv``, ``study_changes.csv`` and ``fronts.png/.svg`` in ``out``: the
    tables and the figure are made first, then the folder is built in a temporary sibling and
    renamed into place (:func:`~optimiser.runfolder.files.new_folder`); an existing folder is
    refused unless ``force`` (:func:`~optimiser.report.picks.refuse_existing`)."""
    from ..errors import DecideError
    from ..runfolder.files import csv_bytes, new_folder, write_atomic
    from .picks import refuse_existing
    out = Path(out)
    refuse_existing(out, force, "comparison")
    texts = {"compare.csv": csv_bytes(cmp.summary),
             "study_changes.csv": cmp.changes.to_csv(index=False).encode()}
    fig = compare_fronts(cmp)
    try:
        out.parent.mkdir(parents=True, exist_ok=True)   # results/ on a first comparison
    except OSError as exc:
        pyplot().close(fig)
        raise DecideError(f"--out {out}: cannot create {out.parent} ({exc.strerror}); "
                          "expected a writable folder") from None
    try:
        with new_folder(out, "the comparison") as tmp:
            for name, data in texts.items():
                write_atomic(tmp / name, data)
            save(fig, tmp / "fronts")
    finally:
        pyplot().close(fig)
    return out
