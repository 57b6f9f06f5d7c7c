"""Runs: the entry points that start, drive and resume a search in a run folder.

:func:`optimise` checks the options, prepares the run folder (:mod:`optimiser.runfolder`),
builds the initial state (:mod:`optimiser.runstate`), drives the loop (:mod:`optimiser.loop`)
and writes the outputs (:mod:`optimiser.outputs`). The folder's files are described in
:mod:`optimiser.runfolder.names`.

Resume is exact: the checkpoint holds every per-option algorithm (with its random generator)
and the byte lengths of ``evaluations.csv`` and ``history.csv`` when it was taken; resume
truncates both files to those lengths, so a resumed run ends with the same files as an
uninterrupted one.

Faults: before anything is created, the available memory must hold an estimate of the run's
peak (:func:`estimate_memory_bytes`), the free space an estimate of the run's output
(:func:`estimate_output_bytes`), and the folder must take a probe file; a write that fails
during the run (a full disk) ends it with a :class:`RunError` and the last checkpoint kept.
``run.json`` is written last: a run killed after its final checkpoint but before ``run.json``
is finished by :func:`resume`. Stale temporary files of killed atomic writes are removed on
resume and on ``--force``. ``OPTIMISER_TEST_PAUSE_IN_CHECKPOINT`` is a test hook (see
:data:`optimiser.runfolder.checkpoint.TEST_PAUSE_ENV`), not a user option.

One writer at a time: :func:`optimise` and :func:`resume` lock the run folder
(:mod:`optimiser.runfolder.lock`) before they create, truncate or append anything in it and
release it however they end; a folder another live process writes is refused with one line.
A run file that is a symbolic link or not a regular file is refused before anything is
written (nothing is written through a link).
"""

from __future__ import annotations

import contextlib
import dataclasses
import errno
import math
import time
from pathlib import Path

import numpy as np

from .errors import RunError, RunInterrupted, shell_command
from .loop import LEAST_VIOLATING_ROWS, Printer, history_row, run_loop
from .outputs import finish, summary_text
from .runfolder import archive, files, names, place
from .runfolder.checkpoint import (checkpoint_bytes, has_checkpoint, load_checkpoint,
                                   population_bytes_bound, save_checkpoint)
from .runfolder.manifest import new_run_id
from .runfolder.runinfo import is_finished
from .runstate import STALL_TOLERANCE, Budget, DesignSet, RunResult, RunState

__all__ = ["Budget", "DesignSet", "RunError", "RunInterrupted", "RunResult", "RunState",
           "check_memory", "estimate_memory_bytes", "estimate_output_bytes", "finish",
           "load_checkpoint", "optimise", "resume", "run_loop", "start", "summary_text"]

SPACE_SAFETY_FACTOR = 1.5      # common practice: head-room over an estimate of the output
PLOTS_ALLOWANCE_BYTES = 5e6    # the plots of a run measured about 1.1 MB; rounded up (ours)


def estimate_output_bytes(study, state: RunState) -> tuple[int, str]:
    """What a run will write at most (bytes, with the safety factor) and a short account.

    Rows of evaluations.csv: generations x designs per generation, fewer if --evals stops it
    earlier; with --time, also at most the time budget x the measured sizing rate (an upper
    bound: the search adds its own time). Bytes per row:
    :func:`~optimiser.runfolder.archive.archive_row_bytes`.
    Checkpoints: the initial checkpoint, the populations it will hold
    (:func:`~optimiser.runfolder.checkpoint.population_bytes_bound`) and the designs of the
    front and least-violating sets it will carry (up to 20 x population rows, ours), twice
    (temporary file and old file); the front table: those rows with every evaluate column,
    24 bytes each.
    """
    b = state.budget
    per_gen = b.option_population * len(study.flaps)
    gens = b.generations
    if b.evaluations is not None:
        gens = min(gens, math.ceil(b.evaluations / per_gen))
    rows = gens * per_gen
    if b.time_s is not None:
        from .evaluation import size_frame
        from .search import design_arrays, design_overrides, flap_indices, free_variables
        free = free_variables(study)
        t = np.linspace(0.0, 1.0, per_gen)[:, None]
        X = np.array([v.lower for v in free]) + t * np.array([v.upper - v.lower for v in free])
        flaps = np.asarray(flap_indices(study))[np.resize(np.arange(len(study.flaps)), per_gen)]
        t0 = time.perf_counter()
        size_frame(study, *design_arrays(study, X), flaps, design_overrides(study, X))
        rate = per_gen / max(time.perf_counter() - t0, 1e-6)
        rows = min(rows, math.ceil(b.time_s * rate))
        gens = min(gens, math.ceil(rows / per_gen))
    row_bytes = archive.archive_row_bytes(study, gens, state.chance)
    from .columns import COLUMN_DOCS
    from .sizing import active_constraints
    full_row_bytes = 25 * (len(COLUMN_DOCS) + len(active_constraints(study.spec)))
    front_rows = min(rows, 20 * b.population) + LEAST_VIOLATING_ROWS
    n_obj = len(list(study.objective_columns()))
    populations = population_bytes_bound(len(study.flaps), b.option_population,
                                          len(state.algos[0].problem.xl), n_obj,
                                          len(active_constraints(study.spec)))
    checkpoint = len(checkpoint_bytes(state)) + populations + front_rows * 8 * (6 + n_obj)
    history = (gens + 1) * 40 * (8 + len(list(study.objective_columns())))
    total = (rows * row_bytes + history + 2 * checkpoint + front_rows * full_row_bytes
             + PLOTS_ALLOWANCE_BYTES) * SPACE_SAFETY_FACTOR
    text = (f" ({rows} rows of {names.ARCHIVE} of about {row_bytes} bytes, checkpoints, "
            f"front and plots, x{SPACE_SAFETY_FACTOR:g} head-room)")
    return int(total), text


