"""The search loop: one generation at a time over every flap option, the front and the
least-violating designs kept as inputs, the stop rules, progress lines, and the checkpoints
it takes (through :mod:`optimiser.runfolder`).

Each generation is sized with one :func:`~optimiser.sizing.size_designs` call over every
option; new feasible designs are merged into the front with
:func:`~optimiser.search.merge_nondominated`. Checkpoints are written every
:data:`CHECKPOINT_INTERVAL_S` of running unless a number of generations is given, and always
at the end and on Ctrl-C/SIGTERM.
"""

from __future__ import annotations

import math
import signal
import sys
import threading
import time
from pathlib import Path

import numpy as np

from .errors import RunInterrupted
from .runfolder import archive, files
from .runfolder.checkpoint import save_checkpoint
from .runstate import DesignSet, RunState

LEAST_VIOLATING_ROWS = 20
CHECKPOINT_INTERVAL_S = 30.0
"""Seconds of running between checkpoints when no generation count is given (common
practice for an autosave: a hard kill loses at most about this much work, and a fast run
spends next to nothing on checkpoints)."""


def _merge_front(front, new: DesignSet) -> DesignSet:
    """The feasible non-dominated designs of ``front`` followed by ``new``."""
    from .search import merge_nondominated, nondominated_mask
    if front is None or len(front) == 0:
        return new.take(nondominated_mask(new.F))
    keep_old, keep_new = merge_nondominated(front.F, new.F)
    return front.take(keep_old).joined(new.take(keep_new))


def _update_least(study, state, gen_set: DesignSet, G):
    """Keep the least-violating designs (until a front exists) and the best margin reached
    per constraint."""
    from .sizing import active_constraints
    # the least-violating table is only written when nothing feasible is found: once a
    # feasible front exists it is no longer kept up to date (it is never read again)
    if state.front is None or len(state.front) == 0:
        cand = gen_set if state.least is None else state.least.joined(gen_set)
        order = np.argsort(cand.key, kind="stable")[:LEAST_VIOLATING_ROWS]
        state.least = cand.take(order)
    best = (-G).max(axis=0)
    for c, m in zip(active_constraints(study.spec), best.tolist()):
        state.best_margin[c] = max(state.best_margin.get(c, -math.inf), m)


def history_row(study, state, n_feasible_gen, hv):
    row = {"generation": state.generation, "evaluations": state.n_evaluations,
           "feasible_in_generation": n_feasible_gen, "feasible_total": state.n_feasible,
           "front_size": 0 if state.front is None else len(state.front),
           "hypervolume": hv}
    have = state.front is not None and len(state.front)
    best = state.front.F.min(axis=0).tolist() if have else None
    for j, c in enumerate(list(study.objective_columns())):
        row[f"best_{c}"] = float(best[j]) if have else float("nan")
    row["elapsed_s"] = round(state.elapsed_s, 3)
    return row

def _in_process(fn, spec, *args, **kwargs):
    """Evaluate a batch here (the default of :func:`run_loop`)."""
    return fn(spec, *args, **kwargs)


def _one_generation(study, state, pending, evaluate=_in_process, chance=None):
    """Ask, evaluate and tell every option once; add the archive rows and the history line
    to ``pending`` (an :class:`~optimiser.runfolder.archive.Pending`; the caller writes it).
    ``evaluate(fn, spec, *arrays)`` runs the model on the batch (here, or on Dask workers
    through :class:`optimiser.cluster.RowMap`: the same numbers either way). ``chance``
    (an :class:`optimiser.chance.ChanceEvaluator`) judges a chance-constrained run."""
    from .search import (design_arrays, design_overrides, hypervolume,
                         objectives_and_constraints, total_violation)
    from .sizing import size_designs
    # ask every option, then size the whole generation with ONE call of the vectorised model
    pops = [algo.ask() for algo in state.algos]
    sizes = [len(p) for p in pops]
    X = np.vstack([p.get("X") for p in pops])
    flap = np.repeat([algo.problem.flap_index for algo in state.algos], sizes)
    ws, load, ar = design_arrays(study, X)
    extra = design_overrides(study, X)  # the optional variables (cruise altitude)
    sized = evaluate(size_designs, study.spec, ws, load, ar, flap, *([extra] if extra else []))
    F, G = objectives_and_constraints(study, sized)
    feas = np.asarray(sized["feasible"], bool)
    if chance is not None:  # the chance constraints replace G (optimiser.chance)
        judged = chance(sized, flap, G)
        G, feas = judged.G, judged.meets
        sized = {**sized, **judged.columns}
    start = 0
    for algo, pop, n in zip(state.algos, pops, sizes):
        pop.set("F", F[start:start + n], "G", G[start:start + n])
        pop.apply(lambda ind: ind.evaluated.update(("F", "G")))
        algo.evaluator.n_eval += n
        algo.tell(infills=pop)
        start += n
    state.generation += 1
    n_gen = len(ws)
    state.n_evaluations += n_gen
    n_feas = int(feas.sum())
    state.n_feasible += n_feas
    gen_set = DesignSet(np.column_stack([ws, load, ar, *extra.values()]), flap,
                        np.full(n_gen, state.generation), F, total_violation(G))
    if n_feas:
        state.front = _merge_front(state.front, gen_set.take(feas))
    _update_least(study, state, gen_set, G)
    hv = hypervolume(state.front.F, state.scales) \
        if state.front is not None and len(state.front) else 0.0
    # (a checkpoint written before the field existed reads the dataclass default)
    if hv > state.best_hv * (1 + state.budget.stall_tolerance) and hv > 0:
        state.best_hv = hv
        state.stall = 0
    elif state.best_hv > 0:
        state.stall += 1
    row = history_row(study, state, n_feas, hv)
    pending.add(state.generation, ws, load, ar, flap, sized, archive.history_text(row))
    return row


