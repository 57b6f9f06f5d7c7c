"""Campaigns: a base study swept over requirement ranges, one independent run per combination.

A campaign file (TOML) names a base study, the sweep axes, the search budget of every run
and the rule that picks one compromise design from each run's front::

    name = "strip-requirements"
    description = "How field length and cruise speed drive trip fuel and engine size"
    base_study = "high_strip_utility.toml"      # relative to the campaign file

    [budget]                                    # every run; replaces the study's [search]
    population = 60
    generations = 40
    seed = 1

    [pick]                                      # the compromise reported per combination
    rule = "lowest_trip_fuel_near_smallest_engine"
    engine_size_within_percent = 10

    [[axis]]
    key = "departure.field_length"              # a study key path: table.key
    values = ["500 m", "700 m", "900 m"]        # as the study writes them, units included
    tighter = "smaller"                         # "smaller" or "larger": the harder direction
    also = ["destination.field_length"]         # optional: keys that take the same value

    [[axis]]
    key = "variables.flaps"                     # a non-numeric axis (no price)
    values = [["none", "plain"], ["none", "plain", "fowler"]]

Every combination of axis values gives a complete study text (the base study's TOML with the
swept keys replaced and ``[search]`` set to the budget), validated before any run starts.
Runs go to ``<campaign folder>/runs/<combination>``; each is one task (on a Dask cluster, or
serially), calling :func:`optimiser.runs.optimise` with no shared state. The campaign folder
then gets ``summary.csv`` (one row per combination: the picked compromise and the front's
extremes), ``price.csv`` (marginal trip fuel and engine size per unit of tightening, by finite
differences between neighbouring values along each numeric axis), ``summary.txt``,
``campaign.json`` and ``plots/`` (drawn by :mod:`optimiser.report.campaign_plots`).

Resume: run the same campaign with ``--out`` set to the existing campaign folder. Runs with a
``run.json`` are kept; an unfinished run with a checkpoint is resumed from it
(:func:`optimiser.runs.resume`); one without a usable checkpoint is restarted.
"""

from __future__ import annotations

import json
import math
import os
import re
import time
from dataclasses import dataclass
from itertools import product
from pathlib import Path

import numpy as np

from .columns import OBJECTIVES, unit_of
from .study import StudyError

try:  # Python 3.11+
    import tomllib
except ModuleNotFoundError:  # pragma: no cover - Python 3.10
    import tomli as tomllib

TOP_KEYS = ("name", "description", "base_study", "budget", "pick", "axis")
BUDGET_KEYS = ("population", "generations", "seed")
PICK_RULES = {
    "lowest_trip_fuel_near_smallest_engine": ("engine_size_within_percent",),
    "weighted_sum": ("weights",),
}
MAX_COMBINATIONS = 10000
MAX_CAMPAIGN_BYTES = 1_000_000
CAMPAIGN_FILES = ("campaign.toml", "base_study.toml", "campaign.json", "summary.csv",
                  "price.csv", "summary.txt")


class CampaignError(StudyError):
    """A campaign file or folder that cannot be used; the message is one line."""


@dataclass(frozen=True)
class Axis:
    """One sweep axis: study key path(s) and the values, with their numbers for the price."""

    key: str
    also: tuple[str, ...]
    values: tuple
    numbers: tuple | None      # values in ``unit`` (None: a non-numeric axis)
    unit: str                  # unit of the numbers ("" for dimensionless numbers)
    tighter: str | None        # "smaller", "larger" or None

    @property
    def label(self) -> str:
        return self.key.split(".")[-1]


@dataclass(frozen=True)
class Combination:
    name: str
    index: tuple[int, ...]     # value index along each axis
    values: tuple
    study_text: str


@dataclass(frozen=True)
class Campaign:
    name: str
    description: str
    path: str
    text: str
    base_study_path: str
    base_study_text: str
    axes: tuple[Axis, ...]
    budget: dict
    pick: dict
    combinations: tuple[Combination, ...]
    engine_size_column: str
    loading_column: str
    objectives: tuple[str, ...]


# ----------------------------------------------------------------------------- TOML text

_BARE_KEY = re.compile(r"^[A-Za-z0-9_-]+$")


def _key(k: str) -> str:
    return k if _BARE_KEY.match(k) else json.dumps(k)