RUN_BYTES_PER_DESIGN = 9000
"""Memory a run holds per design of one generation (the sizing of the generation, pymoo's
individuals, the front and the archive buffer) [bytes]. Measured (ours) with ``tracemalloc``:
the peak traced bytes of :func:`optimise` on ``high_strip_utility`` (6 flap options) at
population 2 400 over 8 generations, 21.4 MB, less its duplicate check below (2.9 MB), over
the population: 7.7 kB; 8.4 kB likewise at 12 000 over 1 generation; rounded up."""

DUPLICATE_CHECK_BYTES_PER_PAIR = 18
"""Memory of pymoo's duplicate elimination per pair of designs of one flap option [bytes]:
it builds the full distance matrix (8 bytes a pair), the indices of its upper triangle (8)
and two masks (1 + 1), so one option's population ``n`` needs ``18 n^2``. Measured (ours) with
``tracemalloc`` on the first ``ask()`` of one option: 17.3 to 18.4 bytes a pair at 1 000,
2 000 and 4 000 designs. This term decides for large populations (100 000 designs per option
need about 180 GB)."""


def estimate_memory_bytes(study, budget: Budget) -> tuple[int, str]:
    """Memory a run needs at most (bytes, with the safety factor) and a short account:
    :data:`RUN_BYTES_PER_DESIGN` per design of a generation (every flap option) plus
    :data:`DUPLICATE_CHECK_BYTES_PER_PAIR` per pair of one option's population, times
    :data:`~optimiser.evaluation.MEMORY_SAFETY_FACTOR`."""
    from .evaluation import MEMORY_SAFETY_FACTOR
    b = budget
    per_gen = b.option_population * len(study.flaps)
    total = (RUN_BYTES_PER_DESIGN * per_gen
             + DUPLICATE_CHECK_BYTES_PER_PAIR * b.option_population ** 2) * MEMORY_SAFETY_FACTOR
    text = (f" ({per_gen} designs a generation, {b.option_population} per flap option, whose "
            f"duplicate check grows with its square; x{MEMORY_SAFETY_FACTOR:g} head-room)")
    return int(total), text


def check_memory(study, budget: Budget):
    """Refuse a run whose estimated memory exceeds the available memory (before anything is
    created); no check where the available memory is unknown."""
    from .evaluation import memory_shortfall
    need, text = estimate_memory_bytes(study, budget)
    short = memory_shortfall(need)
    if short is not None:
        raise RunError(f"--pop {budget.population}: the run {short}{text}; expected a "
                       "population that fits in memory (lower --pop, or allow fewer flap "
                       "options)")


def _check_positive(name, value, integer=True):
    if value is None:
        return None
    ok = isinstance(value, (int, np.integer)) if integer else isinstance(value, (int, float))
    if isinstance(value, bool) or not ok or not value > 0 or not math.isfinite(value):
        kind = "a whole number" if integer else "a number"
        raise RunError(f"{name}: got {value!r}; expected {kind} greater than 0")
    return value


def start(study, **options):
    """Validate the options, create the run folder and the initial state; (state, folder).
    ``options``: those of :func:`optimise` that shape the run (``out``, ``force``, ``seed``,
    ``generations``, ``population``, ``evaluations``, ``time_budget_s``,
    ``stall_generations``, ``checkpoint_every``, ``stall_tolerance``). The folder is locked
    while it is written and released on return."""
    state, run_dir, held = _start(study, **options)
    held.release()
    return state, run_dir