def _why_stop(state) -> str | None:
    b = state.budget
    if state.generation >= b.generations:
        return "generations"
    if b.evaluations is not None and state.n_evaluations >= b.evaluations:
        return "evaluations"
    if b.time_s is not None and state.elapsed_s >= b.time_s:
        return "time"
    if b.stall_generations is not None and state.stall >= b.stall_generations:
        return "stall"
    return None


def _eta(state, per_gen_s) -> float | None:
    b = state.budget
    left = [(b.generations - state.generation) * per_gen_s]
    if b.evaluations is not None and state.generation:
        per_eval = state.elapsed_s / max(state.n_evaluations, 1)
        left.append(max(b.evaluations - state.n_evaluations, 0) * per_eval)
    if b.time_s is not None:
        left.append(max(b.time_s - state.elapsed_s, 0.0))
    return max(min(left), 0.0)


def _fmt_s(s):
    if s is None:
        return "?"
    s = int(round(s))
    return f"{s // 3600}:{s % 3600 // 60:02d}:{s % 60:02d}" if s >= 3600 else \
        f"{s // 60}:{s % 60:02d}"


class Printer:
    """One plain line per generation, or one updating line on a terminal."""

    def __init__(self, stream=None):
        self.stream = stream or sys.stdout
        self.tty = hasattr(self.stream, "isatty") and self.stream.isatty()
        self.dirty = False

    def __call__(self, row, state):
        per_gen = state.elapsed_s / max(state.generation, 1)
        line = (f"generation {row['generation']}/{state.budget.generations}  evaluations "
                f"{row['evaluations']}  feasible {row['feasible_total']}  front "
                f"{row['front_size']}  hypervolume {row['hypervolume']:.5g}  elapsed "
                f"{_fmt_s(state.elapsed_s)}  left ~{_fmt_s(_eta(state, per_gen))}")
        if self.tty:
            self.stream.write("\r" + line + "\x1b[K")
            self.dirty = True
        else:
            self.stream.write(line + "\n")
        self.stream.flush()

    def close(self):
        if self.dirty:
            self.stream.write("\n")
            self.stream.flush()
            self.dirty = False


def run_loop(study, state: RunState, run_dir: Path, progress=None, saved=None,
             evaluate=None):
    """Run generations until a stop rule holds. ``progress(row, state)`` is called after each
    generation. ``evaluate`` sizes each generation's batch (default: in this process; an
    :class:`optimiser.cluster.RowMap` spreads it over Dask workers, bit-identically). Ctrl-C or SIGTERM (or a KeyboardInterrupt raised by ``progress``) ends the
    generation in hand, saves a checkpoint and raises :class:`RunInterrupted`. ``saved``
    (a dict, optional) gets the generation of each checkpoint written, under "generation"."""
    stop = {"signal": None}
    saved = {} if saved is None else saved

    def handler(signum, frame):
        if stop["signal"] is not None:  # a second signal: stop now (last checkpoint stands)
            raise KeyboardInterrupt
        stop["signal"] = signum

    previous = {}
    if threading.current_thread() is threading.main_thread():
        for sig in (signal.SIGINT, signal.SIGTERM):
            previous[sig] = signal.signal(sig, handler)
    try:
        since_ckpt = 0
        last_ckpt = time.monotonic()
        every = state.budget.checkpoint_every
        pending = archive.Pending(study, state.chance)
        chance = None
        if state.chance is not None:
            from .chance import ChanceEvaluator
            chance = ChanceEvaluator(study, state.chance, evaluate)
        while True:
            reason = _why_stop(state)
            if reason is not None:
                state.termination = reason
                break
            t0 = time.monotonic()
            row = _one_generation(study, state, pending, evaluate or _in_process, chance)
            state.elapsed_s += time.monotonic() - t0
            row["elapsed_s"] = round(state.elapsed_s, 3)
            since_ckpt += 1
            interrupted = stop["signal"] is not None
            if progress is not None and not interrupted:
                try:
                    progress(row, state)
                except KeyboardInterrupt:
                    interrupted = True
            if interrupted:
                pending.write(study, state, run_dir)
                save_checkpoint(run_dir, state)
                raise RunInterrupted(run_dir)
            due = since_ckpt >= every if every is not None else \
                time.monotonic() - last_ckpt >= CHECKPOINT_INTERVAL_S
            if due or pending.rows >= archive.ARCHIVE_BUFFER_ROWS:
                pending.write(study, state, run_dir)
            if due:
                save_checkpoint(run_dir, state)
                saved["generation"] = state.generation
                since_ckpt = 0
                last_ckpt = time.monotonic()
        pending.write(study, state, run_dir)
    finally:
        files.close_appended()
        for sig, h in previous.items():
            signal.signal(sig, h)
    save_checkpoint(run_dir, state)
    saved["generation"] = state.generation
    return state.termination
