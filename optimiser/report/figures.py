"""The one place where matplotlib is set up and figures are saved.

Every figure of the package is drawn with :func:`pyplot` (the non-interactive Agg backend,
selected once, on first use: matplotlib stays out of ``optimiser --help``) and written with
:func:`save` (PNG and SVG side by side, then the figure is closed). Colours come from
:mod:`optimiser.report.palette`.
"""

from __future__ import annotations

from pathlib import Path

FORMATS = ("png", "svg")
"""File formats every saved figure is written in."""
DPI = 130
"""Resolution of saved run, pick, flap and robustness figures [dots per inch]."""


_PYPLOT = None


def pyplot():
    """``matplotlib.pyplot`` on the Agg backend (no window, no ``plt.show()``), set up on the
    first call."""
    global _PYPLOT
    if _PYPLOT is None:
        import matplotlib
        matplotlib.use("Agg")
        # SVG text stays text (searchable, smaller), not outlines
        matplotlib.rcParams["svg.fonttype"] = "none"
        # the same figure gives the same bytes: fixed ids in SVG (no random salt)
        matplotlib.rcParams["svg.hashsalt"] = "optimiser"
        import matplotlib.pyplot as plt
        _PYPLOT = plt
    return _PYPLOT


FOOTER_FONT_SIZE = 6.5
FOOTER_INCHES = 0.22
"""Height kept free at the bottom of a figure for the footer line [inch]."""


def footer(fig, study_name: str, run_utc: str | None = None):
    """The footer every figure carries: the study, the run's start time (UTC) and the
    one-line caution."""
    from ..evaluation import CAUTION_SHORT
    from .palette import NOTE_TEXT
    parts = [f"study {study_name}"] + ([f"run started {run_utc}"] if run_utc else [])
    text = fig.text(0.006, 0.008, "  ·  ".join([*parts, CAUTION_SHORT]),
                    fontsize=FOOTER_FONT_SIZE, color=NOTE_TEXT, ha="left", va="bottom")
    # a figure too narrow for the line gets the caution on a line of its own (never cut off)
    width = text.get_window_extent(fig.canvas.get_renderer()).width
    if width > 0.985 * fig.bbox.width:
        text.set_text("  ·  ".join(parts) + "\n" + CAUTION_SHORT)


def finish_layout(fig, study_name: str, run_utc: str | None = None):
    """Tight layout above the footer line, then the footer."""
    fig.tight_layout(rect=(0, FOOTER_INCHES / fig.get_figheight(), 1, 1))
    footer(fig, study_name, run_utc)


def save(fig, stem, dpi=DPI) -> list[Path]:
    """Write ``fig`` as ``<stem>.png`` and ``<stem>.svg``, close it, return the paths. Each
    file is rendered in memory and written atomically (never through a link, see
    :func:`optimiser.runfolder.files.write_atomic`)."""
    import io

    from ..runfolder.files import write_atomic
    written = []
    for ext in FORMATS:
        path = Path(f"{stem}.{ext}")
        buf = io.BytesIO()
        fig.savefig(buf, format=ext, dpi=dpi, metadata=_NO_DATE[ext])
        write_atomic(path, buf.getvalue())
        written.append(path)
    pyplot().close(fig)
    return written


_NO_DATE = {"svg": {"Date": None}, "png": {}}
"""savefig metadata: no creation date in an SVG (the same figure gives the same bytes)."""


def svg_data_uri(fig) -> str:
    """``fig`` as a base64 SVG ``data:`` URI (crisp at any zoom, for the self-contained
    report; a dense cloud of points stays rasterised inside it), then closed."""
    import base64
    import io
    buf = io.BytesIO()
    fig.savefig(buf, format="svg", dpi=DPI, metadata=_NO_DATE["svg"])
    pyplot().close(fig)
    return "data:image/svg+xml;base64," + base64.b64encode(buf.getvalue()).decode("ascii")


def png_data_uri(fig, dpi=100) -> str:
    """``fig`` as a base64 PNG ``data:`` URI (for the self-contained report), then closed."""
    import base64
    import io
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=dpi)
    pyplot().close(fig)
    return "data:image/png;base64," + base64.b64encode(buf.getvalue()).decode("ascii")
