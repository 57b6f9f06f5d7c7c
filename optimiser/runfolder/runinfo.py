"""``run.json``: what a finished run was (versions, seed, budget, termination, counts, the
hypervolume reference, the caution). Written last: its presence marks a finished run."""

from __future__ import annotations

import json
import math
import platform
import sys
from pathlib import Path

from . import checked, files, names

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


RUN_INFO_SCHEMA = {
    "study": str, "seed": int, "method": str, "objectives": list, "termination_text": str,
    "n_evaluations": int, "n_feasible": int, "front_size": int, "feasible_found": bool,
    "message": str,
    "hypervolume": {"final": (int, float), "ideal": list, "nadir": list,
                    "reference_point_normalised": list},
}
"""The keys of run.json its readers use, and their types (a nested dict: an object)."""
RUN_INFO_EXPECTED = "the run.json of a finished run (a JSON object written by 'optimiser run')"


def read_run_info(run_dir, study=None) -> dict:
    """A run's ``run.json``, checked against :data:`RUN_INFO_SCHEMA`; with ``study`` its
    objectives must be the study's and the hypervolume scales one finite number per
    objective. :class:`~optimiser.errors.RunError` (one line) otherwise."""
    path = Path(run_dir) / names.RUN_INFO
    info = checked.read_json_object(path, RUN_INFO_SCHEMA, RUN_INFO_EXPECTED)
    for key in ("n_evaluations", "n_feasible", "front_size"):
        if info[key] < 0:
            checked.fail(path, f"key {key!r} is {info[key]}", "0 or more")
    if info["feasible_found"] != (info["front_size"] > 0):
        checked.fail(path, f"'feasible_found' is {json.dumps(info['feasible_found'])} with "
                     f"'front_size' {info['front_size']}", "a front size above 0 exactly "
                     "when a feasible design was found")
    if study is not None:
        check_run_info_study(run_dir, info, study)
    return info


def check_run_info_study(run_dir, info: dict, study):
    """A ``run.json`` already read (:func:`read_run_info`) agrees with its study: the same
    objectives, and hypervolume scales of one finite number per objective, the nadir above
    the ideal. :class:`~optimiser.errors.RunError` (one line) otherwise."""
    path = Path(run_dir) / names.RUN_INFO
    objectives = list(study.objective_columns())
    if info["objectives"] != objectives:
        checked.fail(path, f"key 'objectives' is {checked.json_text(info['objectives'])}",
                     f"the objectives of its study.toml, {checked.json_text(objectives)}")
    for key in ("ideal", "nadir", "reference_point_normalised"):
        values = info["hypervolume"][key]
        if len(values) != len(objectives) or not all(
                isinstance(v, (int, float)) and not isinstance(v, bool) and math.isfinite(v)
                for v in values):
            checked.fail(path, f"key 'hypervolume.{key}' is {checked.json_text(values)}",
                         f"{len(objectives)} finite numbers, one per objective")
    hv = info["hypervolume"]
    if not all(n > i for i, n in zip(hv["ideal"], hv["nadir"])):
        checked.fail(path, f"key 'hypervolume.nadir' is {checked.json_text(hv['nadir'])} with "
                     f"'ideal' {checked.json_text(hv['ideal'])}", "a nadir above the ideal "
                     "in every objective")
