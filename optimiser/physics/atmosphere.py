"""International Standard Atmosphere to 20 km, with a constant temperature offset.

References
----------
.. [1] NOAA, NASA and USAF, "U.S. Standard Atmosphere, 1976", NOAA-S/T 76-1562, 1976,
   Table I; identical to ICAO Doc 7488/3 (1993) below 32 km.
"""

from __future__ import annotations

import numpy as np

from . import G0

R_AIR = 287.05287
"""Specific gas constant of dry air [J kg^-1 K^-1] (USSA 1976)."""
GAMMA = 1.4
"""Ratio of specific heats of air [-]."""
T0 = 288.15
"""Sea-level standard temperature [K]."""
P0 = 101325.0
"""Sea-level standard pressure [Pa]."""
RHO0 = P0 / (R_AIR * T0)
"""Sea-level standard density, 1.225 [kg m^-3]."""
EARTH_RADIUS = 6356766.0
"""Effective earth radius for geopotential altitude [m] (USSA 1976)."""

_LAPSE = -0.0065
_H_TROPOPAUSE = 11000.0
_T_TROPOPAUSE = 216.65
_P_TROPOPAUSE = P0 * (_T_TROPOPAUSE / T0) ** (-G0 / (_LAPSE * R_AIR))
H_MIN = -5000.0
H_MAX = 20000.0


def _geopotential(h):
    h = np.asarray(h, dtype=float)
    if not np.all(np.isfinite(h)):
        raise ValueError(f"altitude outside the model: expected finite values from {H_MIN:g} "
                         f"to {H_MAX:g} m, got NaN or inf")
    if np.any(h < H_MIN - 1e-9) or np.any(h > H_MAX + 1e-9):
        raise ValueError(f"altitude outside the model: expected {H_MIN:g} to {H_MAX:g} m, "
                         f"got {np.min(h):g} to {np.max(h):g} m")
    return h


def geometric_to_geopotential(geometric_altitude):
    """Geopotential altitude [m] from geometric altitude [m]: H = r0 z / (r0 + z) [1]."""
    z = np.asarray(geometric_altitude, dtype=float)
    return EARTH_RADIUS * z / (EARTH_RADIUS + z)


def isa_temperature(geopotential_altitude, delta_isa=0.0):
    """Static temperature [K] at geopotential altitude [m] (-5 to 20 km) plus offset [K] [1]."""
    h = _geopotential(geopotential_altitude)
    t_std = np.where(h <= _H_TROPOPAUSE, T0 + _LAPSE * h, _T_TROPOPAUSE)
    return t_std + np.asarray(delta_isa, dtype=float)


def isa_pressure(geopotential_altitude):
    """Static pressure [Pa] at geopotential (= pressure) altitude [m], -5 to 20 km [1].

    The temperature offset does not change pressure: the altitude is a pressure altitude.
    """
    h = _geopotential(geopotential_altitude)
    t_std = np.where(h <= _H_TROPOPAUSE, T0 + _LAPSE * h, _T_TROPOPAUSE)
    p_trop = P0 * (t_std / T0) ** (-G0 / (_LAPSE * R_AIR))
    p_strat = _P_TROPOPAUSE * np.exp(-G0 * (h - _H_TROPOPAUSE) / (R_AIR * _T_TROPOPAUSE))
    return np.where(h <= _H_TROPOPAUSE, p_trop, p_strat)


def isa_density(geopotential_altitude, delta_isa=0.0):
    """Density [kg m^-3] from the ISA pressure and offset temperature, rho = p / (R T) [1]."""
    return isa_pressure(geopotential_altitude) / (R_AIR * isa_temperature(geopotential_altitude,
                                                                          delta_isa))


def speed_of_sound(temperature):
    """Speed of sound [m s^-1] of dry air at static temperature [K]: a = sqrt(gamma R T)."""
    return np.sqrt(GAMMA * R_AIR * np.asarray(temperature, dtype=float))


