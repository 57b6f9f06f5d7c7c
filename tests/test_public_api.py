"""The public API of ``optimiser``: every name in ``__all__`` resolves to the implementation
itself (same object, same signature), and ``import optimiser`` stays light.

Source: the project's own public-API rule (DEVELOPERS.md, "Layout and layers"); no
published values are checked here."""

from __future__ import annotations

import importlib
import inspect
import subprocess
import sys

import pytest

import optimiser

# where each public name is implemented (the module that defines it)
IMPLEMENTATIONS = {
    "load_study": "optimiser.study", "evaluate": "optimiser.evaluation",
    "CAUTION": "optimiser.evaluation", "optimise": "optimiser.runs",
    "resume": "optimiser.runs", "load_run": "optimiser.runfolder.reader",
    "choose": "optimiser.decide", "compare_flaps": "optimiser.flaps",
    "monte_carlo": "optimiser.robust", "load_campaign": "optimiser.campaign_file",
    "run_campaign": "optimiser.campaign", "OptimiserError": "optimiser.errors",
    "StudyError": "optimiser.errors", "write_plots": "optimiser.report.plots",
}


def test_every_public_name_is_listed_here():
    assert set(optimiser.__all__) - {"__version__"} == set(IMPLEMENTATIONS)


@pytest.mark.parametrize("name", sorted(IMPLEMENTATIONS))
def test_public_name_is_the_implementation_with_its_own_signature(name):
    public = getattr(optimiser, name)
    implementation = getattr(importlib.import_module(IMPLEMENTATIONS[name]), name)
    assert public is implementation
    if callable(public) and not isinstance(public, type):
        assert public.__module__ == IMPLEMENTATIONS[name]
        assert inspect.signature(public) == inspect.signature(implementation)


def test_errors_share_one_base():
    from optimiser import errors
    for cls in (errors.StudyError, errors.CampaignError, errors.RunError, errors.DecideError,
                errors.UsageError):
        assert issubclass(cls, optimiser.OptimiserError), cls
    # study and decide errors stay ValueErrors, as before the common base
    assert issubclass(errors.StudyError, ValueError)
    assert issubclass(errors.DecideError, ValueError)
    assert not issubclass(errors.RunInterrupted, optimiser.OptimiserError)


def test_import_optimiser_loads_no_heavy_library():
    code = ("import sys, optimiser; heavy = ['pymoo', 'matplotlib', 'pyarrow', 'dask', 'pint', "
            "'pandas']; print(','.join(m for m in heavy if m in sys.modules))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=True).stdout.strip()
    assert out == ""
