"""The batch of designs to size: decision variables kept in the model's range, per-design
overrides of a few spec values."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..spec import AircraftSpec

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
}
"""Spec values that :func:`~optimiser.sizing.size_designs` accepts per design
(``overrides``), e.g. for a Monte Carlo over uncertain assumptions."""


@dataclass(frozen=True, slots=True)
class DesignBatch:
    """Decision variables of a batch, clipped to the model's valid ranges (one per design)."""

    wing_loading_N_m2: np.ndarray
    aspect_ratio: np.ndarray
    thrust_to_weight: np.ndarray | None  # turbofan studies, else None [-]
    power_to_weight_W_N: np.ndarray | None  # propeller studies, else None [W N^-1]
    high_lift_index: np.ndarray  # index into spec.high_lift, clipped to it
    overrides: dict  # checked per-design arrays, keys of OVERRIDE_KEYS


def design_batch(spec: AircraftSpec, wing_loading_N_m2, loading, aspect_ratio, high_lift_index,
                 overrides=None) -> DesignBatch:
    """The decision variables as float arrays inside the physics' valid ranges.

    Parameters
    ----------
    spec : AircraftSpec
        Resolved study (SI).
    wing_loading_N_m2 : array_like
        Takeoff wing loading W/S, kept within 50 to 2e4. [N m^-2]
    loading : array_like
        Power loading W/P (piston, turboprop), kept within 5 to 1e4 [N kW^-1], or
        thrust-to-weight T/W (turbofan), kept within 1e-3 to 3 [-].
    aspect_ratio : array_like
        Wing aspect ratio, kept within 1 to 30. [-]
    high_lift_index : array_like of int
        Index into ``spec.high_lift``. [-]
    overrides : dict of str -> array_like, optional
        Per-design spec values (keys of :data:`OVERRIDE_KEYS`). [units of each key]

    Returns
    -------
    DesignBatch
        Clipped inputs; NaN inputs become a valid number (no NaN can arise in the physics).
        Out-of-range inputs are flagged by the study layer, never changed in the outputs.

    References
    ----------
    Common practice (ranges chosen to keep every physics function inside its validity).
    """
    ws = np.asarray(wing_loading_N_m2, dtype=float).ravel()
    ld_in = np.asarray(loading, dtype=float).ravel()
    ar = np.asarray(aspect_ratio, dtype=float).ravel()
    idx = np.asarray(high_lift_index, dtype=int).ravel()
    ws_c = np.clip(np.nan_to_num(ws, nan=1.0), 50.0, 2e4)
    ar_c = np.clip(np.nan_to_num(ar, nan=1.0), 1.0, 30.0)
    if spec.propulsion.family == "turbofan":
        tw = np.clip(np.nan_to_num(ld_in, nan=1e-3), 1e-3, 3.0)
        pw = None
    else:
        pw = 1e3 / np.clip(np.nan_to_num(ld_in, nan=1e4), 5.0, 1e4)  # [W/N]
        tw = None
    return DesignBatch(ws_c, ar_c, tw, pw, np.clip(idx, 0, len(spec.high_lift) - 1),
                       check_overrides(spec, overrides, ws.size))


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
        if not (np.isfinite(a).all() and (a > 0.0).all()):
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