def _value(v) -> str:
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, str):
        return json.dumps(v, ensure_ascii=False)
    if isinstance(v, int):
        return str(v)
    if isinstance(v, float):
        if math.isnan(v):
            return "nan"
        if math.isinf(v):
            return "inf" if v > 0 else "-inf"
        return repr(v)
    if isinstance(v, list):
        return "[" + ", ".join(_value(x) for x in v) + "]"
    if isinstance(v, dict):
        return "{ " + ", ".join(f"{_key(k)} = {_value(x)}" for k, x in v.items()) + " }"
    raise TypeError(f"cannot write {type(v).__name__} values as TOML")


def toml_text(data: dict, header: str = "") -> str:
    """TOML text of a parsed TOML dict (strings, numbers, booleans, lists, tables)."""
    lines = [f"# {line}" for line in header.splitlines()] if header else []

    def table(d: dict, path: tuple):
        scalars = [(k, v) for k, v in d.items() if not isinstance(v, dict)]
        tables = [(k, v) for k, v in d.items() if isinstance(v, dict)]
        if path and (scalars or not tables):
            lines.append("")
            lines.append("[" + ".".join(_key(p) for p in path) + "]")
        for k, v in scalars:
            lines.append(f"{_key(k)} = {_value(v)}")
        for k, v in tables:
            table(v, (*path, k))

    table(data, ())
    text = "\n".join(lines) + "\n"
    if tomllib.loads(text) != data:  # a safety net: the text must read back as the same data
        raise ValueError("TOML round trip changed the data")
    return text


# ----------------------------------------------------------------------------- reading

def _fail(path, where, message):
    raise CampaignError(f"{path}: {where}: {message}")


def _slug(value) -> str:
    if isinstance(value, list):
        text = "+".join(str(v) for v in value)
    else:
        text = str(value)
    text = re.sub(r"\s+", "", text).replace("/", "_")
    text = re.sub(r"[^A-Za-z0-9._+-]", "", text)
    return text[:40] or "x"


def _numbers(path, where, values):
    """Numbers of an axis' values in the unit of the first (None when not numeric)."""
    from .study import units
    if all(isinstance(v, (int, float)) and not isinstance(v, bool) for v in values):
        return tuple(float(v) for v in values), ""
    if not all(isinstance(v, str) for v in values):
        return None, ""
    ureg = units()
    qs = []
    for v in values:
        try:
            q = ureg.Quantity(v)
        except Exception:
            return None, ""  # words such as runway names: a non-numeric axis
        if not hasattr(q, "units"):
            return None, ""
        qs.append(q)
    unit = qs[0].units
    try:
        nums = tuple(float(q.to(unit).magnitude) for q in qs)
    except Exception:
        _fail(path, where, f"got {list(values)!r}; expected values of one dimension")
    return nums, f"{unit:~P}"


def _set(data: dict, dotted: str, value, path, where):
    parts = dotted.split(".")
    node = data
    for p in parts[:-1]:
        nxt = node.setdefault(p, {})
        if not isinstance(nxt, dict):
            _fail(path, where, f"key {dotted!r}: {p!r} is not a table in the base study; "
                  "expected a path such as 'departure.field_length'")
        node = nxt
    node[parts[-1]] = value


def _read_axis(path, k, raw):
    where = f"[[axis]] {k + 1}"
    if not isinstance(raw, dict):
        _fail(path, where, f"got {raw!r}; expected a table with key and values")
    for key in raw:
        if key not in ("key", "values", "tighter", "also"):
            _fail(path, where, f"unknown key {key!r}; expected one of: key, values, tighter, also")
    key = raw.get("key")
    pattern = r"[A-Za-z_][A-Za-z0-9_]*(\.[A-Za-z_][A-Za-z0-9_]*)+"
    if not isinstance(key, str) or not re.fullmatch(pattern, key):
        _fail(path, f"{where} key", f"got {key!r}; expected a study key path such as "
              "'departure.field_length' or 'variables.flaps'")
    values = raw.get("values")
    if not isinstance(values, list) or len(values) < 1:
        _fail(path, f"{where} values", f"got {values!r}; expected a list of one or more values "
              "written as the study writes them, e.g. [\"500 m\", \"700 m\"]")
    if len({json.dumps(v, sort_keys=True) for v in values}) != len(values):
        _fail(path, f"{where} values", f"got {values!r}; expected each value once")
    also = raw.get("also", [])
    if isinstance(also, str):
        also = [also]
    if not isinstance(also, list) or not all(isinstance(a, str) and re.fullmatch(pattern, a)
                                             for a in also):
        _fail(path, f"{where} also", f"got {also!r}; expected a list of study key paths")
    numbers, unit = _numbers(path, f"{where} values", values)
    tighter = raw.get("tighter")
    if tighter is not None:
        if tighter not in ("smaller", "larger"):
            _fail(path, f"{where} tighter", f"got {tighter!r}; expected 'smaller' or 'larger' "
                  "(which direction makes the requirement harder)")
        if numbers is None:
            _fail(path, f"{where} tighter", f"given for the non-numeric values {values!r}; "
                  "expected it only for numbers or quantities")
    return Axis(key=key, also=tuple(also), values=tuple(values), numbers=numbers, unit=unit,
                tighter=tighter)


