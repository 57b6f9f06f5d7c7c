"""One writer at a time: the lock file of a run folder (:data:`~.names.LOCK`).

``optimiser run`` and ``optimiser resume`` (and every run of a sweep, which calls the same
entry points) hold the lock from before they create, truncate or append anything in the
folder until they end, however they end (finished, an error, Ctrl-C or SIGTERM, any other
exception): :func:`acquire` returns a :class:`RunLock`, used as a context manager.

How it is held (the protocol)
-----------------------------
* The file is created with ``O_CREAT | O_EXCL`` (only one process can create it), then
  ``fcntl.flock(LOCK_EX)`` is taken on it where the platform has it, then it is filled with
  ``{"pid", "host", "started_utc", "command", "argv"}`` (JSON). The flock lasts as long as
  the holder's file descriptor: a process that dies, however it dies, lets it go (the
  operating system releases it), although the file itself stays behind.
* Release removes the file while the flock is still held, then closes it.
* A second writer that finds the file opens it (never through a link), tries the flock
  without waiting and reads the JSON:

  - flock refused: the holder is alive: refused with one line naming the folder and the
    holder's pid, host and start time (:class:`~optimiser.errors.RunError`, exit status 2);
  - the holder recorded another host: its liveness cannot be checked from here (flock is
    not shared between hosts on every network file system): refused, saying so and which
    file to remove if the user is sure that process has ended;
  - same host, and the flock obtained (or, without flock, the pid no longer alive): stale
    (the holder died): taken over, with a note on stderr. The file is removed only while the
    flock is held on it and the name still refers to it, so two processes taking over the
    same stale lock cannot both succeed: the second one finds the first one's new lock.
  - an empty or unreadable file is a lock being created (the microseconds between the
    create and the JSON): looked at again for up to :data:`SETTLE_S`; older than that and
    not flocked, it is stale.

Locks of different folders are independent (a file descriptor each, no shared state), so the
runs of a campaign that share a process (threads) each lock their own folder. Two locks of
the same folder in one process conflict like two processes (flock is per open file).
"""

from __future__ import annotations

import errno
import json
import os
import socket
import stat
import sys
import threading
import time
from pathlib import Path

from ..errors import RunError, shell_command
from . import names
from .files import refuse_unless_regular, utc_now

try:  # not on every platform (Windows): the pid check alone is used there
    import fcntl
except ImportError:  # pragma: no cover - POSIX test machines have it
    fcntl = None

SETTLE_S = 2.0
"""Seconds a lock file may stay without its JSON, or flocked with the JSON of a process
that has ended (another process taking it over), before it is judged (ours: creating and
filling the file takes microseconds)."""

GIVE_UP_S = 5 * SETTLE_S
"""Seconds after which a lock that never settles (replaced again and again) is refused."""

RETRY_S = 0.02
"""Pause between two looks at a lock in transition (ours)."""

MAX_LOCK_BYTES = 64 * 1024
"""At most this much of a lock file is read (ours: the JSON is a few hundred bytes)."""

_NOFOLLOW = getattr(os, "O_NOFOLLOW", 0)
_CLOEXEC = getattr(os, "O_CLOEXEC", 0)
_NONBLOCK = getattr(os, "O_NONBLOCK", 0)


def _flock(fd, wait: bool):
    """Take the flock on ``fd``: True if taken, False if another open file holds it, None
    where the platform or the file system has no flock."""
    if fcntl is None:
        return None
    try:
        fcntl.flock(fd, fcntl.LOCK_EX | (0 if wait else fcntl.LOCK_NB))
        return True
    except BlockingIOError:
        return False
    except OSError as exc:
        if exc.errno in (errno.EWOULDBLOCK, errno.EAGAIN, errno.EACCES):
            return False
        return None  # ENOLCK, EOPNOTSUPP, EINVAL: a file system without flock


def _still_named(fd, path: Path) -> bool:
    """The name ``path`` still refers to the file open as ``fd``."""
    try:
        on_disk = os.lstat(path)
    except FileNotFoundError:
        return False
    mine = os.fstat(fd)
    return (on_disk.st_dev, on_disk.st_ino) == (mine.st_dev, mine.st_ino)


def pid_alive(pid: int) -> bool:
    """A process with this id exists on this host (signal 0 checks without sending)."""
    if not isinstance(pid, int) or pid <= 0:
        return False
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:  # exists, owned by another user
        return True
    except OSError:
        return False
    return True


def _read_holder(fd) -> dict | None:
    """The JSON of a lock file (None while it is empty or not yet complete)."""
    try:
        os.lseek(fd, 0, os.SEEK_SET)
        data = os.read(fd, MAX_LOCK_BYTES)
    except OSError:
        return None
    try:
        holder = json.loads(data.decode("utf-8"))
    except (UnicodeDecodeError, ValueError):
        return None
    return holder if isinstance(holder, dict) else None


def _who(holder: dict) -> str:
    return (f"pid {holder.get('pid', '?')} on host {holder.get('host', '?')}, started "
            f"{holder.get('started_utc', '?')}, '{holder.get('command', '?')}'")