def dynamic_viscosity(temperature):
    """Dynamic viscosity of air [kg m^-1 s^-1] by Sutherland's law,
    mu = beta T^1.5 / (T + S), beta = 1.458e-6 kg m^-1 s^-1 K^-1/2, S = 110.4 K, at static
    temperature [K] (USSA 1976, eq. 51; 1.7894e-5 at 288.15 K, its Table I)."""
    t = np.asarray(temperature, dtype=float)
    return 1.458e-6 * t**1.5 / (t + 110.4)


def density_ratio(geopotential_altitude, delta_isa=0.0):
    """sigma = rho / rho0 [-]."""
    return isa_density(geopotential_altitude, delta_isa) / RHO0


def _density_unchecked(h, delta_isa):
    """Density [kg m^-3] without the range check, for solvers that stay inside the range."""
    t_std = np.where(h <= _H_TROPOPAUSE, T0 + _LAPSE * h, _T_TROPOPAUSE)
    p = np.where(h <= _H_TROPOPAUSE,
                 P0 * (t_std / T0) ** (-G0 / (_LAPSE * R_AIR)),
                 _P_TROPOPAUSE * np.exp(-G0 * (h - _H_TROPOPAUSE) / (R_AIR * _T_TROPOPAUSE)))
    return p / (R_AIR * (t_std + delta_isa)), p, t_std + delta_isa


A0 = float(np.sqrt(GAMMA * R_AIR * T0))
"""Sea-level standard speed of sound, 340.294 [m s^-1]."""


def calibrated_to_true_airspeed(calibrated_airspeed, pressure, density):
    """True airspeed [m s^-1] from calibrated airspeed, compressible and subsonic.

    Impact pressure from the calibrated airspeed at sea-level standard conditions,
    q_c = p0 [(1 + 0.2 (V_c / a0)^2)^3.5 - 1]; Mach number from q_c and the static pressure,
    M = sqrt(5 [(q_c / p + 1)^(2/7) - 1]); V = M sqrt(gamma p / rho) (isentropic
    St Venant-Wantzel relation for a subsonic pitot-static system).

    Parameters
    ----------
    calibrated_airspeed : array_like
        Calibrated airspeed, below the speed of sound [m s^-1]. An indicated-airspeed limit is
        taken as calibrated: instrument and position errors are ignored.
    pressure : array_like
        Static pressure [Pa].
    density : array_like
        Air density [kg m^-3] (with the temperature offset).

    Returns
    -------
    ndarray
        True airspeed [m s^-1].

    Notes
    -----
    The equivalent-airspeed approximation V = V_c / sqrt(sigma) (:func:`equivalent_to_true_airspeed`
    with V_e = V_c) drops the compressibility correction V_c - V_e: it overstates the true
    airspeed by 0.8 % at 250 kn and 10 000 ft ISA (290.9 kn for 288.7 kn, see the tests).

    References
    ----------
    .. [1] J. D. Anderson, "Introduction to Flight", McGraw-Hill, ch. 3 (measurement of
       airspeed, subsonic compressible flow; from memory).
    """
    vc = np.asarray(calibrated_airspeed, dtype=float)
    p = np.asarray(pressure, dtype=float)
    qc = P0 * ((1.0 + 0.2 * (vc / A0) ** 2) ** 3.5 - 1.0)
    mach = np.sqrt(5.0 * ((qc / p + 1.0) ** (2.0 / 7.0) - 1.0))
    return mach * np.sqrt(GAMMA * p / np.asarray(density, dtype=float))


def equivalent_to_true_airspeed(equivalent_airspeed, density):
    """True airspeed [m s^-1] from equivalent airspeed [m s^-1]: V = V_e / sqrt(rho / rho0)
    (definition of equivalent airspeed, same dynamic pressure)."""
    return np.asarray(equivalent_airspeed, dtype=float) / np.sqrt(
        np.asarray(density, dtype=float) / RHO0)
