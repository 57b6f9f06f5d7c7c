"""Shared fixtures.

Source: none needed here; this file asserts no values (each test module names the
sources of the values it checks)."""

import pytest

from optimiser.study import bundled_study_path, load_study


@pytest.fixture(scope="session")
def study():
    """The bundled default study (problems/high_strip_utility.toml)."""
    return load_study(bundled_study_path())