def _read_pick(path, raw, objectives):
    if not isinstance(raw, dict):
        _fail(path, "[pick]", f"got {raw!r}; expected a table")
    rule = raw.get("rule", "lowest_trip_fuel_near_smallest_engine")
    if rule not in PICK_RULES:
        _fail(path, "[pick] rule", f"got {rule!r}; expected one of: "
              + ", ".join(repr(r) for r in PICK_RULES))
    for k in raw:
        if k != "rule" and k not in PICK_RULES[rule]:
            _fail(path, "[pick]", f"unknown key {k!r} for rule {rule!r}; expected: "
                  + ", ".join(PICK_RULES[rule]))
    if rule == "lowest_trip_fuel_near_smallest_engine":
        within = raw.get("engine_size_within_percent", 10)
        if isinstance(within, bool) or not isinstance(within, (int, float)) \
                or not 0 <= within <= 1000:
            _fail(path, "[pick] engine_size_within_percent", f"got {within!r}; expected a "
                  "number from 0 to 1000 (percent above the smallest engine on the front)")
        return {"rule": rule, "engine_size_within_percent": float(within)}
    weights = raw.get("weights")
    if not isinstance(weights, dict) or not weights:
        _fail(path, "[pick] weights", f"got {weights!r}; expected a table of objective "
              "weights, e.g. { trip_fuel = 1, engine_size = 1 }")
    for k, w in weights.items():
        if k not in objectives:
            _fail(path, "[pick] weights", f"unknown objective {k!r}; expected the base "
                  "study's objectives: " + ", ".join(objectives))
        if isinstance(w, bool) or not isinstance(w, (int, float)) or not 0 <= w < 1e6:
            _fail(path, f"[pick] weights {k}", f"got {w!r}; expected a number >= 0")
    if sum(weights.values()) <= 0:
        _fail(path, "[pick] weights", "all weights are zero; expected at least one above 0")
    return {"rule": rule, "weights": {k: float(v) for k, v in weights.items()}}


def _read_budget(path, raw, base_search):
    from .study import SEARCH_KEYS
    if not isinstance(raw, dict):
        _fail(path, "[budget]", f"got {raw!r}; expected a table")
    out = dict(base_search)
    for k, v in raw.items():
        if k not in BUDGET_KEYS:
            _fail(path, "[budget]", f"unknown key {k!r}; expected one of: "
                  + ", ".join(BUDGET_KEYS))
        _, lo, hi = SEARCH_KEYS[k]
        if isinstance(v, bool) or not isinstance(v, int) or not lo <= v <= hi:
            _fail(path, f"[budget] {k}", f"got {v!r}; expected a whole number from {lo} to {hi}")
        out[k] = v
    return out