class RunLock:
    """The lock of one run folder, held by this process until :meth:`release` (also the end
    of a ``with`` block). Releasing twice is harmless."""

    def __init__(self, path: Path, fd: int, holder: dict):
        self.path = path
        self.holder = holder
        self._fd = fd
        self._mutex = threading.Lock()

    @property
    def held(self) -> bool:
        return self._fd is not None

    def release(self):
        """Remove the lock file (while its flock is still held), then close it."""
        with self._mutex:
            fd, self._fd = self._fd, None
        if fd is None:
            return
        try:
            if _still_named(fd, self.path):
                os.unlink(self.path)
        except OSError:
            pass
        finally:
            os.close(fd)

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self.release()
        return False

    def __del__(self):  # a lock never released by its owner (a bug) is not held for ever
        if getattr(self, "_fd", None) is not None:
            try:
                self.release()
            except Exception:  # interpreter shutdown: the OS releases the flock anyway
                pass


def _refuse_held(run_dir: Path, holder: dict | None):
    if holder is None:
        raise RunError(f"{run_dir}: in use by another optimiser process (its lock "
                       f"{names.LOCK} is held but records no details); expected a run folder "
                       "no other process is writing: wait for that process to end")
    raise RunError(f"{run_dir}: in use by another optimiser process ({_who(holder)}); "
                   "expected a run folder no other process is writing: wait for it to end "
                   "or stop it, then try again")


def _refuse_other_host(run_dir: Path, path: Path, holder: dict, here: str):
    raise RunError(f"{run_dir}: locked by {_who(holder)}; whether that process is still "
                   f"running cannot be checked from host {here}; expected a run folder no "
                   "other process is writing: if you are sure it has ended, remove the lock "
                   f"({shell_command('rm', path)}) and try again")


def _note_takeover(path: Path, holder: dict | None):
    what = _who(holder) if holder is not None else "a lock without details"
    sys.stderr.write(f"note: {path}: took over a stale lock ({what}; that process has "
                     "ended)\n")
    sys.stderr.flush()


def _inspect(run_dir: Path, path: Path, here: str, waited_s: float) -> bool:
    """Look at an existing lock file: True if it was stale and is now removed (try again),
    False if it is in transition (look again later); raises RunError if it is held."""
    try:
        fd = os.open(path, os.O_RDONLY | _NOFOLLOW | _CLOEXEC | _NONBLOCK)
    except FileNotFoundError:
        return True  # released meanwhile
    except OSError as exc:
        refuse_unless_regular(path)  # a link, a folder, a pipe in its place: one line
        raise RunError(f"{path}: cannot open the run folder's lock ({exc.strerror}); "
                       "expected a readable file") from None
    try:
        if not stat.S_ISREG(os.fstat(fd).st_mode):
            refuse_unless_regular(path)
        got = _flock(fd, wait=False)
        holder = _read_holder(fd)
        settled = waited_s >= SETTLE_S
        if got is False:
            if holder is None or (holder.get("host") == here
                                  and not pid_alive(holder.get("pid"))):
                # being created, or flocked by a process taking over a stale lock
                if settled:
                    _refuse_held(run_dir, holder)
                return False
            _refuse_held(run_dir, holder)
        if not _still_named(fd, path):
            return False  # replaced meanwhile: look at the new one
        if holder is None:
            age = time.time() - os.fstat(fd).st_mtime
            if age < SETTLE_S and not settled:
                return False  # its creator has not written it yet
        elif holder.get("host") != here:
            _refuse_other_host(run_dir, path, holder, here)
        elif got is None and pid_alive(holder.get("pid")):
            _refuse_held(run_dir, holder)  # no flock here: the pid is all we know
        try:
            os.unlink(path)  # flocked by us and still this file: nobody else removes it
        except OSError as exc:
            raise RunError(f"{path}: cannot remove a stale lock ({exc.strerror}); expected "
                           "a writable run folder") from None
        _note_takeover(path, holder)
        return True
    finally:
        os.close(fd)


def acquire(run_dir, command: str) -> RunLock:
    """Take the lock of ``run_dir`` (an existing folder) for ``command`` ("run", "resume").

    Raises :class:`~optimiser.errors.RunError` (one line) if another live process holds it,
    if the holder is on another host, or if the lock file is a link or not a regular file;
    an ``OSError`` of the create itself (a read-only folder) is passed on to the caller."""
    run_dir = Path(run_dir)
    path = run_dir / names.LOCK
    here = socket.gethostname()
    t0 = time.monotonic()
    while True:
        waited = time.monotonic() - t0
        if waited > GIVE_UP_S:
            raise RunError(f"{run_dir}: its lock {names.LOCK} kept changing for "
                           f"{GIVE_UP_S:g} s; expected a run folder no other process is "
                           "writing")
        try:
            fd = os.open(path, os.O_RDWR | os.O_CREAT | os.O_EXCL | _NOFOLLOW | _CLOEXEC,
                         0o644)
        except FileExistsError:
            if not _inspect(run_dir, path, here, waited):
                time.sleep(RETRY_S)
            continue
        try:
            got = _flock(fd, wait=True)  # an inspecting process holds it for an instant
            if got is not None and not _still_named(fd, path):
                os.close(fd)
                continue  # judged stale and removed meanwhile (far too slow): again
            holder = {"pid": os.getpid(), "host": here, "started_utc": utc_now(),
                      "command": command, "argv": shell_command(*sys.argv)[:1000]}
            os.write(fd, json.dumps(holder).encode("utf-8"))
            os.fsync(fd)
        except BaseException:
            try:
                if _still_named(fd, path):
                    os.unlink(path)
            except OSError:
                pass
            os.close(fd)
            raise
        return RunLock(path, fd, holder)
