"""The ``[uncertainty]`` table of a study: which assumptions may be uncertain, their
distributions, the reader that validates the table (used by the study loader), the
sampling of factors and their per-sample spec values, and the Wilson interval (used by
:mod:`optimiser.robust` and by the chance-constrained search, :mod:`optimiser.chance`).

The factors multiply the study's own values (1 = unchanged); their limits are common practice
for conceptual-design uncertainty (a standard deviation of up to 20 % of a value, factors
between one half and two).
"""

from __future__ import annotations

import math

import numpy as np

UNCERTAIN_ASSUMPTIONS = {
    "cd0_clean": "clean zero-lift drag coefficient",
    "oswald_factor": "Oswald factor (cruise and low speed)",
    "propeller_efficiency": "propeller efficiency, cruise and climb (propeller studies)",
    "sfc": "cruise specific fuel consumption (power- or thrust-specific)",
    "empty_mass_factor": "empty-mass factor",
}
"""Assumptions an ``[uncertainty]`` table may perturb, with a plain description."""

UNCERTAIN_CONDITIONS = {
    "temperature_offset": "the day's temperature: a change added to both airfields' ISA "
                          "offsets (a temperature difference, e.g. std = \"5 K\")",
    "headwind": "wind along both runways, against the takeoff and the landing (negative: "
                "tailwind; e.g. low = \"-10 kn\", high = \"20 kn\"); the field lengths count "
                "50 % of a headwind and 150 % of a tailwind",
    "runway_friction": "a factor on both runways' friction: rolling at departure, braking at "
                       "the destination",
}
"""Operating conditions an ``[uncertainty]`` table may sample, with a plain description:
``temperature_offset`` and ``headwind`` are additive quantities with a unit (their nominal is
0), ``runway_friction`` a factor like the assumptions (nominal 1)."""

ADDITIVE_CONDITIONS = {
    # key: (SI unit, largest |value| of a parameter, largest std) -- common practice: ISA
    # offsets of the design days are within about 40 K, winds along a runway within 30 m/s
    "temperature_offset": ("K", 40.0, 20.0),
    "headwind": ("m/s", 30.0, 15.0),
}
"""The additive conditions, their SI unit and the limits of their parameters."""

DISTRIBUTIONS = {
    "normal": ("mean", "std"),
    "uniform": ("low", "high"),
    "triangular": ("low", "mode", "high"),
}
"""Distribution of the factor on the study's value, with its parameters (factors, not values)."""

RELIABILITY_SAMPLES = 200
"""Default samples per design of a chance-constrained search (``[search]
reliability_samples``): the Wilson interval at p = 0.95 is then about +-0.03 (ours, from
:func:`wilson_interval`)."""

MAX_STD = 0.2
FACTOR_RANGE = (0.5, 2.0)
DEFAULT_SAMPLES = 10000
MAX_SAMPLES = 2_000_000


def read_uncertainty(fail, raw, family, quantity=None):
    """Validate an ``[uncertainty]`` table (the parsed TOML dict).

    ``fail(where, message)`` raises the study layer's one-line error; ``family`` is the
    propulsion family; ``quantity(where, value, unit, lo, hi)`` reads a value with its unit
    (the study's reader; needed for the additive conditions). Returns ``{"samples": int,
    "seed": int | None, "assumptions": {key: {"distribution": str, <parameters>: float}}}``,
    the conditions among the assumptions (their parameters in SI).
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
        if key not in UNCERTAIN_ASSUMPTIONS and key not in UNCERTAIN_CONDITIONS:
            fail("[uncertainty]", f"unknown key {key!r}; expected 'samples', 'seed' or one of: "
                 + ", ".join([*UNCERTAIN_ASSUMPTIONS, *UNCERTAIN_CONDITIONS]))
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
        if key in ADDITIVE_CONDITIONS:
            out["assumptions"][key] = _read_additive(fail, quantity, where, key, value, dist)
            continue
        entry = {"distribution": dist}
        for p, v in _parameters(fail, where, dist, value):
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
            _check_order(fail, where, params, entry)
        out["assumptions"][key] = entry
    return out


def _parameters(fail, where, dist, value):
    """The (name, given value) pairs of a distribution's table, every name one of the
    distribution's parameters (:data:`DISTRIBUTIONS`), or the one-line error."""
    params = DISTRIBUTIONS[dist]
    for p, v in value.items():
        if p == "distribution":
            continue
        if p not in params:
            fail(where, f"unknown key {p!r} for a {dist} distribution; expected: "
                 + ", ".join(params))
        yield p, v