def parse_campaign(text: str, path: str = "<campaign>") -> Campaign:
    """Validate campaign TOML text, build every combination's study text and validate each.

    Raises :class:`CampaignError` (one line) naming the key, what was given and what was
    expected; a combination whose study is invalid is named with the study's own message.
    """
    from .study import load_study, parse_study
    try:
        raw = tomllib.loads(text)
    except (tomllib.TOMLDecodeError, ValueError) as exc:
        raise CampaignError(f"{path}: not valid TOML: {exc}") from None
    for k in raw:
        if k not in TOP_KEYS:
            _fail(path, "top level", f"unknown key {k!r}; expected one of: " + ", ".join(TOP_KEYS))
    name = raw.get("name")
    if not isinstance(name, str) or not re.fullmatch(r"[A-Za-z0-9._-]{1,80}", name):
        _fail(path, "name", f"got {name!r}; expected 1 to 80 letters, digits, '-', '_' or '.' "
              "(it names the campaign folder)")
    description = raw.get("description", "")
    if not isinstance(description, str):
        _fail(path, "description", f"got {description!r}; expected a string")
    base = raw.get("base_study")
    if not isinstance(base, str) or not base:
        _fail(path, "base_study", f"got {base!r}; expected the path of a study file, relative "
              "to the campaign file")
    base_path = Path(path).parent / base if not Path(base).is_absolute() else Path(base)
    if not base_path.is_file():
        _fail(path, "base_study", f"got {base!r}; no study file at {base_path}")
    try:
        base_study = load_study(base_path)
    except StudyError as exc:
        raise CampaignError(f"{path}: base_study: {exc}") from None
    base_raw = tomllib.loads(base_study.text)
    budget = _read_budget(path, raw.get("budget", {}), base_study.search)
    pick = _read_pick(path, raw.get("pick", {}), base_study.objectives)
    axes_raw = raw.get("axis")
    if not isinstance(axes_raw, list) or not axes_raw:
        _fail(path, "axis", f"got {axes_raw!r}; expected one or more [[axis]] tables")
    axes = tuple(_read_axis(path, k, a) for k, a in enumerate(axes_raw))
    keys = [k for a in axes for k in (a.key, *a.also)]
    dupes = sorted({k for k in keys if keys.count(k) > 1})
    if dupes:
        _fail(path, "[[axis]]", f"the key {dupes[0]!r} is swept more than once; expected each "
              "study key on one axis")
    n = math.prod(len(a.values) for a in axes)
    if n > MAX_COMBINATIONS:
        _fail(path, "[[axis]]", f"{n} combinations; expected at most {MAX_COMBINATIONS}")
    combos = []
    for number, index in enumerate(product(*(range(len(a.values)) for a in axes)), start=1):
        values = tuple(a.values[i] for a, i in zip(axes, index))
        cname = f"{number:03d}_" + "_".join(f"{a.label}-{_slug(v)}" for a, v in zip(axes, values))
        data = json.loads(json.dumps(base_raw))  # a deep copy of plain TOML data
        for a, v in zip(axes, values):
            for key in (a.key, *a.also):
                _set(data, key, v, path, f"[[axis]] {key}")
        data["search"] = {k: budget[k] for k in BUDGET_KEYS}
        setting = "; ".join(f"{a.key} = {json.dumps(v)}" for a, v in zip(axes, values))
        study_text = toml_text(data, header=(
            f"Study of campaign {name}, combination {cname}: {setting}\n"
            f"Written by 'optimiser sweep' from the base study {base}; [search] is the "
            "campaign's budget."))
        try:
            parse_study(study_text, f"{path}: combination {cname} ({setting})")
        except StudyError as exc:
            raise CampaignError(str(exc)) from None
        combos.append(Combination(name=cname, index=index, values=values,
                                  study_text=study_text))
    return Campaign(name=name, description=description, path=str(path), text=text,
                    base_study_path=str(base_path), base_study_text=base_study.text,
                    axes=axes, budget=budget, pick=pick, combinations=tuple(combos),
                    engine_size_column=base_study.engine_size_column,
                    loading_column=base_study.loading_column,
                    objectives=tuple(base_study.objective_columns()))


def load_campaign(path) -> Campaign:
    """Read and validate a campaign file (see the module docstring)."""
    from .study import read_text_file
    text = read_text_file(path, "campaign", MAX_CAMPAIGN_BYTES, CampaignError)
    return parse_campaign(text, str(path))


# ----------------------------------------------------------------------------- picking

def pick_compromise(front, pick: dict, engine_size_column: str, objectives) -> int | None:
    """Row index (into ``front``) of the design the picking rule chooses; None if empty.

    ``lowest_trip_fuel_near_smallest_engine``: among the designs whose engine size is within
    ``engine_size_within_percent`` of the smallest on the front, the lowest trip fuel — an
    epsilon-constraint choice (Y. Y. Haimes, L. S. Lasdon, D. A. Wismer, IEEE Trans. Systems,
    Man and Cybernetics 1, 1971; from memory). ``weighted_sum``: each objective normalised to
    0..1 over the front, (f - min) / (max - min), then the lowest weighted sum (common
    practice). Ties go to the first row.
    """
    if front is None or len(front) == 0:
        return None
    if pick["rule"] == "lowest_trip_fuel_near_smallest_engine":
        size = front[engine_size_column].to_numpy(float)
        ok = size <= size.min() * (1.0 + pick["engine_size_within_percent"] / 100.0)
        trip = np.where(ok, front["trip_fuel_kg"].to_numpy(float), np.inf)
        return int(np.argmin(trip))
    score = np.zeros(len(front))
    for key, w in pick["weights"].items():
        f = front[OBJECTIVES[key] or engine_size_column].to_numpy(float)
        span = f.max() - f.min()
        score += w * ((f - f.min()) / span if span > 0 else np.zeros_like(f))
    return int(np.argmin(score))