def _start(study, *, out=None, force=False, seed=None, generations=None, population=None,
           evaluations=None, time_budget_s=None, stall_generations=None,
           checkpoint_every=None, stall_tolerance=None, reliability=None):
    """:func:`start`, returning the folder's lock too (held: the caller releases it)."""
    from .search import make_algorithms, plan_budget, reference_scales
    _check_positive("--gens", generations)
    _check_positive("--pop", population)
    _check_positive("--evals", evaluations)
    _check_positive("--time", time_budget_s, integer=False)
    _check_positive("--stall-gens", stall_generations)
    _check_positive("--checkpoint-every", checkpoint_every)
    _check_positive("--stall-tol", stall_tolerance, integer=False)
    if seed is not None and (isinstance(seed, bool) or not isinstance(seed, (int, np.integer))
                             or not 0 <= seed < 2 ** 32):
        raise RunError(f"--seed: got {seed!r}; expected a whole number from 0 to {2**32 - 1}")
    if population is not None and population < 4:
        raise RunError(f"--pop: got {population}; expected at least 4")
    if not any(not v.fixed for v in study.variables):
        raise RunError(f"{study.path}: every variable is fixed; expected at least one with "
                       "[lower, upper] bounds to search (use 'optimiser evaluate' for one design)")
    seed = study.search["seed"] if seed is None else int(seed)
    pop = population or study.search["population"]
    gens = generations or study.search["generations"]
    per, run_gens = plan_budget(len(study.flaps), pop, gens)
    budget = Budget(generations=run_gens, population=pop, option_population=per,
                    evaluations=evaluations, time_s=time_budget_s,
                    stall_generations=stall_generations, checkpoint_every=checkpoint_every,
                    stall_tolerance=STALL_TOLERANCE if stall_tolerance is None
                    else float(stall_tolerance))
    check_memory(study, budget)
    from .chance import chance_setting
    chance = chance_setting(study, seed, reliability)
    state = RunState(study_text=study.text, study_path=str(study.path), seed=seed,
                     budget=budget, algos=make_algorithms(study, seed, per, run_gens),
                     scales=reference_scales(study), started_utc=files.utc_now(),
                     run_id=new_run_id(), chance=chance)
    cols = archive.archive_columns(study, chance)
    hist_cols = list(history_row(study, state, 0, 0.0))
    need, need_text = estimate_output_bytes(study, state)
    run_dir, held = place.claim_run_dir(out, study, force, need_bytes=need,
                                        need_text=need_text, command="run")
    try:
        files.write_atomic(run_dir / names.STUDY, study.text.encode("utf-8"))
        state.archive_bytes, state.history_bytes = archive.write_headers(run_dir, cols,
                                                                         hist_cols)
        save_checkpoint(run_dir, state)
    except BaseException:
        held.release()
        raise
    return state, run_dir, held


def _progress_fn(progress):
    if progress is True:
        return Printer()
    if progress in (False, None):
        return None
    return progress


def optimise(study_or_path, *, out=None, seed=None, generations=None, population=None,
             evaluations=None, time_budget_s=None, stall_generations=None,
             checkpoint_every=None, force=False, progress=False, plots=None,
             stall_tolerance=None, workers=None, scheduler=None,
             min_rows_per_task=None, reliability=None) -> RunResult:
    """Search the study's variables for the Pareto front of its objectives.

    ``study_or_path`` is a :class:`~optimiser.study.Study` or a study file. Budget: the study's
    [search] population x generations unless given; ``evaluations`` and ``time_budget_s``
    (wall clock, measured here) stop earlier; ``stall_generations`` stops when the merged
    front's hypervolume has not grown by more than ``stall_tolerance`` (relative, default
    :data:`~optimiser.runstate.STALL_TOLERANCE`) for that many generations. ``progress`` is
    True (print a line per generation), False, or a callable ``progress(row, state)``.
    ``plots`` draws the run's figures into ``plots/``: pass
    :func:`optimiser.report.plots.write_plots` (or any callable of the same signature); None
    draws none. ``workers`` (a local Dask cluster of that many processes) or ``scheduler``
    (the address of a running Dask scheduler) spreads each generation's sizing over Dask
    workers (:class:`optimiser.cluster.RowMap`, pieces of at least ``min_rows_per_task``
    rows, default :data:`optimiser.cluster.MIN_ROWS_PER_TASK`): the result is bit-identical
    to the run in one process. ``reliability`` (default the study's ``[search]
    reliability``) keeps only designs that meet each constraint with at least that
    probability under the study's ``[uncertainty]`` (:mod:`optimiser.chance`). Writes the run folder (``out``, default
    ``results/<study>-<UTC time>``) and returns a :class:`RunResult`.
    Raises :class:`RunInterrupted` after saving a checkpoint when interrupted.
    """
    from .study import Study, load_study
    from .cluster import check_workers
    study = study_or_path if isinstance(study_or_path, Study) else load_study(study_or_path)
    check_workers(workers, scheduler, error=RunError)
    _check_positive("min_rows_per_task", min_rows_per_task)
    with _row_map(workers, scheduler, min_rows_per_task) as evaluate:
        state, run_dir, held = _start(study, out=out, force=force, seed=seed,
                                      generations=generations, population=population,
                                      evaluations=evaluations, time_budget_s=time_budget_s,
                                      stall_generations=stall_generations,
                                      checkpoint_every=checkpoint_every,
                                      stall_tolerance=stall_tolerance,
                                      reliability=reliability)
        with held:
            return _drive(study, state, run_dir, _progress_fn(progress), plots, evaluate)


