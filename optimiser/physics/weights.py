"""Empty-mass build-up: wing, engines, high-lift system and the rest.

All masses in kg; the wing equation is evaluated in its native units (lb, ft^2, knots) and
converted at its boundary only.
"""

from __future__ import annotations

import numpy as np

from . import G0

_LB = 0.45359237
_FT2 = 0.09290304
_KT = 1852.0 / 3600.0


def wing_mass_usaf(takeoff_mass, ultimate_load_factor, aspect_ratio, wing_area, taper_ratio,
                   thickness_ratio, sweep_quarter_chord, max_equivalent_airspeed):
    """Wing mass [kg] by the USAF light-aircraft equation.

    W_w = 96.948 [(W_TO n_ult / 1e5)^0.65 (A / cos^2 Lambda)^0.57 (S / 100)^0.61
    ((1 + lambda) / (2 t/c))^0.36 (1 + V_H / 500)^0.5]^0.993, in lb, ft^2 and KEAS.

    Parameters
    ----------
    takeoff_mass : array_like
        Takeoff mass [kg].
    ultimate_load_factor : array_like
        n_ult = 1.5 n_limit [-].
    aspect_ratio : array_like
        [-].
    wing_area : array_like
        Reference area [m^2].
    taper_ratio, thickness_ratio : array_like
        [-].
    sweep_quarter_chord : array_like
        [rad].
    max_equivalent_airspeed : array_like
        Maximum level equivalent airspeed V_H [m s^-1].

    Notes
    -----
    Valid to about 12 500 lb (5 700 kg) takeoff mass, unswept to moderately swept; used
    beyond that range with the study's ``wing_mass_factor`` as calibration.

    References
    ----------
    .. [1] L. M. Nicolai, G. E. Carichner, "Fundamentals of Aircraft and Airship Design",
       Vol. I, AIAA, 2010, ch. 20; J. Roskam, "Airplane Design" Part V, sec. 5.1, USAF
       method (constants from memory).
    """
    w_lb = np.asarray(takeoff_mass, float) / _LB
    s_ft2 = np.asarray(wing_area, float) / _FT2
    cos2 = np.cos(sweep_quarter_chord) ** 2
    v_kt = np.asarray(max_equivalent_airspeed, float) / _KT
    inner = ((w_lb * ultimate_load_factor / 1e5) ** 0.65 * (aspect_ratio / cos2) ** 0.57
             * (s_ft2 / 100.0) ** 0.61 * ((1.0 + taper_ratio) / (2.0 * thickness_ratio)) ** 0.36
             * (1.0 + v_kt / 500.0) ** 0.5)
    return 96.948 * inner**0.993 * _LB


WING_MASS_USAF_EXPONENT = (0.65 + 0.61) * 0.993
"""At a fixed wing loading S = m g / (W/S), so the USAF wing mass is K m^x with this x."""


def wing_mass_usaf_coefficient(wing_loading, ultimate_load_factor, aspect_ratio, taper_ratio,
                               thickness_ratio, sweep_quarter_chord, max_equivalent_airspeed):
    """K [kg^(1 - x)] with :func:`wing_mass_usaf` = K m^x at a fixed wing loading [N m^-2]
    (x = :data:`WING_MASS_USAF_EXPONENT`): the same equation with S = m g / (W/S), its
    mass-independent factors gathered once (a mass iteration then costs one power)."""
    cos2 = np.cos(sweep_quarter_chord) ** 2
    v_kt = np.asarray(max_equivalent_airspeed, float) / _KT
    per_mass = ((ultimate_load_factor / (_LB * 1e5)) ** 0.65
                * (G0 / (np.asarray(wing_loading, float) * _FT2 * 100.0)) ** 0.61
                * (np.asarray(aspect_ratio, float) / cos2) ** 0.57
                * ((1.0 + taper_ratio) / (2.0 * thickness_ratio)) ** 0.36
                * (1.0 + v_kt / 500.0) ** 0.5)
    return 96.948 * per_mass**0.993 * _LB


def propeller_engine_mass(rated_power, specific_mass):
    """Installed engine-and-propeller mass [kg] from total rated power [W] and kg/kW."""
    return np.asarray(rated_power, float) / 1e3 * specific_mass


def turbofan_engine_mass(static_thrust, engine_thrust_to_weight, installation_factor):
    """Installed turbofan mass [kg]: T_SL / (g (T/W)_engine) x installation factor (nacelle,
    pylon; common practice 1.2 to 1.4)."""
    return np.asarray(static_thrust, float) / (G0 * engine_thrust_to_weight) * installation_factor


def high_lift_mass(wing_area, flap_area_ratio, flap_mass_per_area, slat_area_ratio,
                   slat_mass_per_area, actuator_mass):
    """High-lift system mass [kg]: rho_A,flap S_flap + rho_A,slat S_slat + actuators.

    Areal masses by type are common practice (Torenbeek, "Synthesis", ch. 8 treats flap
    weight in detail; no compact per-type law was used).
    """
    s = np.asarray(wing_area, float)
    return s * (flap_area_ratio * flap_mass_per_area + slat_area_ratio * slat_mass_per_area) \
        + actuator_mass