def pick_text(pick: dict) -> str:
    if pick["rule"] == "lowest_trip_fuel_near_smallest_engine":
        return (f"lowest trip fuel among the front designs whose engine size is within "
                f"{pick['engine_size_within_percent']:g} % of the smallest on the front")
    return ("lowest weighted sum of objectives normalised over the front, weights "
            + ", ".join(f"{k} {w:g}" for k, w in pick["weights"].items()))


# ----------------------------------------------------------------------------- running

def run_combination(study_text: str, study_path: str, run_dir: str) -> dict:
    """One campaign task: run (or finish) the study in ``run_dir``. Never raises.

    Returns ``{"run_dir", "status": "finished" | "failed", "message", "seconds",
    "how": "new" | "resumed" | "restarted"}``; a failure also writes ``error.txt``.
    """
    from .runs import RunError, load_checkpoint, optimise, resume
    from .study import parse_study
    t0 = time.monotonic()
    folder = Path(run_dir)
    how = "new"
    try:
        study = parse_study(study_text, study_path)
        result = None
        if (folder / "checkpoint.pkl").exists():
            try:
                state = load_checkpoint(folder)
                if state.study_text == study_text and state.termination is None:
                    how = "resumed"
                    result = resume(folder, progress=False, plots=False)
            except RunError:
                result = None
            if result is None:
                how = "restarted"
        if result is None:
            result = optimise(study, out=folder, force=True, progress=False, plots=False)
        (folder / "error.txt").unlink(missing_ok=True)
        return {"run_dir": str(folder), "status": "finished", "message": result.message,
                "seconds": time.monotonic() - t0, "how": how}
    except BaseException as exc:  # one failed run never stops the campaign
        if isinstance(exc, KeyboardInterrupt):
            raise
        text = f"{type(exc).__name__}: {exc}".splitlines()[0]
        try:
            folder.mkdir(parents=True, exist_ok=True)
            (folder / "error.txt").write_text(text + "\n", encoding="utf-8")
        except OSError:
            pass
        return {"run_dir": str(folder), "status": "failed", "message": text,
                "seconds": time.monotonic() - t0, "how": how}


def is_finished(run_dir: Path, study_text: str) -> bool:
    """A run folder holds a finished run of exactly this study text."""
    run_dir = Path(run_dir)
    try:
        return ((run_dir / "run.json").is_file()
                and (run_dir / "study.toml").read_text("utf-8") == study_text)
    except OSError:
        return False


def default_campaign_dir(campaign: Campaign, root="results") -> Path:
    from .runs import timestamped_dir
    return timestamped_dir(campaign.name, root)


def prepare_campaign_dir(campaign: Campaign, out=None) -> tuple[Path, list]:
    """The campaign folder and the combinations still to run.

    A new (or empty) folder is created with copies of the campaign and base study files. An
    existing campaign folder is resumed only when it was made by the same campaign text and
    every finished run in it holds this campaign's study text; otherwise nothing is touched
    and :class:`CampaignError` says why.
    """
    from .runs import write_atomic
    folder = Path(out) if out is not None else default_campaign_dir(campaign)
    if folder.exists() and not folder.is_dir():
        raise CampaignError(f"--out {folder}: is a file; expected a folder for the campaign")
    existing = folder.is_dir() and any(folder.iterdir())
    if existing:
        copy = folder / "campaign.toml"
        if not copy.is_file():
            raise CampaignError(f"--out {folder}: folder exists and is not a campaign folder "
                                "(no campaign.toml); expected a new folder or one written by "
                                "'optimiser sweep'")
        if copy.read_text("utf-8") != campaign.text:
            raise CampaignError(f"--out {folder}: made by a different campaign file "
                                f"({copy} differs from {campaign.path}); expected the same "
                                "campaign to resume it, or a new --out")
        for c in campaign.combinations:
            run_dir = folder / "runs" / c.name
            study_file = run_dir / "study.toml"
            if study_file.is_file() and study_file.read_text("utf-8") != c.study_text:
                raise CampaignError(f"--out {folder}: {study_file} is not the study of "
                                    f"combination {c.name} (the base study changed?); "
                                    "expected the same campaign, or a new --out")
    else:
        try:
            (folder / "runs").mkdir(parents=True, exist_ok=True)
        except OSError as exc:
            raise CampaignError(f"--out {folder}: cannot create the folder "
                                f"({exc.strerror})") from None
        write_atomic(folder / "campaign.toml", campaign.text.encode("utf-8"))
        write_atomic(folder / "base_study.toml", campaign.base_study_text.encode("utf-8"))
    (folder / "runs").mkdir(exist_ok=True)
    pending = [c for c in campaign.combinations
               if not is_finished(folder / "runs" / c.name, c.study_text)]
    return folder, pending