def _read_additive(fail, quantity, where, key, value, dist):
    """One additive condition's entry (parameters in SI), checked against
    :data:`ADDITIVE_CONDITIONS`."""
    unit, biggest, max_std = ADDITIVE_CONDITIONS[key]
    params = DISTRIBUTIONS[dist]
    example = "\"5 K\"" if unit == "K" else "\"10 kn\""
    entry = {"distribution": dist, "unit": unit}
    for p, v in _parameters(fail, where, dist, value):
        if quantity is None or not isinstance(v, str):
            fail(f"{where} {p}", f"got {v!r}; expected a value with its unit, e.g. {example}")
        entry[p] = quantity(f"{where} {p}", v, unit, -biggest if p != "std" else 0.0, biggest)
    if dist == "normal":
        entry.setdefault("mean", 0.0)
        if "std" not in entry:
            fail(where, f"missing key 'std' (standard deviation, e.g. {example})")
        if entry["std"] > max_std:
            fail(f"{where} std", f"got {entry['std']:g} {unit}; expected at most {max_std:g} "
                 f"{unit}")
        return entry
    for p in params:
        if p not in entry:
            fail(where, f"missing key {p!r} (a value with its unit, e.g. {example})")
    _check_order(fail, where, params, entry, f" {unit}")
    return entry


def _check_order(fail, where, params, entry, unit=""):
    """low (<= mode) <= high with low < high, or the one-line error."""
    order = [entry[p] for p in params]
    if order != sorted(order) or entry["low"] == entry["high"]:
        fail(where, "expected " + " <= ".join(params) + " with low < high; got "
             + ", ".join(f"{p} = {entry[p]:g}{unit}" for p in params))


def nominal_draws(keys) -> dict:
    """The draw of each key at the study's own values: 0 for an additive condition, 1 for a
    factor (one value each, arrays of length 1)."""
    return {k: np.array([0.0 if k in ADDITIVE_CONDITIONS else 1.0]) for k in keys}


def draw_column(key: str) -> str:
    """The samples-table column of a key's draws: ``factor_<key>`` for a factor,
    ``temperature_offset_change_K`` and ``headwind_m_s`` for the additive conditions."""
    return {"temperature_offset": "temperature_offset_change_K",
            "headwind": "headwind_m_s"}.get(key, f"factor_{key}")


EFFICIENCY_CAP = 0.95
FACTOR_FLOOR = 0.01
Z95 = 1.959963984540054  # standard normal quantile at 0.975


def sample_factors(assumptions: dict, n: int, rng) -> dict:
    """Draw ``n`` values per key: factors of the assumptions (in
    :data:`UNCERTAIN_ASSUMPTIONS` order), then the conditions (in
    :data:`UNCERTAIN_CONDITIONS` order; additive ones in SI, not floored)."""
    out = {}
    for key in (*UNCERTAIN_ASSUMPTIONS, *UNCERTAIN_CONDITIONS):
        if key not in assumptions:
            continue
        a = assumptions[key]
        if a["distribution"] == "normal":
            x = rng.normal(a["mean"], a["std"], n) if a["std"] > 0 else np.full(n, a["mean"])
        elif a["distribution"] == "uniform":
            x = rng.uniform(a["low"], a["high"], n)
        else:
            x = rng.triangular(a["low"], a["mode"], a["high"], n)
        out[key] = x if key in ADDITIVE_CONDITIONS else np.maximum(x, FACTOR_FLOOR)
    return out


