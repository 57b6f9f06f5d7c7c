"""Checkpoints: the whole run state (:class:`~optimiser.runstate.RunState`) as numbers and a
JSON manifest in ``checkpoint.npz``, a file that carries no code, written atomically after
the archive and history are on disk.

The file is a NumPy ``.npz`` archive read with ``allow_pickle=False``; its members:

``manifest``
    UTF-8 JSON as a ``uint8`` array: the format and its version
    (:data:`~optimiser.runstate.CHECKPOINT_FORMAT`), the run id, the state's scalars and
    study text, the budget, the hypervolume scales, the best margins, the records that bind
    the checkpoint to its folder (:mod:`~.manifest`), and for every per-flap-option NSGA-II
    its counters (``n_iter``, ``is_initialized``, the evaluator's ``n_eval``, the
    termination's flag), its random generator's ``bit_generator.state`` and what each
    individual of its population holds besides arrays (the set of evaluated values, the
    types of its ``data`` entries);
``content_sha256``
    the SHA-256 (hex, as ``uint8``) of the manifest bytes followed by every other member's
    name, dtype, shape and bytes in name order; checked on load;
``front.*``, ``least.*``
    the arrays of the kept design sets (:class:`~optimiser.runstate.DesignSet`);
``algo<k>.*``
    population ``k``'s arrays as pymoo keeps them per individual: ``X``, ``F``, ``G``, ``H``,
    the cached constraint violation ``CV`` (and ``CV_set`` where pymoo has computed it), and
    one array per ``data`` key (``rank``, ``crowding``, ``n_gen``, ``n_iter``) with a type
    code per individual (-1 where the individual has no such entry).

What pymoo 0.6.2's NSGA2 carries from one ``tell`` to the next ``ask`` (read in its source,
``core/algorithm.py``, ``algorithms/base/genetic.py``, ``algorithms/moo/nsga2.py``): the
population (mating, the binary tournament and survival read X, F, G, CV, rank and
crowding), ``n_iter``, ``is_initialized``, the random generator, the evaluator's count and the
termination; ``opt`` is a function of the population (recomputed), ``off`` is not read again,
and the operators, the duplicate elimination and the non-dominated sorting hold no state. On
load every algorithm is made again by :func:`~optimiser.search.make_algorithms` (same seed
and population) and these are restored, so a resumed run is bit-identical to an
uninterrupted one (tests/test_kill_resume.py, tests/test_faults.py).

Older checkpoints (``checkpoint.pkl``, a pickle, or an older format version) are refused
unread, with the command that starts the run again.
"""

from __future__ import annotations

import dataclasses
import hashlib
import io
import json
import math
import os
import time
from pathlib import Path

import numpy as np

from ..errors import RunError
from . import archive, files, manifest, names

TEST_PAUSE_ENV = "OPTIMISER_TEST_PAUSE_IN_CHECKPOINT"
"""Test hook, not a user option: when this environment variable holds a number of seconds,
every checkpoint write sleeps that long after the temporary file is complete and before it
replaces ``checkpoint.npz``, so that tests/test_kill_resume.py can kill the process inside
the write deterministically."""

FORMAT_NAME = "optimiser-checkpoint"

STATE_FIELDS = ("study_text", "study_path", "seed", "scales", "started_utc", "generation",
                "n_evaluations", "n_feasible", "best_margin", "best_hv", "stall", "elapsed_s",
                "archive_bytes", "history_bytes", "termination", "run_id")
"""The :class:`~optimiser.runstate.RunState` fields held in the manifest as JSON (floats
in their shortest exact form, so they read back to the same number)."""

DESIGN_SET_FIELDS = ("designs", "flap", "generation", "F", "key")

DATA_TYPES = {"int": int, "float": float, "bool": bool, "numpy.int64": np.int64,
              "numpy.float64": np.float64, "numpy.bool": np.bool_}
"""Types of the entries of an individual's ``data`` dict that a checkpoint keeps exactly."""

VALUE_ARRAYS = (("X", "n_var"), ("F", "n_obj"), ("G", "n_ieq_constr"), ("H", "n_eq_constr"))
"""Individual arrays kept, with the problem attribute that gives their length."""

EMPTY_ARRAYS = ("_dF", "_dG", "_dH", "_ddF", "_ddG", "_ddH")
"""Derivative arrays NSGA-II leaves empty; a checkpoint refuses to drop a non-empty one."""