def _dask_client(scheduler=None, workers=None, threads=False):
    try:
        from dask.distributed import Client, LocalCluster
    except ImportError:
        raise CampaignError("--scheduler/--workers: dask is not installed; expected "
                            "pip install -e \".[cluster]\" (or run with --serial)") from None
    if scheduler is not None:
        try:
            return Client(scheduler, timeout="20s"), None
        except (OSError, TimeoutError, ValueError) as exc:
            raise CampaignError(f"--scheduler: cannot connect to {scheduler!r} "
                                f"({type(exc).__name__}); expected the address of a running "
                                "Dask scheduler, e.g. tcp://10.0.0.5:8786") from None
    n = workers or os.cpu_count() or 1
    cluster = LocalCluster(n_workers=n, threads_per_worker=1, processes=not threads,
                           dashboard_address=None)
    return Client(cluster), cluster


@dataclass(frozen=True)
class CampaignResult:
    folder: Path
    summary: object
    price: object
    ran: list
    skipped: int
    seconds: float

    @property
    def failed(self) -> list:
        return [r for r in self.ran if r["status"] != "finished"]


def run_campaign(campaign: Campaign, out=None, *, scheduler=None, workers=None, serial=False,
                 threads=False, progress=None) -> CampaignResult:
    """Run every pending combination and write the campaign results.

    ``serial``: in this process, one after another (no Dask). Otherwise one Dask task per
    combination: on the scheduler at ``scheduler`` (tcp://HOST:PORT; its workers must see the
    campaign folder at the same path), or on a LocalCluster of ``workers`` processes (default
    one per core; ``threads`` makes them threads of this process). ``progress(line)`` gets a
    line per finished run. The plots are drawn by the caller
    (:func:`optimiser.report.campaign_plots.plot_campaign`).
    """
    if workers is not None and (isinstance(workers, bool) or not isinstance(workers, int)
                                or workers < 1):
        raise CampaignError(f"--workers: got {workers!r}; expected a whole number of at least 1")
    say = progress or (lambda line: None)
    t0 = time.monotonic()
    folder, pending = prepare_campaign_dir(campaign, out)
    skipped = len(campaign.combinations) - len(pending)
    if skipped:
        say(f"{skipped} of {len(campaign.combinations)} runs already finished in {folder}; "
            f"running the other {len(pending)}")
    args = [(c.study_text, str(folder / "runs" / c.name / "study.toml"),
             str(folder / "runs" / c.name)) for c in pending]
    ran = []

    def report(c, r):
        ran.append(r)
        say(f"run {len(ran)}/{len(pending)} {r['status']}: {c.name} ({r['seconds']:.1f} s"
            + (", resumed" if r["how"] == "resumed" else "")
            + (f"; {r['message']}" if r["status"] != "finished" else "") + ")")

    if pending and serial:
        for c, a in zip(pending, args):
            report(c, run_combination(*a))
    elif pending:
        client, cluster = _dask_client(scheduler, workers, threads)
        try:
            from dask.distributed import as_completed
            futures = {client.submit(run_combination, *a, pure=False,
                                     key=f"campaign-run-{c.name}-{time.time_ns()}"): c
                       for c, a in zip(pending, args)}
            for fut in as_completed(futures):
                c = futures[fut]
                try:
                    r = fut.result()
                except Exception as exc:  # a lost worker, for example
                    r = {"run_dir": str(folder / "runs" / c.name), "status": "failed",
                         "message": f"{type(exc).__name__}: {exc}".splitlines()[0],
                         "seconds": float("nan"), "how": "new"}
                report(c, r)
        finally:
            client.close()
            if cluster is not None:
                cluster.close()
    summary = gather(campaign, folder, ran=ran, seconds=time.monotonic() - t0)
    return CampaignResult(folder=folder, summary=summary[0], price=summary[1], ran=ran,
                          skipped=skipped, seconds=time.monotonic() - t0)


# ----------------------------------------------------------------------------- results

