"""``run.json``: what a finished run was (versions, seed, budget, termination, counts, the
hypervolume reference, the caution). Written last: its presence marks a finished run."""

from __future__ import annotations

import json
import platform
import sys
from pathlib import Path

from . import files, names

VERSIONED_PACKAGES = ("optimiser", "pymoo", "numpy", "pandas", "scipy", "matplotlib", "pint",
                      "pyarrow")


def versions() -> dict:
    """Versions of Python and the packages a run depends on (a package already imported
    tells its own ``__version__``; the others are looked up in the installed metadata)."""
    from importlib import metadata
    out = {"python": platform.python_version()}
    for pkg in VERSIONED_PACKAGES:
        own = getattr(sys.modules.get(pkg), "__version__", None)
        if isinstance(own, str) and pkg != "optimiser":
            out[pkg] = own
            continue
        try:
            out[pkg] = metadata.version(pkg)
        except metadata.PackageNotFoundError:
            out[pkg] = None
    return out


def json_bytes(info: dict, **options) -> bytes:
    """``info`` as the project's JSON files are written: indented, with a final newline."""
    return (json.dumps(info, indent=2, **options) + "\n").encode()


def write_run_info(run_dir: Path, info: dict):
    files.write_atomic(Path(run_dir) / names.RUN_INFO, json_bytes(info))


def is_finished(run_dir) -> bool:
    """``run.json`` is there: the run ended and its outputs are written."""
    return (Path(run_dir) / names.RUN_INFO).is_file()


def read_run_info(run_dir) -> dict:
    return json.loads((Path(run_dir) / names.RUN_INFO).read_text("utf-8"))