def _test_pause():
    text = os.environ.get(TEST_PAUSE_ENV)
    if not text:
        return None
    try:
        seconds = float(text)
    except ValueError:
        return None
    return (lambda: time.sleep(seconds)) if math.isfinite(seconds) and seconds > 0 else None


# ----------------------------------------------------------------------------- writing

def _type_name(value) -> str:
    for name, kind in DATA_TYPES.items():
        if type(value) is kind:
            return name
    raise TypeError(f"an individual's data entry of type {type(value).__name__} cannot be "
                    "kept in a checkpoint")


def _population_arrays(algo, k: int, arrays: dict) -> dict:
    """Put population ``k``'s arrays into ``arrays``; the manifest part (JSON)."""
    from pymoo.core.individual import Individual
    inds = list(algo.pop)
    n = len(inds)
    prefix = f"algo{k}."
    for attr, width in VALUE_ARRAYS:
        values = [np.asarray(getattr(ind, "_" + attr)) for ind in inds]
        if any(v.dtype != np.float64 for v in values):
            raise TypeError(f"population {k}: {attr} is not float64")
        arrays[prefix + attr] = np.array(values, dtype=np.float64).reshape(
            n, int(getattr(algo.problem, width)))
    cv_set = np.array([ind._CV is not None for ind in inds], dtype=bool)
    arrays[prefix + "CV"] = np.array([float(ind._CV[0]) if ind._CV is not None else 0.0
                                      for ind in inds], dtype=np.float64)
    arrays[prefix + "CV_set"] = cv_set
    keys = list(dict.fromkeys(key for ind in inds for key in ind.data))
    type_names = list(DATA_TYPES)
    for key in keys:
        codes = np.array([type_names.index(_type_name(ind.data[key])) if key in ind.data
                          else -1 for ind in inds], dtype=np.int8)
        present = [ind.data[key] for ind in inds if key in ind.data]
        dtype = np.float64 if any(isinstance(v, (float, np.floating)) for v in present) \
            else np.int64
        arrays[f"{prefix}data.{key}"] = np.array(
            [ind.data[key] if key in ind.data else 0 for ind in inds], dtype=dtype)
        arrays[f"{prefix}data_type.{key}"] = codes
    default = Individual.default_config()
    for ind in inds:
        if any(np.asarray(getattr(ind, a)).size for a in EMPTY_ARRAYS) or \
                ind.config != default:
            raise TypeError(f"population {k}: an individual holds derivatives or a "
                            "non-default configuration, which a checkpoint does not keep")
    return {"size": n, "data_keys": keys,
            "evaluated": [sorted(ind.evaluated) for ind in inds]}


def _algorithm_record(algo, k: int, arrays: dict) -> dict:
    if algo.data or algo.history or algo.archive is not None:
        raise TypeError(f"algorithm {k}: holds data, history or an archive, which a "
                        "checkpoint does not keep")
    term = algo.termination
    return {"flap_index": int(algo.problem.flap_index),
            "is_initialized": bool(algo.is_initialized),
            "n_iter": None if algo.n_iter is None else int(algo.n_iter),
            "n_eval": int(algo.evaluator.n_eval),
            "random_state": algo.random_state.bit_generator.state,
            "termination": {"force_termination": bool(term.force_termination),
                            "perc": float(term.perc)},
            "population": None if algo.pop is None else _population_arrays(algo, k, arrays)}


def _content_sha256(manifest_bytes: bytes, arrays: dict) -> str:
    digest = hashlib.sha256(manifest_bytes)
    for name in sorted(arrays):
        a = np.ascontiguousarray(arrays[name])
        digest.update(f"\n{name}\n{a.dtype.str}\n{a.shape}\n".encode())
        digest.update(a.tobytes())
    return digest.hexdigest()