def _axis_columns(axis: Axis) -> tuple[str, str | None]:
    unit = axis.unit.replace("/", "_").replace(" ", "").replace("·", "_")
    unit = re.sub(r"[^A-Za-z0-9_]", "", unit)
    return axis.key, (f"{axis.key}_{unit}" if axis.numbers is not None and unit else
                      (axis.key + "_value" if axis.numbers is not None else None))


def summary_rows(campaign: Campaign, folder: Path):
    """One row per combination from the run folders (DataFrame)."""
    import pandas as pd
    size = campaign.engine_size_column
    load = campaign.loading_column
    rows = []
    for c in campaign.combinations:
        run_dir = Path(folder) / "runs" / c.name
        row = {"combination": c.name}
        for a, v, i in zip(campaign.axes, c.values, c.index):
            text_col, num_col = _axis_columns(a)
            row[text_col] = v if not isinstance(v, list) else " ".join(map(str, v))
            if num_col:
                row[num_col] = a.numbers[i]
        row["run_folder"] = str(Path("runs") / c.name)
        info = None
        if is_finished(run_dir, c.study_text):
            try:
                info = json.loads((run_dir / "run.json").read_text("utf-8"))
            except (OSError, ValueError):
                info = None
        if info is None:
            err = run_dir / "error.txt"
            row["status"] = "failed" if err.is_file() else "not run"
            row["note"] = err.read_text("utf-8").strip() if err.is_file() else ""
            rows.append(row)
            continue
        row["status"] = "finished"
        row["n_evaluations"] = info.get("n_evaluations")
        row["front_size"] = info.get("front_size", 0)
        row["feasible_found"] = bool(info.get("feasible_found"))
        row["note"] = "" if row["feasible_found"] else info.get("message", "")
        if row["feasible_found"]:
            front = pd.read_csv(run_dir / "front.csv")
            k = pick_compromise(front, campaign.pick, size, campaign.objectives)
            p = front.iloc[k]
            row.update({
                "picked_flap": p["flap"], "picked_wing_loading_N_m2": p["wing_loading_N_m2"],
                f"picked_{load}": p[load], "picked_aspect_ratio": p["aspect_ratio"],
                "picked_trip_fuel_kg": p["trip_fuel_kg"], f"picked_{size}": p[size],
                "picked_maintenance_index": p["maintenance_index"],
                "picked_takeoff_mass_kg": p["takeoff_mass_kg"],
                "picked_limiting_constraint": p["limiting_constraint"],
            })
            i_fuel = int(front["trip_fuel_kg"].to_numpy(float).argmin())
            i_size = int(front[size].to_numpy(float).argmin())
            row.update({
                "min_trip_fuel_kg": front["trip_fuel_kg"].iloc[i_fuel],
                f"{size}_at_min_trip_fuel": front[size].iloc[i_fuel],
                f"min_{size}": front[size].iloc[i_size],
                f"trip_fuel_kg_at_min_{size}": front["trip_fuel_kg"].iloc[i_size],
                "min_maintenance_index": front["maintenance_index"].min(),
            })
        rows.append(row)
    return pd.DataFrame(rows)


PRICED = ("picked_trip_fuel_kg", "picked_{size}", "min_trip_fuel_kg", "min_{size}")


def price_table(campaign: Campaign, summary):
    """Marginal cost of tightening each numeric requirement (DataFrame, one row per step).

    For each axis with a ``tighter`` direction and each pair of neighbouring values (the other
    axes held at one combination of their values), the change of each priced quantity from
    the looser to the tighter value divided by the step: a forward finite difference,
    ``(f_tight - f_loose) / |x_tight - x_loose|`` in quantity units per axis unit. Positive =
    the quantity grows as the requirement tightens. NaN where either run found no feasible
    design.
    """
    import pandas as pd
    size = campaign.engine_size_column
    quantities = [q.format(size=size) for q in PRICED]
    rows = []
    by_index = {c.index: k for k, c in enumerate(campaign.combinations)}
    for ai, axis in enumerate(campaign.axes):
        if axis.tighter is None:
            continue
        others = [range(len(a.values)) if j != ai else [None]
                  for j, a in enumerate(campaign.axes)]
        order = np.argsort(axis.numbers)
        if axis.tighter == "smaller":
            order = order[::-1]          # from the loosest to the tightest value
        for rest in product(*others):
            held = "; ".join(f"{a.key} = {short_value(a.values[i])}" for j, (a, i) in
                             enumerate(zip(campaign.axes, rest)) if j != ai)
            for loose_i, tight_i in zip(order[:-1], order[1:]):
                idx_l = tuple(int(loose_i) if j == ai else i for j, i in enumerate(rest))
                idx_t = tuple(int(tight_i) if j == ai else i for j, i in enumerate(rest))
                rl, rt = summary.iloc[by_index[idx_l]], summary.iloc[by_index[idx_t]]
                step = abs(axis.numbers[tight_i] - axis.numbers[loose_i])
                row = {"axis": axis.key, "unit": axis.unit, "held": held,
                       "looser": axis.values[loose_i], "tighter": axis.values[tight_i],
                       "step": step, "from_combination": rl["combination"],
                       "to_combination": rt["combination"]}
                for q in quantities:
                    a = float(rl.get(q, float("nan")))
                    b = float(rt.get(q, float("nan")))
                    row[f"delta_{q}"] = b - a
                    row[f"price_{q}_per_unit"] = (b - a) / step
                rows.append(row)
    return pd.DataFrame(rows)


