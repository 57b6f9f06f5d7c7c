"""File primitives of the run folder: atomic replacement, appending, fsync, CSV bytes.

Every file of a run folder is written by :func:`write_atomic` (a complete temporary file in
the same folder, fsync, rename) or appended by :func:`append` (the archive and the history,
kept open while a loop runs). An ``OSError`` always names the file it concerns.

No write goes through a link: a file this module writes, appends to, truncates or replaces
must be a regular file (or not exist yet), and a folder it writes into (:func:`make_folder`)
a real folder; a symbolic link, a folder, a named pipe or a device in its place is refused
with one line (:func:`refuse_unless_regular`, a :class:`~optimiser.errors.RunError`) before
anything is written. Files are opened with ``O_NOFOLLOW`` (and ``O_NONBLOCK``, so a named
pipe never hangs the open); :func:`write_atomic`'s ``os.replace`` renames over the name
itself and never follows a link there. The run folder itself may be a link (results kept
on another disk): only the names inside it are checked.
"""

from __future__ import annotations

import os
import re
import stat
import threading
from contextlib import contextmanager
from datetime import datetime, timezone
from pathlib import Path

from ..errors import RunError

_TEMPORARY = re.compile(r"^\.(.+)\.tmp-\d+$")
_NOFOLLOW = getattr(os, "O_NOFOLLOW", 0)
_NONBLOCK = getattr(os, "O_NONBLOCK", 0)
_CLOEXEC = getattr(os, "O_CLOEXEC", 0)

_KINDS = ((stat.S_ISREG, "a file"), (stat.S_ISDIR, "a folder"), (stat.S_ISFIFO, "a named pipe"),
          (stat.S_ISSOCK, "a socket"), (stat.S_ISCHR, "a character device"),
          (stat.S_ISBLK, "a block device"))


def _kind(mode) -> str:
    return next((text for test, text in _KINDS if test(mode)), "not a regular file")


def refuse_unless_regular(path):
    """:class:`RunError` (one line) if ``path`` is a symbolic link or anything but a regular
    file; nothing if it is a regular file or does not exist."""
    try:
        st = os.lstat(path)
    except FileNotFoundError:
        return
    if stat.S_ISLNK(st.st_mode):
        try:
            target = f" (to {os.readlink(path)})"
        except OSError:
            target = ""
        raise RunError(f"{path}: is a symbolic link{target}; expected a regular file: the "
                       "files of a run folder are never written through a link (replace the "
                       "link with a copy of the file, or remove it)")
    if not stat.S_ISREG(st.st_mode):
        raise RunError(f"{path}: is {_kind(st.st_mode)}, not a regular file; expected a "
                       "regular file (or none) under this name in the run folder")


def make_folder(path) -> Path:
    """Create the folder ``path`` (its parent exists) unless it is there; :class:`RunError`
    (one line) if a symbolic link or a file stands under its name (nothing is written
    through it)."""
    path = Path(path)
    try:
        st = os.lstat(path)
    except FileNotFoundError:
        path.mkdir(exist_ok=True)
        return path
    if stat.S_ISLNK(st.st_mode):
        raise RunError(f"{path}: is a symbolic link; expected a folder: nothing is written "
                       "through a link in a run folder (remove the link)")
    if not stat.S_ISDIR(st.st_mode):
        raise RunError(f"{path}: is {_kind(st.st_mode)}, not a folder; expected a folder "
                       "(or none) under this name")
    return path


def _open_regular(path, flags: int) -> int:
    """``os.open`` that never follows a link and never waits on a pipe; the file must be a
    regular file (else :class:`RunError`)."""
    refuse_unless_regular(path)
    try:
        fd = os.open(path, flags | _NOFOLLOW | _NONBLOCK | _CLOEXEC, 0o644)
    except OSError:
        refuse_unless_regular(path)  # replaced by a link or a pipe since the check
        raise
    if not stat.S_ISREG(os.fstat(fd).st_mode):
        os.close(fd)
        refuse_unless_regular(path)
        raise RunError(f"{path}: not a regular file; expected a regular file")
    if _NONBLOCK:
        try:
            import fcntl
            fcntl.fcntl(fd, fcntl.F_SETFL, fcntl.fcntl(fd, fcntl.F_GETFL) & ~_NONBLOCK)
        except (ImportError, OSError):  # pragma: no cover - no effect on regular files
            pass
    return fd


SOURCE_DATE_EPOCH = "SOURCE_DATE_EPOCH"
"""Environment variable of the reproducible-builds convention (reproducible-builds.org,
"SOURCE_DATE_EPOCH" specification): when it holds a whole number of seconds since 1970, the
times a run records and prints (run.json, the figures' footers) read that instant, so two
runs give identical files (benchmarks/identical_outputs.py sets it)."""


def utc_now() -> str:
    """The UTC time now, ``YYYY-MM-DDTHH:MM:SSZ`` (or :data:`SOURCE_DATE_EPOCH`'s)."""
    fixed = os.environ.get(SOURCE_DATE_EPOCH, "").strip()
    if fixed.isdigit():
        return datetime.fromtimestamp(int(fixed), timezone.utc).strftime("%Y-%m-%dT%H:%M:%SZ")
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
    refuse_unless_regular(path)
    tmp = temporary_path(path)
    try:
        if os.path.lexists(tmp):  # left by a killed earlier process of the same id
            tmp.unlink()
        fd = os.open(tmp, os.O_WRONLY | os.O_CREAT | os.O_EXCL | _NOFOLLOW | _CLOEXEC, 0o644)
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        if before_replace is not None:
            before_replace()
        refuse_unless_regular(path)  # a link put there meanwhile is refused, not replaced
        os.replace(tmp, path)  # renames over the name: never follows a link there
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
    """fsync a file that is (or was) appended to (a regular file, never through a link)."""
    fd = _open_regular(path, os.O_RDWR)
    try:
        os.fsync(fd)
    finally:
        os.close(fd)


def truncate(path: Path, length: int):
    """Cut ``path`` (a regular file, never through a link) back to ``length`` bytes."""
    fd = _open_regular(path, os.O_RDWR)
    try:
        os.ftruncate(fd, length)
    finally:
        os.close(fd)


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
            fd = _open_regular(path, os.O_WRONLY | os.O_APPEND | os.O_CREAT)
            fh = files[key] = os.fdopen(fd, "ab")
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
