"""File primitives of the run folder: atomic replacement, appending, fsync, CSV bytes.

Every file of a run folder is written by :func:`write_atomic` (a complete temporary file in
the same folder, fsync, rename) or appended by :func:`append` (the archive and the history,
kept open while a loop runs). An ``OSError`` always names the file it concerns.
"""

from __future__ import annotations

import os
import re
import threading
from contextlib import contextmanager
from datetime import datetime, timezone
from pathlib import Path

_TEMPORARY = re.compile(r"^\.(.+)\.tmp-\d+$")


def utc_now() -> str:
    """The UTC time now, ``YYYY-MM-DDTHH:MM:SSZ``."""
    return datetime.now(timezone.utc).strftime("%Y-%m-%dT%H:%M:%SZ")


def fsync_dir(folder: Path):
    """fsync a folder (so a rename in it is on disk); silently skipped where not possible."""
    try:
        fd = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:
        pass
    finally:
        os.close(fd)


def temporary_path(path: Path) -> Path:
    """The temporary file of an atomic write of ``path`` by this process."""
    return path.with_name(f".{path.name}.tmp-{os.getpid()}")


def temporary_glob(name: str) -> str:
    """A glob for the temporary files of atomic writes of ``name`` (any process)."""
    return f".{name}.tmp-*"


def target_name(name: str) -> str:
    """The file an atomic write's temporary file ``name`` stood for (else ``name``)."""
    return _TEMPORARY.sub(r"\1", name)


def write_atomic(path: Path, data: bytes, before_replace=None):
    """Write ``data`` to ``path`` atomically: temp file in the same folder, fsync, replace.
    ``before_replace()`` (if given) is called between the fsync and the replace."""
    path = Path(path)
    tmp = temporary_path(path)
    try:
        with open(tmp, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        if before_replace is not None:
            before_replace()
        os.replace(tmp, path)
    except OSError as exc:
        raise named(exc, path) from None
    finally:
        remove_quietly(tmp)
    fsync_dir(path.parent)


def remove_quietly(path: Path):
    """Remove a file or a folder tree if it is there; a failure is ignored (called from
    error handlers, which must never replace the first error with their own)."""
    import shutil
    try:
        if path.is_dir() and not path.is_symlink():
            shutil.rmtree(path, ignore_errors=True)
        else:
            path.unlink(missing_ok=True)
    except OSError:
        pass


@contextmanager
def new_folder(target: Path, what: str = "the output"):
    """Build a folder complete before it appears: yields a temporary sibling
    ``.<name>.tmp-<pid>`` to write into; on success the folder is renamed into place (an
    existing ``target`` is renamed aside first and removed only after the new one is in
    place). On any failure the temporary folder is removed and ``target`` is left as it was;
    an ``OSError`` (a read-only or full disk) becomes one :class:`RunError` line.

    The caller decides beforehand whether an existing ``target`` may be replaced."""
    from ..errors import RunError
    target = Path(target)
    tmp = temporary_path(target)
    aside = target.with_name(f".{target.name}.old-{os.getpid()}")
    remove_quietly(tmp)
    try:
        tmp.mkdir()
    except OSError as exc:
        raise RunError(f"{target}: cannot create {what} in {target.parent} ({exc.strerror}); "
                       "expected a writable folder") from None
    try:
        yield tmp
        fsync_dir(tmp)
        if target.exists():
            os.rename(target, aside)
            try:
                os.rename(tmp, target)
            except OSError:
                os.rename(aside, target)
                raise
            remove_quietly(aside)
        else:
            os.rename(tmp, target)
        fsync_dir(target.parent)
    except OSError as exc:
        remove_quietly(tmp)
        where = exc.filename or target
        raise RunError(f"{where}: cannot write {what} ({exc.strerror}); expected a writable "
                       f"folder with free space ({target} is left as it was)") from None
    except BaseException:
        remove_quietly(tmp)
        raise


def named(exc: OSError, path) -> OSError:
    """The error with the file it concerns (a failed write() names none)."""
    return exc if exc.filename else OSError(exc.errno, exc.strerror, str(path))


def sync(path: Path):
    """fsync a file that is (or was) appended to."""
    with open(path, "rb+") as fh:
        os.fsync(fh.fileno())


def truncate(path: Path, length: int):
    """Cut ``path`` back to ``length`` bytes."""
    with open(path, "rb+") as fh:
        fh.truncate(length)


def csv_bytes(frame) -> bytes:
    """``frame`` as CSV with a header (UTF-8), by Apache Arrow's writer: every float in its
    shortest exact form (it reads back to the same float), about six times faster than
    pandas' writer on a front of some hundred rows and ~90 columns. Text is not quoted (our
    names hold no commas); a cell that would need quotes takes pandas' writer instead."""
    import io

    import pyarrow as pa
    import pyarrow.csv as pa_csv
    names = [str(c) for c in frame.columns]
    if any(("," in c) or ('"' in c) or ("\n" in c) for c in names):
        return frame.to_csv(index=False).encode("utf-8")
    buf = io.BytesIO()
    buf.write((",".join(names) + "\n").encode("utf-8"))
    try:
        pa_csv.write_csv(pa.Table.from_pandas(frame, preserve_index=False), buf,
                         pa_csv.WriteOptions(include_header=False, quoting_style="none"))
    except (pa.ArrowInvalid, pa.ArrowTypeError):
        return frame.to_csv(index=False).encode("utf-8")
    return buf.getvalue()


_APPENDING = threading.local()
"""Per thread (runs of a campaign may share a process): ``files``, the files the run loop
appends to, kept open while it runs (see :func:`close_appended`)."""


def _open_files() -> dict:
    files = getattr(_APPENDING, "files", None)
    if files is None:
        files = _APPENDING.files = {}
    return files


def append(path: Path, text) -> int:
    """Append ``text`` (str, written as UTF-8, or bytes), flush it to the operating system
    and return the file's length. The file stays open until :func:`close_appended`."""
    data = text.encode("utf-8") if isinstance(text, str) else text
    key = os.path.abspath(path)
    files = _open_files()
    try:
        fh = files.get(key)
        if fh is None:
            fh = files[key] = open(path, "ab")
        fh.write(data)
        fh.flush()
        return fh.tell()
    except OSError as exc:
        close_appended()
        raise named(exc, path) from None


def close_appended():
    """Close the files :func:`append` keeps open (the end of a loop, or an error)."""
    files = _open_files()
    while files:
        _, fh = files.popitem()
        try:
            fh.close()
        except OSError:
            pass