@contextlib.contextmanager
def _row_map(workers, scheduler, min_rows_per_task):
    """The evaluator of a run: None (in this process) or a :class:`~optimiser.cluster.RowMap`
    on a Dask client, connected before the run folder is made and closed however the run
    ends."""
    if workers is None and scheduler is None:
        yield None
        return
    from .cluster import MIN_ROWS_PER_TASK, RowMap, close, dask_client
    client, cluster = dask_client(scheduler, workers, error=RunError)
    try:
        yield RowMap(client, min_rows_per_task or MIN_ROWS_PER_TASK)
    finally:
        close(client, cluster)


def _drive(study, state, run_dir, progress, plots, evaluate=None):
    # the generation of the last checkpoint on disk, for the message if a write fails
    saved = {"generation": state.generation}
    try:
        run_loop(study, state, run_dir, progress, saved=saved, evaluate=evaluate)
        result = finish(study, state, run_dir, plots=plots)
        if evaluate is not None:
            result = dataclasses.replace(result, cluster={
                "workers": evaluate.workers, "rows_on_workers": evaluate.rows_remote,
                "rows_here": evaluate.rows_local})
        return result
    except OSError as exc:  # a full disk, a folder made read-only or removed under the run
        what = exc.strerror or type(exc).__name__
        name = Path(exc.filename).name if exc.filename else "a run file"
        name = files.target_name(name)  # an atomic write's temporary file
        space = " (the disk is full)" if exc.errno in (errno.ENOSPC, errno.EDQUOT) else ""
        raise RunError(f"{run_dir}: cannot write {name} ({what}){space}; the run stopped and "
                       f"its last checkpoint (generation {saved['generation']}) is kept; "
                       f"expected a writable folder with free space: fix it, then run: "
                       f"{shell_command('optimiser', 'resume', run_dir)}") from None
    finally:
        if isinstance(progress, Printer):
            progress.close()


def resume(run_dir, *, progress=False, plots=None, workers=None, scheduler=None,
           min_rows_per_task=None) -> RunResult:
    """Continue an interrupted run from its checkpoint to its original budget. With the same
    seed the result equals that of an uninterrupted run. ``plots`` as for :func:`optimise`.

    The checkpoint must belong to the folder (its run id, study hash and archive records,
    :func:`~optimiser.runfolder.manifest.check_checkpoint_folder`), checked by
    :func:`load_checkpoint` before anything is truncated or appended. ``workers``,
    ``scheduler`` and ``min_rows_per_task`` as for :func:`optimise` (a run may resume on a
    cluster it did not start on, or the other way: the numbers are the same)."""
    from .cluster import check_workers
    run_dir = Path(run_dir)
    check_workers(workers, scheduler, error=RunError)
    _check_positive("min_rows_per_task", min_rows_per_task)
    if not has_checkpoint(run_dir):
        load_checkpoint(run_dir)  # no folder, or no checkpoint in it: its one-line error
    with _row_map(workers, scheduler, min_rows_per_task) as evaluate:
        with place.lock_run_dir(run_dir, "resume"):
            place.check_run_files(run_dir)  # no link, pipe or folder under a run file's name
            return _resume_locked(run_dir, progress, plots, evaluate)


def _resume_locked(run_dir: Path, progress, plots, evaluate=None) -> RunResult:
    from .study import parse_study
    state = load_checkpoint(run_dir)  # read under the lock: as the last writer left it
    # A run killed after its last checkpoint but before run.json (written last) is finished
    # here: the loop stops at once and the outputs are written again.
    if state.termination is not None and is_finished(run_dir):
        raise RunError(f"{run_dir}: the run already finished ({state.termination}); expected "
                       "an interrupted run (start a new one with 'optimiser run')")
    place.probe_writable(run_dir, label="")
    place.remove_stale_temporaries(run_dir)
    study = parse_study(state.study_text, state.study_path)
    archive.truncate_to(run_dir, state.archive_bytes, state.history_bytes)
    return _drive(study, state, run_dir, _progress_fn(progress), plots, evaluate)