def short_value(v) -> str:
    """An axis value as text: a list joined by '+'."""
    return "+".join(map(str, v)) if isinstance(v, list) else str(v)


def summary_text(campaign: Campaign, summary, price, folder) -> str:
    """The printed campaign report, ending with the caution text."""
    from .evaluation import CAUTION
    size = campaign.engine_size_column
    unit = unit_of(size)
    done = int((summary["status"] == "finished").sum())
    lines = [f"campaign {campaign.name}: {done} of {len(summary)} runs finished; folder {folder}",
             f"  picking rule: {pick_text(campaign.pick)}",
             f"  {'combination':<44}{'trip kg':>9}{'engine ' + unit:>11}  flap"]
    for _, r in summary.iterrows():
        if r["status"] == "finished" and r.get("feasible_found", False):
            lines.append(f"  {r['combination'][:43]:<44}{r['picked_trip_fuel_kg']:>9.1f}"
                         f"{r['picked_' + size]:>11.1f}  {r['picked_flap']}")
        else:
            lines.append(f"  {r['combination'][:43]:<44}{'-':>9}{'-':>11}  "
                         + (r["status"] if r["status"] != "finished" else "no feasible design"))
    if len(price):
        lines.append("  price of tightening (picked design, mean over the steps of each axis):")
        for ax_key, g in price.groupby("axis", sort=False):
            pf = g["price_picked_trip_fuel_kg_per_unit"].mean()
            pe = g[f"price_picked_{size}_per_unit"].mean()
            u = g["unit"].iloc[0] or "unit"
            lines.append(f"    {ax_key}: {pf:+.4g} kg trip fuel and {pe:+.4g} {unit} engine "
                         f"per {u} tighter")
    lines.append(CAUTION)
    return "\n".join(lines)


def gather(campaign: Campaign, folder, ran=(), seconds=None):
    """Write summary.csv, price.csv, summary.txt and campaign.json from the run folders;
    returns (summary, price). Plots: :func:`optimiser.report.campaign_plots.plot_campaign`."""
    from .evaluation import CAUTION
    from .runs import utc_now, versions, write_atomic
    folder = Path(folder)
    summary = summary_rows(campaign, folder)
    price = price_table(campaign, summary)
    write_atomic(folder / "summary.csv", summary.to_csv(index=False).encode())
    write_atomic(folder / "price.csv", price.to_csv(index=False).encode())
    text = summary_text(campaign, summary, price, folder)
    write_atomic(folder / "summary.txt", (text + "\n").encode())
    info = {
        "campaign": campaign.name, "description": campaign.description,
        "campaign_file": campaign.path, "base_study": campaign.base_study_path,
        "written_utc": utc_now(), "versions": versions(),
        "budget_per_run": campaign.budget, "picking_rule": campaign.pick,
        "picking_rule_text": pick_text(campaign.pick),
        "axes": [{"key": a.key, "also": list(a.also), "values": list(a.values),
                  "unit": a.unit, "tighter": a.tighter} for a in campaign.axes],
        "combinations": len(campaign.combinations),
        "finished": int((summary["status"] == "finished").sum()),
        "this_session": {"runs": len(ran), "seconds": seconds,
                         "failed": [r["run_dir"] for r in ran if r["status"] != "finished"]},
        "caution": CAUTION,
    }
    write_atomic(folder / "campaign.json", (json.dumps(info, indent=2, default=str)
                                            + "\n").encode())
    return summary, price
