"""The ``[uncertainty]`` table of a study: which assumptions may be uncertain, their
distributions, and the reader that validates the table (used by the study loader; the
sampling itself is :mod:`optimiser.robust`'s).

The factors multiply the study's own values (1 = unchanged); their limits are common practice
for conceptual-design uncertainty (a standard deviation of up to 20 % of a value, factors
between one half and two).
"""

from __future__ import annotations

import math

UNCERTAIN_ASSUMPTIONS = {
    "cd0_clean": "clean zero-lift drag coefficient",
    "oswald_factor": "Oswald factor (cruise and low speed)",
    "propeller_efficiency": "propeller efficiency, cruise and climb (propeller studies)",
    "sfc": "cruise specific fuel consumption (power- or thrust-specific)",
    "empty_mass_factor": "empty-mass factor",
}
"""Assumptions an ``[uncertainty]`` table may perturb, with a plain description."""

DISTRIBUTIONS = {
    "normal": ("mean", "std"),
    "uniform": ("low", "high"),
    "triangular": ("low", "mode", "high"),
}
"""Distribution of the factor on the study's value, with its parameters (factors, not values)."""

MAX_STD = 0.2
FACTOR_RANGE = (0.5, 2.0)
DEFAULT_SAMPLES = 10000
MAX_SAMPLES = 2_000_000


def read_uncertainty(fail, raw, family):
    """Validate an ``[uncertainty]`` table (the parsed TOML dict).

    ``fail(where, message)`` raises the study layer's one-line error; ``family`` is the
    propulsion family. Returns ``{"samples": int, "seed": int | None, "assumptions": {key:
    {"distribution": str, <parameters>: float}}}``.
    """
    if not isinstance(raw, dict):
        fail("[uncertainty]", f"got {raw!r}; expected a table ([uncertainty])")
    out = {"samples": DEFAULT_SAMPLES, "seed": None, "assumptions": {}}
    for key, value in raw.items():
        where = f"[uncertainty] {key}"
        if key in ("samples", "seed"):
            hi = MAX_SAMPLES if key == "samples" else 2**32 - 1
            lo = 1 if key == "samples" else 0
            if isinstance(value, bool) or not isinstance(value, int) or not lo <= value <= hi:
                fail(where, f"got {value!r}; expected a whole number from {lo} to {hi}")
            out[key] = value
            continue
        if key not in UNCERTAIN_ASSUMPTIONS:
            fail("[uncertainty]", f"unknown key {key!r}; expected 'samples', 'seed' or one of: "
                 + ", ".join(UNCERTAIN_ASSUMPTIONS))
        if key == "propeller_efficiency" and family == "turbofan":
            fail(where, "given for a turbofan study; expected it only for propeller studies")
        if not isinstance(value, dict):
            fail(where, f"got {value!r}; expected a table such as "
                 "{ distribution = \"normal\", std = 0.05 }")
        dist = value.get("distribution")
        if dist not in DISTRIBUTIONS:
            fail(f"{where} distribution", f"got {dist!r}; expected one of: "
                 + ", ".join(repr(d) for d in DISTRIBUTIONS))
        params = DISTRIBUTIONS[dist]
        entry = {"distribution": dist}
        for p, v in value.items():
            if p == "distribution":
                continue
            if p not in params:
                fail(where, f"unknown key {p!r} for a {dist} distribution; expected: "
                     + ", ".join(params))
            if isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v):
                fail(f"{where} {p}", f"got {v!r}; expected a number (a factor on the study's "
                     "value, 1 = unchanged)")
            entry[p] = float(v)
        lo, hi = FACTOR_RANGE
        if dist == "normal":
            entry.setdefault("mean", 1.0)
            if "std" not in entry:
                fail(where, "missing key 'std' (standard deviation of the factor, e.g. 0.05)")
            if not 0.0 <= entry["std"] <= MAX_STD:
                fail(f"{where} std", f"got {entry['std']:g}; expected 0 to {MAX_STD:g} (a "
                     "fraction of the study's value)")
            if not lo <= entry["mean"] <= hi:
                fail(f"{where} mean", f"got {entry['mean']:g}; expected {lo:g} to {hi:g}")
        else:
            for p in params:
                if p not in entry:
                    fail(where, f"missing key {p!r} (a factor on the study's value)")
                if not lo <= entry[p] <= hi:
                    fail(f"{where} {p}", f"got {entry[p]:g}; expected {lo:g} to {hi:g}")
            order = [entry[p] for p in params]
            if order != sorted(order) or entry["low"] == entry["high"]:
                fail(where, "expected " + " <= ".join(params) + " with low < high; got "
                     + ", ".join(f"{p} = {entry[p]:g}" for p in params))
        out["assumptions"][key] = entry
    return out
