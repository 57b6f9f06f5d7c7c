"""Mission fuel: segment fractions, Breguet cruise at the actual lift coefficient, reserves."""

from __future__ import annotations

import numpy as np

from . import G0

SEGMENT_FRACTIONS = {
    # class: (start/warm-up, taxi, takeoff, climb, descent, landing/taxi)
    "single_engine_prop": (0.995, 0.997, 0.998, 0.992, 0.993, 0.993),
    "twin_engine_prop": (0.992, 0.996, 0.996, 0.990, 0.992, 0.992),
    "regional_turboprop": (0.990, 0.995, 0.995, 0.985, 0.985, 0.995),
    "business_jet": (0.990, 0.995, 0.995, 0.980, 0.990, 0.992),
}
"""W_end / W_start per segment: J. Roskam, "Airplane Design" Part I, Table 2.1 (1985)."""


def breguet_range_propeller(efficiency, sfc_power, lift_to_drag, weight_ratio):
    """Range [m] of a propeller aircraft: R = eta / (g c_P) (L/D) ln(W_i / W_f).

    Parameters
    ----------
    efficiency : array_like
        Propeller efficiency [-].
    sfc_power : array_like
        Power-specific fuel consumption c_P [kg J^-1].
    lift_to_drag : array_like
        L/D [-].
    weight_ratio : array_like
        W_i / W_f > 1 [-].

    References
    ----------
    .. [1] Breguet range equation, e.g. J. D. Anderson, "Aircraft Performance and Design",
       McGraw-Hill, 1999, sec. 5.13 (from memory).
    """
    return efficiency / (G0 * sfc_power) * lift_to_drag * np.log(weight_ratio)


def breguet_range_jet(speed, sfc_thrust, lift_to_drag, weight_ratio):
    """Range [m] of a jet: R = V / (g c_T) (L/D) ln(W_i / W_f), c_T in kg N^-1 s^-1."""
    return speed / (G0 * sfc_thrust) * lift_to_drag * np.log(weight_ratio)


def cruise_weight_ratio(distance, speed, lift_to_drag, efficiency, sfc_power, sfc_thrust,
                        is_jet):
    """W_i / W_f [-] that flies ``distance`` [m]: the Breguet equation solved for the ratio.

    For propellers ln(W_i/W_f) = R g c_P / (eta L/D); for jets R g c_T / (V L/D).
    ``is_jet`` selects per design (or for the batch).
    """
    if isinstance(is_jet, (bool, np.bool_)):  # one family for the whole batch
        if is_jet:
            return np.exp(distance * G0 * sfc_thrust / (speed * lift_to_drag))
        return np.exp(distance * G0 * sfc_power / (efficiency * lift_to_drag))
    prop = distance * G0 * sfc_power / (efficiency * lift_to_drag)
    jet = distance * G0 * sfc_thrust / (speed * lift_to_drag)
    return np.exp(np.where(is_jet, jet, prop))


def endurance_weight_ratio(duration, speed, lift_to_drag, efficiency, sfc_power, sfc_thrust,
                           is_jet):
    """W_i / W_f [-] for flying ``duration`` [s] at cruise speed: Breguet endurance.

    Propeller E = eta / (g c_P V) (L/D) ln(W_i/W_f); jet E = (L/D) / (g c_T) ln(W_i/W_f).
    Reserve time is flown at normal cruise speed (14 CFR 91.151 / 91.167 wording).
    """
    return cruise_weight_ratio(duration * speed, speed, lift_to_drag, efficiency, sfc_power,
                               sfc_thrust, is_jet)