def checkpoint_bytes(state, folder_files=None) -> bytes:
    """The checkpoint file's content for ``state``; ``folder_files`` are the records that
    bind it to its run folder (:func:`~.manifest.checkpoint_files`)."""
    from ..runstate import CHECKPOINT_FORMAT
    arrays = {}
    for set_name in ("front", "least"):
        kept = getattr(state, set_name)
        if kept is not None:
            for f in DESIGN_SET_FIELDS:
                arrays[f"{set_name}.{f}"] = np.asarray(getattr(kept, f))
    content = {"format": FORMAT_NAME, "format_version": CHECKPOINT_FORMAT,
               "state": {f: getattr(state, f) for f in STATE_FIELDS},
               "budget": dataclasses.asdict(state.budget),
               "front": state.front is not None, "least": state.least is not None,
               "algorithms": [_algorithm_record(a, k, arrays)
                              for k, a in enumerate(state.algos)],
               "files": folder_files or {}}
    if state.chance is not None:  # a chance-constrained run (optimiser.chance)
        content["chance"] = state.chance.record()
    manifest_bytes = json.dumps(content, sort_keys=True).encode("utf-8")
    checksum = _content_sha256(manifest_bytes, arrays)
    buf = io.BytesIO()
    np.savez(buf, manifest=np.frombuffer(manifest_bytes, dtype=np.uint8),
             content_sha256=np.frombuffer(checksum.encode("ascii"), dtype=np.uint8), **arrays)
    return buf.getvalue()


def population_bytes_bound(n_options: int, option_population: int, n_var: int, n_obj: int,
                           n_constraints: int) -> int:
    """An upper bound of the bytes the populations add to a checkpoint: per individual 8
    bytes per number (X, F, G, CV and four data entries), a type code per data entry and
    about 20 bytes of manifest; per option about 16 members of some 300 bytes of zip and
    ``.npy`` headers each (ours, from the ``.npz`` layout)."""
    per_individual = 8 * (n_var + n_obj + n_constraints + 1 + 4) + 1 + 4 + 20
    return n_options * (option_population * per_individual + 16 * 300)


def has_checkpoint(run_dir) -> bool:
    return (Path(run_dir) / names.CHECKPOINT).exists()


def save_checkpoint(run_dir: Path, state):
    """fsync the archive and history, then replace the checkpoint atomically."""
    archive.sync_appended(run_dir)
    data = checkpoint_bytes(state, manifest.checkpoint_files(run_dir, state))
    files.write_atomic(run_dir / names.CHECKPOINT, data, before_replace=_test_pause())


# ----------------------------------------------------------------------------- reading

def read_members(path: Path) -> tuple[dict, dict]:
    """(manifest, arrays) of a checkpoint file, its checksum verified; never unpickles."""
    from ..runstate import CHECKPOINT_FORMAT
    run_dir = path.parent
    try:
        with np.load(io.BytesIO(path.read_bytes()), allow_pickle=False) as npz:
            members = {name: npz[name] for name in npz.files}
        content = bytes(members.pop("manifest"))
        checksum = bytes(members.pop("content_sha256")).decode("ascii")
        record = json.loads(content.decode("utf-8"))
        if not isinstance(record, dict):
            raise ValueError("the manifest is not a JSON object")
    except Exception as exc:  # a damaged or foreign file; nothing in it is code
        raise RunError(f"{path}: cannot read the checkpoint ({type(exc).__name__}); expected "
                       "a checkpoint written by this version of optimiser") from None
    if record.get("format") != FORMAT_NAME or record.get("format_version") != CHECKPOINT_FORMAT:
        raise RunError(f"{path}: a checkpoint of another version of optimiser (format "
                       f"{record.get('format_version')!r}, this version reads "
                       f"{CHECKPOINT_FORMAT}); expected a checkpoint of this version: start "
                       f"the run again with: {manifest.restart_command(run_dir)}")
    if _content_sha256(content, members) != checksum:
        raise RunError(f"{path}: damaged checkpoint (its SHA-256 checksum does not match its "
                       "content); expected the checkpoint as the run wrote it (start the run "
                       f"again with: {manifest.restart_command(run_dir)})")
    return record, members


def _restore_population(algo, k: int, record: dict, arrays: dict):
    from pymoo.core.individual import Individual
    from pymoo.core.population import Population
    prefix = f"algo{k}."
    n = int(record["size"])
    values = {attr: arrays[prefix + attr] for attr, _ in VALUE_ARRAYS}
    cv, cv_set = arrays[prefix + "CV"], arrays[prefix + "CV_set"]
    type_of = list(DATA_TYPES.values())
    data = {key: (arrays[f"{prefix}data.{key}"], arrays[f"{prefix}data_type.{key}"])
            for key in record["data_keys"]}
    inds = []
    for i in range(n):
        ind = Individual()
        for attr, _ in VALUE_ARRAYS:
            setattr(ind, "_" + attr, values[attr][i].copy())
        ind._CV = np.array([cv[i]]) if cv_set[i] else None
        ind.evaluated = set(record["evaluated"][i])
        ind.data = {key: type_of[int(codes[i])](column[i].item())
                    for key, (column, codes) in data.items() if codes[i] >= 0}
        inds.append(ind)
    algo.pop = Population.create(*inds)


