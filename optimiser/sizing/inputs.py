"""The batch of designs to size: the model's valid range of each decision variable, the
variables clipped to it for the arithmetic (and flagged where they lay outside), per-design
overrides of a few spec values."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..spec import AircraftSpec


@dataclass(frozen=True, slots=True)
class ModelRange:
    """The range of one decision variable inside which the model's methods hold."""

    column: str  # input column of the results schema
    lower: float  # [unit of the column]
    upper: float  # [unit of the column]
    reason: str  # one line: why the model holds only here


MODEL_RANGES = {
    "wing_loading_N_m2": ModelRange(
        "wing_loading_N_m2", 100.0, 12000.0,
        "common practice: about 2 to 250 lb/ft^2, from the lightest microlights to heavy "
        "transports; the statistical mass equations and the field-length methods are fitted "
        "to airplanes inside it"),
    "power_loading_N_kW": ModelRange(
        "power_loading_N_kW", 10.0, 500.0,
        "common practice: about 1.7 to 84 lb/hp, from aerobatic airplanes to the "
        "lowest-powered motor gliders; the engine mass and propeller thrust models are not "
        "meant beyond it"),
    "thrust_to_weight": ModelRange(
        "thrust_to_weight", 0.05, 1.5,
        "common practice: from too little thrust for any practical takeoff to more than the "
        "weight; the ground-roll and climb equations assume a conventional takeoff, lift "
        "carrying the weight"),
    "aspect_ratio": ModelRange(
        "aspect_ratio", 3.0, 20.0,
        "common practice: the wing mass equation and the Oswald-factor method are fitted to "
        "conventional wings (not delta wings, not high-performance sailplanes)"),
}
"""The model's valid range of each decision variable (column -> :class:`ModelRange`): the
study refuses variable bounds outside it, ``evaluate`` refuses designs outside it, and
:func:`design_batch` flags such designs (``outside_model_range``)."""


def range_text(column: str) -> str:
    """``"from 3 to 20 (the model's valid range; <reason>)"`` for a decision variable."""
    r = MODEL_RANGES[column]
    return f"from {r.lower:g} to {r.upper:g} (the model's valid range; {r.reason})"


def range_margin(column: str, values) -> np.ndarray:
    """How far inside the model's range each value lies, relative to the nearer limit [-]:
    ``min(x / lower - 1, 1 - x / upper)``; negative outside, ``-inf`` for NaN."""
    r = MODEL_RANGES[column]
    x = np.asarray(values, dtype=float)
    m = np.minimum(x / r.lower - 1.0, 1.0 - x / r.upper)
    return np.where(np.isnan(m), -np.inf, m)


def _clipped(column: str, values) -> np.ndarray:
    r = MODEL_RANGES[column]
    return np.clip(np.nan_to_num(values, nan=r.lower, posinf=r.upper, neginf=r.lower),
                   r.lower, r.upper)


CRUISE_ALTITUDE_MAX_M = 15000.0
"""Highest cruise altitude the model takes [m] (the bound of ``[mission] cruise_altitude``)."""

OVERRIDE_KEYS = {
    "cd0_clean": "clean zero-lift drag coefficient [-] (pins it: replaces the study's value "
                 "or its build-up)",
    "cd0_scale": "multiplies the clean zero-lift drag coefficient, fixed or built up [-]",
    "oswald_factor_scale": "multiplies the Oswald factor of the study's method [-]",
    "propeller_efficiency_cruise": "cruise propeller efficiency [-] (propeller studies)",
    "propeller_efficiency_climb": "takeoff and climb propeller efficiency [-] (propeller studies)",
    "sfc_cruise": "power-specific fuel consumption in cruise [kg/J] (propeller studies)",
    "tsfc_cruise": "thrust-specific fuel consumption in cruise [kg/(N s)] (turbofan studies)",
    "empty_mass_factor": "multiplies the whole empty mass [-]",
    "cruise_altitude_m": "cruise pressure altitude [m] (a decision variable when the study "
                         "gives [variables] cruise_altitude)",
    "departure_temperature_offset_K": "ISA temperature offset at the departure airfield [K]",
    "destination_temperature_offset_K": "ISA temperature offset at the destination [K]",
    "departure_headwind_m_s": "wind component against the takeoff [m/s] (negative: tailwind; "
                              "the field lengths count 50 % of a headwind, 150 % of a "
                              "tailwind)",
    "destination_headwind_m_s": "wind component against the landing [m/s] (negative: "
                                "tailwind; factored as at departure)",
    "rolling_friction": "rolling friction of the departure runway [-]",
    "braking_friction": "braking friction of the destination runway [-]",
}
"""Spec values that :func:`~optimiser.sizing.size_designs` accepts per design
(``overrides``), e.g. for a Monte Carlo over uncertain assumptions or operating conditions."""

OVERRIDE_RANGES = {
    "cruise_altitude_m": (0.0, CRUISE_ALTITUDE_MAX_M),
    "departure_temperature_offset_K": (-60.0, 50.0),
    "destination_temperature_offset_K": (-60.0, 50.0),
    "departure_headwind_m_s": (-30.0, 30.0),
    "destination_headwind_m_s": (-30.0, 30.0),
    "rolling_friction": (0.005, 0.5),
    "braking_friction": (0.02, 1.0),
}
"""Closed ranges of the overrides that need not be positive or are bounded [unit of each
key]: the study's own limits for the same fields (temperature offsets, cruise altitude);
winds up to 30 m/s (58 kn) along the runway and friction coefficients from ice to a dry
high-friction surface (common practice). Every other override must be positive."""


