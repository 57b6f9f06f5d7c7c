"""Conceptual aircraft sizing and multi-objective search.

Public API: :func:`load_study`, :func:`evaluate`, :data:`CAUTION`, ``__version__``.
"""

from __future__ import annotations

__version__ = "0.1.0"

from .evaluation import CAUTION, evaluate  # noqa: E402
from .study import StudyError, load_study  # noqa: E402

__all__ = ["CAUTION", "StudyError", "evaluate", "load_study", "__version__"]
