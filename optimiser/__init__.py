"""Conceptual aircraft sizing and multi-objective search.

Public API (each name is the implementation itself, loaded on first use so that
``import optimiser`` pulls in none of pymoo, matplotlib, pyarrow, dask or pint):

- :func:`load_study`, :func:`evaluate`, :data:`CAUTION` — a study and the sizing of designs;
- :func:`optimise`, :func:`resume`, :func:`load_run` — runs and their folders;
  :func:`write_plots` — a run's figures (pass ``plots=optimiser.write_plots`` to a run);
- :func:`choose`, :func:`compare_flaps` — one compromise from a front, the flap options;
- :func:`monte_carlo` — robustness of a design; :func:`load_campaign`, :func:`run_campaign`;
- :class:`OptimiserError` — the base of every error a user can fix (one-line message).
"""

from __future__ import annotations

__version__ = "0.1.0"

_LAZY = {
    "CAUTION": "evaluation", "evaluate": "evaluation",
    "load_study": "study",
    "optimise": "runs", "resume": "runs",
    "load_run": "runfolder",
    "choose": "decide", "compare_flaps": "flaps",
    "monte_carlo": "robust",
    "load_campaign": "campaign_file", "run_campaign": "campaign",
    "OptimiserError": "errors", "StudyError": "errors",
    "write_plots": "report.plots",
}


def __getattr__(name):
    # lazy, so that ``import optimiser`` (and ``import optimiser.physics``) stays light
    if name in _LAZY:
        import importlib
        value = getattr(importlib.import_module(f".{_LAZY[name]}", __name__), name)
        globals()[name] = value
        return value
    raise AttributeError(f"module 'optimiser' has no attribute {name!r}")


def __dir__():
    return sorted({*globals(), *_LAZY})


__all__ = ["CAUTION", "OptimiserError", "StudyError", "choose", "compare_flaps", "evaluate",
           "load_campaign", "load_run", "load_study", "monte_carlo", "optimise", "resume",
           "run_campaign", "write_plots", "__version__"]
