"""Runs and batches spread over Dask workers give the same numbers, bit for bit, as in one
process.

Source: this project's own requirement (issue: a run on a cluster is
bit-identical to the same run in one process). It holds because the vectorised model treats
each row on its own and the pieces are joined in order; the tests below check the premise
(a batch cut into pieces sizes to the same bits) on every demo study, then the whole run.
"""

from __future__ import annotations

import numpy as np
import pytest

from optimiser.cli import main
from optimiser.cluster import RowMap, cut_points, dask_client
from optimiser.sizing import size_designs
from optimiser.sizing.frozen import analyse_designs, frozen_from_sized, operating_masses
from optimiser.study import bundled_study_path, load_study

DEMOS = ("high_strip_utility", "twin_turboprop_commuter", "light_twin_jet")


def _designs(study, n, seed=3):
    rng = np.random.default_rng(seed)
    cols = [v.lower + (v.upper - v.lower) * rng.random(n) for v in study.variables]
    return (*cols, rng.integers(0, len(study.flaps), n))


def _same_bits(a: dict, b: dict):
    assert list(a) == list(b)
    for key in a:
        x, y = np.asarray(a[key]), np.asarray(b[key])
        assert x.dtype == y.dtype and x.shape == y.shape, key
        assert x.tobytes() == y.tobytes(), key


@pytest.mark.parametrize("pieces, min_rows, n", [(4, 1, 10), (3, 5, 10), (8, 100, 99),
                                                 (2, 1, 1), (5, 2, 11)])
def test_cut_points_cover_every_row_once_in_order(pieces, min_rows, n):
    cuts = cut_points(n, pieces, min_rows)
    assert cuts[0][0] == 0 and cuts[-1][1] == n
    assert all(b0 == a1 for (_, b0), (a1, _) in zip(cuts[:-1], cuts[1:]))
    assert len(cuts) == max(1, min(pieces, n // min_rows))
    if len(cuts) > 1:
        assert min(b - a for a, b in cuts) >= min_rows


@pytest.mark.parametrize("name", DEMOS)
def test_pieces_size_to_the_same_bits(name):
    study = load_study(bundled_study_path(name))
    args = _designs(study, 3000)
    whole = size_designs(study.spec, *args)
    parts = [size_designs(study.spec, *(a[i:j] for a in args)) for i, j in
             ((0, 1), (1, 1200), (1200, 3000))]
    _same_bits(whole, {k: np.concatenate([np.asarray(p[k]) for p in parts]) for k in whole})


@pytest.fixture(scope="module")
def threads_client():
    client, cluster = dask_client(workers=3, threads=True)
    yield client
    client.close()
    cluster.close()


def test_row_map_on_workers_equals_one_call(threads_client):
    study = load_study(bundled_study_path("light_twin_jet"))
    args = _designs(study, 2001)
    overrides = {"cd0_scale": np.linspace(0.9, 1.1, 2001)}
    rows = RowMap(threads_client, min_rows_per_task=100)
    spread = rows(size_designs, study.spec, *args, overrides=overrides)
    assert rows.rows_remote == 2001 and rows.rows_local == 0
    _same_bits(size_designs(study.spec, *args, overrides=overrides), spread)


def test_row_map_cuts_dataclass_arguments(threads_client):
    """The frozen-design analysis takes dataclasses of per-design arrays: they are cut too."""
    study = load_study(bundled_study_path())
    args = _designs(study, 900)
    sized = size_designs(study.spec, *args)
    frozen = frozen_from_sized(sized, args[3], uses_power_loading=True)
    masses = operating_masses(study.spec, frozen)
    overrides = {"empty_mass_factor": np.full(900, study.spec.weights.empty_mass_factor
                                              * 1.03)}
    here = analyse_designs(study.spec, frozen, masses, overrides)
    rows = RowMap(threads_client, min_rows_per_task=50)
    _same_bits(here, rows(analyse_designs, study.spec, frozen, masses, overrides))
    assert rows.rows_remote == 900


def test_small_batches_stay_here(threads_client):
    study = load_study(bundled_study_path())
    args = _designs(study, 40)
    rows = RowMap(threads_client)  # the default minimum piece is far above 40 rows
    _same_bits(size_designs(study.spec, *args), rows(size_designs, study.spec, *args))
    assert rows.rows_local == 40 and rows.rows_remote == 0


def _files(folder):
    names = ("evaluations.csv", "front.csv", "least_violating.csv")
    out = {n: (folder / n).read_bytes() for n in names if (folder / n).exists()}
    history = (folder / "history.csv").read_text().splitlines()
    header = history[0].split(",")
    keep = [i for i, h in enumerate(header) if h != "elapsed_s"]
    out["history.csv"] = [[r.split(",")[i] for i in keep] for r in history]
    return out


def test_run_on_a_local_process_cluster_is_bit_identical(tmp_path):
    """A small run with every generation sent to two worker processes (pieces of 10 rows, so
    that the workers do take part) ends with the same archive, front and history as the
    same run in this process."""
    import optimiser
    study = load_study(bundled_study_path())
    here = optimiser.optimise(study, out=tmp_path / "here", seed=5, population=8,
                              generations=6)
    spread = optimiser.optimise(study, out=tmp_path / "spread", seed=5, population=8,
                                generations=6, workers=2, min_rows_per_task=10)
    assert here.cluster is None
    assert spread.cluster["workers"] == 2
    assert spread.cluster["rows_on_workers"] == spread.n_evaluations
    assert _files(tmp_path / "here") == _files(tmp_path / "spread")


@pytest.mark.parametrize("words, needle", [
    (["--workers", "0"], "--workers: got 0; expected a whole number of at least 1"),
    (["--workers", "2", "--scheduler", "tcp://127.0.0.1:1"], "expected one of them"),
])
def test_bad_cluster_options_are_one_line_errors(tmp_path, capsys, words, needle):
    out = tmp_path / "run"
    code = main(["run", "--out", str(out), "--gens", "2", "--pop", "8", *words])
    err = capsys.readouterr().err
    assert code == 2
    assert needle in err and len(err.strip().splitlines()) == 1
    assert not out.exists()  # refused before any folder is made
