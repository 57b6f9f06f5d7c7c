"""Shared fixtures.

Source: none needed here; this file asserts no values (each test module names the
sources of the values it checks)."""

import os
import shutil
import subprocess
from pathlib import Path

import pytest

from optimiser.study import bundled_study_path, load_study


@pytest.fixture(scope="session")
def study():
    """The bundled default study (problems/high_strip_utility.toml)."""
    return load_study(bundled_study_path())


def _mount_tmpfs(where: Path, options: str):
    where.mkdir(parents=True, exist_ok=True)
    if os.geteuid() != 0 or shutil.which("mount") is None:
        pytest.skip("mounting a tmpfs needs root")
    proc = subprocess.run(["mount", "-t", "tmpfs", "-o", options, "tmpfs", str(where)],
                          capture_output=True, text=True)
    if proc.returncode != 0:
        pytest.skip(f"cannot mount a tmpfs here: {proc.stderr.strip()}")


@pytest.fixture
def tmpfs(tmp_path):
    """``tmpfs(name, options)`` mounts a small tmpfs at ``tmp_path / name`` (a real full or
    read-only file system; skipped where mounting is not allowed), unmounted afterwards."""
    mounted = []

    def make(name, options):
        where = tmp_path / name
        _mount_tmpfs(where, options)
        mounted.append(where)
        return where

    yield make
    for where in mounted:
        subprocess.run(["umount", "-l", str(where)], capture_output=True)
