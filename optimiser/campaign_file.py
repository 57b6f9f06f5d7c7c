"""Campaign files: reading and checking a campaign (TOML), the study text of every
combination, and the rule that picks one compromise from each run's front.

The file's format and how a campaign runs are described in :mod:`optimiser.campaign`.
"""

from __future__ import annotations

import json
import math
import re
from dataclasses import dataclass
from itertools import product
from pathlib import Path

import numpy as np

from .columns import OBJECTIVES
from .errors import CampaignError, StudyError

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
