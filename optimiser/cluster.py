"""Batches of designs evaluated on Dask workers, bit-identical to one call in this process.

The vectorised model treats every row (design, or design and sample) on its own: a batch cut
into consecutive pieces and evaluated piece by piece gives the same numbers, bit for bit, as
the whole batch at once (checked in the tests for :func:`optimiser.sizing.size_designs` on the
three demo studies). :class:`RowMap` uses that: it cuts a batch into one piece per worker
(never smaller than :data:`MIN_ROWS_PER_TASK`), sends each piece with the model function to a
Dask worker, and joins the answers in order. A batch too small to be worth shipping is
evaluated here, and the map counts how many rows went each way.

What crosses to a worker: the function (by reference: the workers import this package), the
study's spec (sent once per map and kept on the workers) and the rows' arrays. What comes
back: the output columns of the rows. The work per row must therefore outweigh about a
kilobyte of transfer: true for the chance-constrained search (each design analysed over
hundreds of samples) and for large populations, not for a small deterministic run (see
``benchmarks/cluster_run.py``).
"""

from __future__ import annotations

import dataclasses
import os

import numpy as np

from .errors import UsageError

MIN_ROWS_PER_TASK = 20_000
"""Rows below which a piece is not sent to a worker (ours: at about 150 000 designs per
second a piece of 20 000 rows is ~0.13 s of work, well above a task's few milliseconds of
scheduling and transfer)."""


WORKER_MALLOC_KEY = "distributed.nanny.pre-spawn-environ.MALLOC_TRIM_THRESHOLD_"
"""The Dask setting a local cluster clears (see :func:`dask_client`); a remote cluster's
workers should be started with it cleared too (``DASK_DISTRIBUTED__NANNY__PRE_SPAWN_ENVIRON
__MALLOC_TRIM_THRESHOLD_=""`` is not enough: set it to null in the workers' Dask config)."""


def _take(value, a: int, b: int, n: int):
    """Rows ``a:b`` of an argument: arrays of length ``n`` (and the arrays inside dicts and
    dataclasses) are cut; anything else (a spec, a scalar) passes whole."""
    if isinstance(value, np.ndarray) and value.ndim >= 1 and value.shape[0] == n:
        return value[a:b]
    if isinstance(value, dict):
        return {k: _take(v, a, b, n) for k, v in value.items()}
    if dataclasses.is_dataclass(value) and not isinstance(value, type) \
            and not _is_spec(value):
        return dataclasses.replace(value, **{f.name: _take(getattr(value, f.name), a, b, n)
                                             for f in dataclasses.fields(value) if f.init})
    return value


def _is_spec(value) -> bool:
    return type(value).__name__ == "AircraftSpec"


def _rows(args, kwargs) -> int:
    """The batch length: the length of the first array argument (found inside dicts and
    dataclasses too)."""
    def first(value):
        if isinstance(value, np.ndarray) and value.ndim >= 1:
            return value.shape[0]
        if isinstance(value, dict):
            for v in value.values():
                n = first(v)
                if n is not None:
                    return n
        if dataclasses.is_dataclass(value) and not isinstance(value, type) \
                and not _is_spec(value):
            for f in dataclasses.fields(value):
                n = first(getattr(value, f.name))
                if n is not None:
                    return n
        return None
    for value in (*args, *kwargs.values()):
        n = first(value)
        if n is not None:
            return n
    raise ValueError("RowMap: no array argument to cut into rows")


def _join(pieces):
    """One answer from the answers of consecutive pieces (dicts of arrays, arrays, or
    tuples of them)."""
    head = pieces[0]
    if isinstance(head, dict):
        return {k: _join([p[k] for p in pieces]) for k in head}
    if isinstance(head, tuple):
        return tuple(_join(list(parts)) for parts in zip(*pieces))
    arrays = [np.asarray(p) for p in pieces]
    if arrays[0].ndim == 0:   # a scalar the function returns whole (equal in every piece)
        return head
    return np.concatenate(arrays)


