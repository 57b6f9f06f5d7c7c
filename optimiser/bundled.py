"""The bundled demo studies: find them, list them, copy one as the start of one's own.

They ship inside the package as ``optimiser.problems`` (in the repository that package is the
top-level ``problems/`` folder, mapped by pyproject.toml: one copy) and are found with
:mod:`importlib.resources`, so an editable install in a clone and a regular install of the
wheel find the same files. A bundled file is named by its file name without ``.toml``
(``high_strip_utility``, ``strip_requirements.campaign``).

A study ``NAME.toml`` may have sample designs beside it, ``NAME_designs.csv`` (the default of
``optimiser evaluate``); a campaign names its base study relative to itself (``base_study``).
:func:`copy_bundled` copies those along, so the copies refer to each other as the originals do.
"""

from __future__ import annotations

from importlib import resources
from pathlib import Path

from .errors import StudyError

try:  # Python 3.11+
    import tomllib
except ModuleNotFoundError:  # pragma: no cover - Python 3.10
    import tomli as tomllib

BUNDLED_PACKAGE = "optimiser.problems"
CAMPAIGN_SUFFIX = ".campaign"


def bundled_folder() -> Path:
    """The folder holding the bundled studies (``problems/`` in a clone)."""
    folder = resources.files(BUNDLED_PACKAGE)
    if not isinstance(folder, Path):  # pragma: no cover - only for a zipped install
        raise StudyError(f"the bundled studies are inside {folder}; expected an unzipped "
                         "install (pip installs wheels unzipped)")
    return folder


def bundled_names() -> list[str]:
    """Names of the bundled studies and campaigns, sorted (studies first)."""
    names = [p.name[:-len(".toml")] for p in bundled_folder().glob("*.toml")]
    return sorted(names, key=lambda n: (n.endswith(CAMPAIGN_SUFFIX), n))


def bundled_path(name: str) -> Path:
    """Path of the bundled study or campaign ``name`` (``.toml`` optional)."""
    stem = name[:-len(".toml")] if name.endswith(".toml") else name
    path = bundled_folder() / f"{stem}.toml"
    if stem in bundled_names():
        return path
    raise StudyError(f"no bundled study named {name!r}; expected one of "
                     f"{', '.join(bundled_names())} (in {bundled_folder()})")


def _read_toml(path: Path) -> dict:
    try:
        return tomllib.loads(path.read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError, tomllib.TOMLDecodeError) as exc:
        raise StudyError(f"{path}: cannot read the bundled file ({exc})") from None


def describe_bundled() -> list[tuple[str, str, str]]:
    """``(name, kind, description)`` of every bundled file; kind is study or campaign."""
    rows = []
    for name in bundled_names():
        data = _read_toml(bundled_folder() / f"{name}.toml")
        kind = "campaign" if name.endswith(CAMPAIGN_SUFFIX) else "study"
        rows.append((name, kind, str(data.get("description", ""))))
    return rows


def companion_files(name: str) -> list[Path]:
    """The bundled files that copying ``name`` needs: the file itself, a study's sample
    designs, and for a campaign its base study (with that study's designs)."""
    path = bundled_path(name)
    files = [path]
    if path.stem.endswith(CAMPAIGN_SUFFIX):
        base = _read_toml(path).get("base_study")
        base_path = path.parent / str(base)
        if not isinstance(base, str) or base_path.parent != path.parent or \
                not base_path.is_file():  # pragma: no cover - the bundled files are tested
            raise StudyError(f"{path}: base_study: got {base!r}; expected a bundled study")
        path = base_path
        files.append(path)
    designs = path.with_name(path.stem + "_designs.csv")
    if designs.is_file():
        files.append(designs)
    return files


def copy_bundled(name: str, folder=".") -> list[Path]:
    """Copy the bundled ``name`` and its companions (:func:`companion_files`) byte for byte,
    comments included, into ``folder`` (made if missing). Refuses, before writing anything,
    when any of the files already exists there. Returns the paths written."""
    sources = companion_files(name)
    folder = Path(folder)
    if folder.exists() and not folder.is_dir():
        raise StudyError(f"{folder}: is a file; expected a folder to copy {name!r} into")
    targets = [folder / src.name for src in sources]
    for target in targets:
        if target.exists():
            raise StudyError(f"{target}: exists; expected no file of that name (copying "
                             f"{name!r} never replaces a file: remove it or give another "
                             "folder)")
    try:
        folder.mkdir(parents=True, exist_ok=True)
        for src, target in zip(sources, targets):
            with open(target, "xb") as out:  # exclusive: never replaces a file
                out.write(src.read_bytes())
    except OSError as exc:
        raise StudyError(f"{folder}: cannot write the copy ({exc.strerror or exc})") from None
    return targets


__all__ = ["BUNDLED_PACKAGE", "bundled_folder", "bundled_names", "bundled_path",
           "companion_files", "copy_bundled", "describe_bundled"]
