"""Conceptual aircraft sizing and multi-objective search.

Public API: :func:`load_study`, :func:`evaluate`, :func:`optimise`, :data:`CAUTION`, ``__version__``.
"""

from __future__ import annotations

__version__ = "0.1.0"

_LAZY = {"CAUTION": "evaluation", "evaluate": "evaluation", "StudyError": "study",
         "load_study": "study"}


def __getattr__(name):
    # lazy, so that ``import optimiser.physics`` pulls in neither pandas nor pint
    if name in _LAZY:
        import importlib
        return getattr(importlib.import_module(f".{_LAZY[name]}", __name__), name)
    raise AttributeError(f"module 'optimiser' has no attribute {name!r}")


def optimise(study_or_path, *, out=None, seed=None, generations=None, population=None,
             evaluations=None, time_budget_s=None, progress=False, **options):
    """Search a study for its Pareto front; see :func:`optimiser.runs.optimise`."""
    from .runs import optimise as _optimise
    return _optimise(study_or_path, out=out, seed=seed, generations=generations,
                     population=population, evaluations=evaluations,
                     time_budget_s=time_budget_s, progress=progress, **options)


__all__ = ["CAUTION", "StudyError", "evaluate", "load_study", "optimise", "__version__"]