def overrides_from_factors(spec, factors: dict) -> tuple[dict, dict]:
    """Per-sample spec values for :func:`optimiser.sizing.size_designs` from factors.

    Returns ``(overrides, capped)`` where ``capped`` gives, per override key, the share of
    samples whose efficiency was capped at :data:`EFFICIENCY_CAP`.
    """
    pr, ad, wt = spec.propulsion, spec.aerodynamics, spec.weights
    ov, capped = {}, {}
    if "cd0_clean" in factors:  # a factor on the pinned CD0, or on the build-up's
        if ad.cd0_method == "fixed":
            ov["cd0_clean"] = ad.cd0_clean * factors["cd0_clean"]
        else:
            ov["cd0_scale"] = factors["cd0_clean"]
    if "oswald_factor" in factors:
        ov["oswald_factor_scale"] = factors["oswald_factor"]
    if "propeller_efficiency" in factors:
        for key, nominal in (("propeller_efficiency_cruise", pr.propeller_efficiency_cruise),
                             ("propeller_efficiency_climb", pr.propeller_efficiency_climb)):
            raw = nominal * factors["propeller_efficiency"]
            capped[key] = float(np.mean(raw > EFFICIENCY_CAP))
            ov[key] = np.minimum(raw, EFFICIENCY_CAP)
    if "sfc" in factors:
        if pr.family == "turbofan":
            ov["tsfc_cruise"] = pr.tsfc_cruise * factors["sfc"]
        else:
            ov["sfc_cruise"] = pr.sfc_cruise * factors["sfc"]
    if "empty_mass_factor" in factors:
        ov["empty_mass_factor"] = wt.empty_mass_factor * factors["empty_mass_factor"]
    _condition_overrides(spec, factors, ov)
    return ov, capped


def _condition_overrides(spec, draws: dict, ov: dict):
    """The operating conditions' per-sample spec values (into ``ov``), held inside the
    model's override ranges (:data:`optimiser.sizing.inputs.OVERRIDE_RANGES`)."""
    from .sizing.inputs import OVERRIDE_RANGES
    dep, dst = spec.departure, spec.destination

    def held(key, x):
        return np.clip(x, *OVERRIDE_RANGES[key])

    if "temperature_offset" in draws:
        d = np.asarray(draws["temperature_offset"], dtype=float)
        ov["departure_temperature_offset_K"] = held("departure_temperature_offset_K",
                                                    dep.temperature_offset_K + d)
        ov["destination_temperature_offset_K"] = held("destination_temperature_offset_K",
                                                      dst.temperature_offset_K + d)
    if "headwind" in draws:
        w = np.asarray(draws["headwind"], dtype=float)
        ov["departure_headwind_m_s"] = held("departure_headwind_m_s", w)
        ov["destination_headwind_m_s"] = held("destination_headwind_m_s", w)
    if "runway_friction" in draws:
        f = np.asarray(draws["runway_friction"], dtype=float)
        ov["rolling_friction"] = held("rolling_friction", dep.rolling_friction * f)
        ov["braking_friction"] = held("braking_friction", dst.braking_friction * f)


def wilson_interval(p, n, z=Z95):
    """Wilson score interval of a binomial proportion ``p`` from ``n`` trials (Wilson 1927)."""
    p = np.asarray(p, dtype=float)
    centre = (p + z * z / (2 * n)) / (1 + z * z / n)
    half = z * np.sqrt(p * (1 - p) / n + z * z / (4 * n * n)) / (1 + z * z / n)
    # At p = 0 and p = 1 the exact ends are 0 and 1; in floating point they come out a hair
    # inside, on the wrong side of p. The interval always contains p, so bound it by p.
    return np.clip(np.minimum(centre - half, p), 0.0, 1.0), np.clip(np.maximum(centre + half, p), 0.0, 1.0)


def check_reliability(value, fail) -> float:
    """A required probability of meeting each constraint, strictly between 0 and 1;
    ``fail(message)`` raises the caller's one-line error otherwise."""
    if isinstance(value, bool) or not isinstance(value, (int, float)) \
            or not math.isfinite(value) or not 0.0 < value < 1.0:
        fail(f"got {value!r}; expected a probability greater than 0 and less than 1, "
             "e.g. 0.95")
    return float(value)