def cut_points(n: int, pieces: int, min_rows: int) -> list[tuple[int, int]]:
    """Consecutive ``(start, stop)`` pieces covering ``range(n)``: ``pieces`` of them, fewer
    if a piece would hold less than ``min_rows`` rows (at least one piece)."""
    k = max(1, min(int(pieces), n // max(int(min_rows), 1)))
    edges = np.linspace(0, n, k + 1).round().astype(int)
    return [(int(a), int(b)) for a, b in zip(edges[:-1], edges[1:])]


class RowMap:
    """Evaluate ``fn(spec, *arrays, **kwargs)`` over a batch, on Dask workers when a client
    is given and the batch is large enough; in this process otherwise.

    The answer is the same, bit for bit, whichever way it ran (the model is row-wise). The
    counters ``rows_local`` and ``rows_remote`` say how many rows went each way."""

    def __init__(self, client=None, min_rows_per_task: int = MIN_ROWS_PER_TASK):
        self.client = client
        self.min_rows_per_task = int(min_rows_per_task)
        self.rows_local = 0
        self.rows_remote = 0
        self._spec_key = None

    @property
    def workers(self) -> int:
        """Workers the client has (0 without a client)."""
        if self.client is None:
            return 0
        return max(len(self.client.scheduler_info().get("workers", {})), 1)

    def __call__(self, fn, spec, *args, shared=None, **kwargs):
        """``fn(spec, *args, **kwargs, **shared)``: ``args`` and ``kwargs`` are cut into
        rows, ``shared`` (keyword arguments, e.g. the samples of every design) goes whole to
        every piece."""
        shared = shared or {}
        n = _rows(args, kwargs)
        pieces = cut_points(n, self.workers, self.min_rows_per_task) \
            if self.client is not None else [(0, n)]
        if len(pieces) == 1:
            self.rows_local += n
            return fn(spec, *args, **kwargs, **shared)
        remote_spec = self._scattered(spec)
        futures = [self.client.submit(fn, remote_spec,
                                      *(_take(v, a, b, n) for v in args), pure=False,
                                      **{k: _take(v, a, b, n) for k, v in kwargs.items()},
                                      **shared)
                   for a, b in pieces]
        answers = self.client.gather(futures)
        self.rows_remote += n
        return _join(answers)

    def _scattered(self, spec):
        """The spec on every worker, sent once per study (a future the tasks take)."""
        if self._spec_key is None or self._spec_key[0] is not spec:
            future = self.client.scatter(spec, broadcast=True, hash=False)
            self._spec_key = (spec, future)
        return self._spec_key[1]


def check_workers(workers, scheduler, error=UsageError):
    """``--workers`` must be a whole number of at least 1; it and ``--scheduler`` exclude
    each other."""
    if workers is not None and (isinstance(workers, bool) or not isinstance(workers, int)
                                or workers < 1):
        raise error(f"--workers: got {workers!r}; expected a whole number of at least 1")
    if workers is not None and scheduler is not None:
        raise error(f"--workers {workers} and --scheduler {scheduler}: expected one of them "
                    "(--workers starts a local cluster, --scheduler joins a running one)")


def dask_client(scheduler=None, workers=None, threads=False, error=UsageError,
                fallback: str = "run without --workers/--scheduler"):
    """``(client, cluster)``: a client of the scheduler at ``scheduler``, or of a new local
    cluster of ``workers`` processes (default one per core; ``threads``: threads of this
    process), whose workers ignore SIGINT (this process alone handles Ctrl-C). ``cluster``
    is None for a remote scheduler. Errors are ``error`` with one line."""
    try:
        from dask.distributed import Client, LocalCluster
    except ImportError:
        raise error("--scheduler/--workers: dask is not installed; expected "
                    f"pip install -e \".[cluster]\" (or {fallback})") from None
    if scheduler is not None:
        try:
            return Client(scheduler, timeout="20s"), None
        except (OSError, TimeoutError, ValueError) as exc:
            raise error(f"--scheduler: cannot connect to {scheduler!r} "
                        f"({type(exc).__name__}); expected the address of a running "
                        "Dask scheduler, e.g. tcp://10.0.0.5:8786") from None
    import dask
    n = workers or os.cpu_count() or 1
    # Dask's nanny starts each worker with MALLOC_TRIM_THRESHOLD_ set, which turns off glibc's
    # dynamic mmap threshold: every large temporary array of the vectorised model is then
    # mapped and unmapped afresh, and a worker sized designs about 4 times slower than this
    # process (measured: 10^5 designs 2.6 s against 0.69 s). Without it, as fast as here.
    with dask.config.set({WORKER_MALLOC_KEY: None}):
        cluster = LocalCluster(n_workers=n, threads_per_worker=1, processes=not threads,
                               dashboard_address=None)
    client = Client(cluster)
    if not threads:
        client.register_plugin(_ignore_interrupts_plugin(), name="optimiser-ignore-sigint")
    return client, cluster


def _ignore_interrupts_plugin():
    """A Dask worker plugin for a local cluster: each worker process ignores SIGINT. A Ctrl-C
    in a terminal reaches the whole process group; this process alone stops the work (each
    run checkpoints) and then closes the cluster."""
    from distributed import WorkerPlugin

    class IgnoreInterrupts(WorkerPlugin):
        def setup(self, worker):
            import signal
            import threading
            if threading.current_thread() is threading.main_thread():
                signal.signal(signal.SIGINT, signal.SIG_IGN)
    return IgnoreInterrupts()


def close(client, cluster):
    """Close a client and its local cluster (either may be None)."""
    if client is not None:
        client.close()
    if cluster is not None:
        cluster.close()