@dataclass(frozen=True, slots=True)
class DesignBatch:
    """Decision variables of a batch, clipped to the model's valid ranges (one per design),
    and how far inside those ranges the given values lay."""

    wing_loading_N_m2: np.ndarray
    aspect_ratio: np.ndarray
    thrust_to_weight: np.ndarray | None  # turbofan studies, else None [-]
    power_to_weight_W_N: np.ndarray | None  # propeller studies, else None [W N^-1]
    high_lift_index: np.ndarray  # index into spec.high_lift, clipped to it
    overrides: dict  # checked per-design arrays, keys of OVERRIDE_KEYS
    model_range_margin: np.ndarray  # smallest range_margin over the variables as given [-]


def design_batch(spec: AircraftSpec, wing_loading_N_m2, loading, aspect_ratio, high_lift_index,
                 overrides=None) -> DesignBatch:
    """The decision variables as float arrays inside the model's valid ranges.

    Parameters
    ----------
    spec : AircraftSpec
        Resolved study (SI).
    wing_loading_N_m2 : array_like
        Takeoff wing loading W/S. [N m^-2]
    loading : array_like
        Power loading W/P (piston, turboprop) [N kW^-1], or thrust-to-weight T/W
        (turbofan) [-].
    aspect_ratio : array_like
        Wing aspect ratio. [-]
    high_lift_index : array_like of int
        Index into ``spec.high_lift``. [-]
    overrides : dict of str -> array_like, optional
        Per-design spec values (keys of :data:`OVERRIDE_KEYS`). [units of each key]

    Returns
    -------
    DesignBatch
        The variables clipped to :data:`MODEL_RANGES` (NaN to a limit), so that no NaN can
        arise in the physics, and ``model_range_margin``: negative for a design given
        outside a range (or NaN), which the margins stage marks ``outside_model_range``.

    References
    ----------
    :data:`MODEL_RANGES` (each range with its reason).
    """
    ws = np.asarray(wing_loading_N_m2, dtype=float).ravel()
    ld_in = np.asarray(loading, dtype=float).ravel()
    ar = np.asarray(aspect_ratio, dtype=float).ravel()
    idx = np.asarray(high_lift_index, dtype=int).ravel()
    loading_column = ("thrust_to_weight" if spec.propulsion.family == "turbofan"
                      else "power_loading_N_kW")
    margin = np.minimum(np.minimum(range_margin("wing_loading_N_m2", ws),
                                   range_margin(loading_column, ld_in)),
                        range_margin("aspect_ratio", ar))
    ld_c = _clipped(loading_column, ld_in)
    tw, pw = (ld_c, None) if loading_column == "thrust_to_weight" else (None, 1e3 / ld_c)
    return DesignBatch(_clipped("wing_loading_N_m2", ws), _clipped("aspect_ratio", ar), tw, pw,
                       np.clip(idx, 0, len(spec.high_lift) - 1),
                       check_overrides(spec, overrides, ws.size), margin)


def check_overrides(spec, overrides, n):
    """Per-design override arrays (float, shape ``(n,)``); raises ValueError on a bad one."""
    if not overrides:
        return {}
    is_jet = spec.propulsion.family == "turbofan"
    out = {}
    for key, value in overrides.items():
        if key not in OVERRIDE_KEYS:
            raise ValueError(f"overrides: unknown key {key!r}; expected one of: "
                             + ", ".join(OVERRIDE_KEYS))
        if is_jet and key in ("propeller_efficiency_cruise", "propeller_efficiency_climb",
                              "sfc_cruise"):
            raise ValueError(f"overrides: {key!r} given for a turbofan study; expected it only "
                             "for propeller studies")
        if not is_jet and key == "tsfc_cruise":
            raise ValueError("overrides: 'tsfc_cruise' given for a propeller study; expected "
                             "it only for turbofan studies")
        a = np.asarray(value, dtype=float)
        if a.ndim == 0:
            a = np.full(n, float(a))
        a = a.ravel()
        if a.shape != (n,):
            raise ValueError(f"overrides: {key!r} has {a.size} values; expected one per design "
                             f"({n}) or a single value")
        if key in OVERRIDE_RANGES:
            lo, hi = OVERRIDE_RANGES[key]
            if not (np.isfinite(a).all() and (a >= lo).all() and (a <= hi).all()):
                raise ValueError(f"overrides: {key!r} holds values outside {lo:g} to {hi:g}; "
                                 "expected values in that range")
        elif not (np.isfinite(a).all() and (a > 0.0).all()):
            raise ValueError(f"overrides: {key!r} holds values that are not finite and "
                             "positive; expected positive numbers")
        out[key] = a
    return out


def at(x, ix):
    """``x[ix]`` for a per-design array, ``x`` itself for a study-wide scalar."""
    return x if np.ndim(x) == 0 else x[ix]


def col(x, like):
    """Reshape a per-design array to broadcast against ``like`` (designs along axis 0)."""
    x = np.asarray(x, dtype=float)
    if np.ndim(like) == 2 and x.ndim == 1:
        return x[:, None]
    return x