def _restore_algorithm(algo, k: int, record: dict, arrays: dict):
    if record["flap_index"] != algo.problem.flap_index:
        raise ValueError(f"algorithm {k} is of flap {record['flap_index']}, expected "
                         f"{algo.problem.flap_index}")
    algo.random_state.bit_generator.state = record["random_state"]
    algo.evaluator.n_eval = int(record["n_eval"])
    algo.termination.force_termination = bool(record["termination"]["force_termination"])
    algo.termination.perc = float(record["termination"]["perc"])
    algo.n_iter = record["n_iter"]
    algo.is_initialized = bool(record["is_initialized"])
    if record["population"] is not None:
        _restore_population(algo, k, record["population"], arrays)
        algo.start_time = time.time()
    if algo.is_initialized:
        algo._set_optimum()  # a function of the population, as after the last tell


def _state_from(record: dict, arrays: dict):
    from ..runstate import Budget, DesignSet, RunState
    from ..search import make_algorithms
    from ..study import parse_study
    scalars = record["state"]
    budget = Budget(**record["budget"])
    study = parse_study(scalars["study_text"], scalars["study_path"])
    algos = make_algorithms(study, scalars["seed"], budget.option_population,
                            budget.generations)
    if len(algos) != len(record["algorithms"]):
        raise ValueError(f"{len(record['algorithms'])} algorithms, the study has "
                         f"{len(algos)} flap options")
    for k, (algo, rec) in enumerate(zip(algos, record["algorithms"])):
        _restore_algorithm(algo, k, rec, arrays)
    kept = {s: DesignSet(*(arrays[f"{s}.{f}"] for f in DESIGN_SET_FIELDS))
            if record[s] else None for s in ("front", "least")}
    chance = None
    if record.get("chance") is not None:
        from ..chance import ChanceSetting
        chance = ChanceSetting(float(record["chance"]["reliability"]),
                               int(record["chance"]["samples"]), int(scalars["seed"]))
    return RunState(budget=budget, algos=algos, front=kept["front"], least=kept["least"],
                    chance=chance, **{f: scalars[f] for f in STATE_FIELDS})


def load_checkpoint(run_dir: Path):
    """The run state saved in ``run_dir``; :class:`RunError` (one line) if there is none, it
    is damaged, of another version (``checkpoint.pkl`` is refused unread), or does not
    belong to the folder (:func:`~.manifest.check_checkpoint_folder`)."""
    from ..errors import StudyError
    run_dir = Path(run_dir)
    path = run_dir / names.CHECKPOINT
    if not run_dir.is_dir():
        raise RunError(f"{run_dir}: no such run folder; expected a folder written by "
                       "'optimiser run'")
    legacy = run_dir / names.LEGACY_CHECKPOINT
    if legacy.exists():
        raise RunError(f"{legacy}: a checkpoint of an older version of optimiser (a pickle, "
                       "not loaded: it could run code); expected a run folder of this "
                       f"version: start the run again with: {manifest.restart_command(run_dir)}")
    if not path.exists():
        raise RunError(f"{run_dir}: no {names.CHECKPOINT} in it; expected a folder written by "
                       "'optimiser run'")
    record, arrays = read_members(path)
    try:
        binding = {"run_id": record["state"]["run_id"], "files": record["files"]}
    except (KeyError, TypeError):
        binding = None
    if binding is None or not isinstance(binding["files"], dict):
        raise RunError(f"{path}: cannot read the checkpoint (no folder records); expected a "
                       "checkpoint written by this version of optimiser")
    try:
        manifest.check_checkpoint_folder(run_dir, binding, path)
    except (KeyError, TypeError):
        raise RunError(f"{path}: cannot read the checkpoint (damaged folder records); "
                       "expected a checkpoint written by this version of optimiser") from None
    try:
        return _state_from(record, arrays)
    except StudyError:
        raise
    except Exception as exc:  # consistent checksum, inconsistent content: a crafted file
        raise RunError(f"{path}: cannot read the checkpoint ({type(exc).__name__}: "
                       f"{str(exc).splitlines()[0] if str(exc) else ''}); expected a "
                       "checkpoint written by this version of optimiser") from None
