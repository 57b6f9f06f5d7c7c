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
        import matplotlib.pyplot as plt
        _PYPLOT = plt
    return _PYPLOT


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
        fig.savefig(buf, format=ext, dpi=dpi)
        write_atomic(path, buf.getvalue())
        written.append(path)
    pyplot().close(fig)
    return written


def png_data_uri(fig, dpi=100) -> str:
    """``fig`` as a base64 PNG ``data:`` URI (for the self-contained report), then closed."""
    import base64
    import io
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=dpi)
    pyplot().close(fig)
    return "data:image/png;base64," + base64.b64encode(buf.getvalue()).decode("ascii")
