"""The errors a user can fix, under one base that the command line catches once.

Every class here carries a one-line message naming the file or option, what was given and
what was expected; :func:`optimiser.cli.main` prints it and exits with status 2 (a traceback
only with ``--debug``). A program error (a bug, a misuse of a physics function) is not an
:class:`OptimiserError`: the physics raises ``ValueError`` for misuse, and that shows a
traceback.

``StudyError`` and ``DecideError`` are also ``ValueError`` (as they were before the common
base), so code that catches ``ValueError`` around study loading keeps working.
"""

from __future__ import annotations

from pathlib import Path


class OptimiserError(Exception):
    """Base of every error the user can fix; the message is one line."""


class StudyError(OptimiserError, ValueError):
    """A study file (or a designs file) that cannot be used; the message is one line."""


class CampaignError(StudyError):
    """A campaign file or folder that cannot be used; the message is one line."""


class RunError(OptimiserError):
    """A run that cannot start or resume, or a run folder that cannot be read, for a reason
    the user can fix (one line)."""


class DecideError(OptimiserError, ValueError):
    """A pick, flap comparison or report that cannot be made for a reason the user can fix."""


class UsageError(OptimiserError):
    """A command-line option, or an output path, that cannot be used (one line)."""


def shell_command(*words) -> str:
    """A command to paste into a POSIX shell: each word quoted where it needs it (a folder
    name with spaces, quotes or ``;`` runs nothing when pasted)."""
    import shlex
    return " ".join(shlex.quote(str(w)) for w in words)


class RunInterrupted(Exception):
    """The run was stopped (Ctrl-C, SIGTERM) after saving a checkpoint it can resume from.

    Not an :class:`OptimiserError`: nothing is wrong; the command line prints the message
    and exits with status 130."""

    def __init__(self, run_dir):
        self.run_dir = Path(run_dir)
        super().__init__(f"interrupted; the run is saved in {self.run_dir}; resume it with: "
                         f"{shell_command('optimiser', 'resume', self.run_dir)}")


class CampaignInterrupted(Exception):
    """A campaign stopped by Ctrl-C or SIGTERM: finished runs are kept, the running ones
    saved a checkpoint, the rest did not start. Not an :class:`OptimiserError`: the command
    line prints how to continue and exits with status 130 (as for an interrupted run)."""

    def __init__(self, folder, interrupted=(), not_started=0):
        self.folder = Path(folder)
        self.interrupted = list(interrupted)
        self.not_started = not_started
        super().__init__(f"interrupted; the campaign is saved in {self.folder} "
                         f"({len(self.interrupted)} run(s) saved mid-way, {not_started} not "
                         "started)")
