"""Engine lapse, propeller thrust (static to cruise) and fuel consumption.

Power-loading families (piston, turboprop) deliver shaft power P(h) to a propeller; the
turbofan family delivers thrust T(h, M). SI units throughout.
"""

from __future__ import annotations

import numpy as np

from .atmosphere import P0, T0


def piston_power_lapse_gagg_ferrar(density_ratio):
    """P / P_SL [-] of a normally aspirated piston engine: sigma - (1 - sigma) / 7.55.

    Parameters
    ----------
    density_ratio : array_like
        rho / rho0 of the actual air, so a temperature offset is included [-].

    References
    ----------
    .. [1] E. Gagg, E. V. Ferrar, "Performance of the aircraft engine at altitude", 1934;
       as presented in S. Gudmundsson, "General Aviation Aircraft Design", 2014, ch. 7
       (from memory).
    """
    s = np.asarray(density_ratio, dtype=float)
    return s - (1.0 - s) / 7.55


def piston_power_lapse(density_ratio, critical_density_ratio=1.0):
    """P / P_SL [-]; a turbocharged engine holds full power down to ``critical_density_ratio``.

    Above its critical altitude Gagg-Ferrar is applied to sigma / sigma_crit (common practice).
    """
    s = np.asarray(density_ratio, dtype=float) / critical_density_ratio
    return np.minimum(piston_power_lapse_gagg_ferrar(s), 1.0)


def turboprop_power_lapse(density_ratio, exponent=0.75, flat_rating_margin=1.15):
    """Shaft power over rated sea-level power [-]: min(1, margin * sigma^n).

    The engine is flat rated: its thermodynamic power at sea-level ISA is ``margin`` times the
    rating, so the rating holds up to the altitude or temperature where margin sigma^n = 1
    (common practice; n 0.7 to 0.8).
    """
    s = np.asarray(density_ratio, dtype=float)
    return np.minimum(1.0, flat_rating_margin * s**exponent)


def turbofan_thrust_lapse_mattingly(temperature, pressure, mach, throttle_ratio=1.05):
    """T / T_SL,static [-] of a high-bypass turbofan at full throttle.

    theta0 = (T/T0)(1 + 0.2 M^2), delta0 = (p/p0)(1 + 0.2 M^2)^3.5;
    theta0 <= TR: alpha = delta0 (1 - 0.49 sqrt(M));
    theta0 > TR: alpha = delta0 [1 - 0.49 sqrt(M) - 3 (theta0 - TR) / (1.5 + M)].

    References
    ----------
    .. [1] J. D. Mattingly, W. H. Heiser, D. T. Pratt, "Aircraft Engine Design", 2nd ed.,
       AIAA, 2002, sec. 2.3.2, eq. (2.45a) (from memory).
    """
    # written with augmented operations (the same operations in the same order as the
    # formulas above), in place for arrays: these are large in the ground-roll quadrature
    m = np.maximum(np.asarray(mach, dtype=float), 0.0)
    ram = 0.2 * m
    ram *= m
    ram += 1.0                                                    # 1 + 0.2 M^2
    theta0 = np.asarray(temperature, dtype=float) / T0 * ram
    ram35 = ram * ram
    ram35 *= ram
    ram35 *= np.sqrt(ram)                                         # (1 + 0.2 M^2)^3.5
    delta0 = np.asarray(pressure, dtype=float) / P0 * ram35
    base = np.sqrt(m)
    base *= -0.49
    base += 1.0                                                   # 1 - 0.49 sqrt(M)
    theta0 -= throttle_ratio
    theta0 = np.maximum(theta0, 0.0)
    theta0 *= 3.0
    theta0 /= 1.5 + m                                             # the hot-day term
    base -= theta0
    base *= delta0
    return np.maximum(base, 0.0)


def propeller_diameter(power_per_engine, coefficient=0.56):
    """Propeller diameter [m] from shaft power per engine [W]: D = k (P [kW])^0.25.

    k = 0.56 two-blade, 0.52 three-blade, 0.49 four-blade (metric form of D = K_p HP^0.25 in
    D. P. Raymer, "Aircraft Design: A Conceptual Approach", AIAA, ch. 10; from memory).
    """
    return coefficient * (np.maximum(np.asarray(power_per_engine, dtype=float), 0.0) / 1e3) ** 0.25


def static_thrust_momentum(power, density, disc_area, figure_of_merit=0.70):
    """Static thrust [N] of a propeller: T0 = (FM P)^(2/3) (2 rho A_d)^(1/3).

    References
    ----------
    .. [1] B. W. McCormick, "Aerodynamics, Aeronautics and Flight Mechanics", 2nd ed., 1995,
       ch. 6, momentum theory with a figure of merit (from memory).
    """
    p = np.maximum(np.asarray(power, dtype=float), 0.0)
    return (figure_of_merit * p) ** (2.0 / 3.0) * (2.0 * density * disc_area) ** (1.0 / 3.0)


def propeller_thrust(speed, power, efficiency, static_thrust):
    """Propeller thrust [N] from standstill to cruise, never infinite as V -> 0.

    Above the blend speed V1 = 1.5 eta P / T0 the thrust is eta P / V; below it,
    T = T0 (1 - V^2 / (3 V1^2)), which starts at the static thrust with zero slope and meets
    eta P / V at V1 with equal value (2/3 T0) and slope. This is the quadratic blend
    T = T0 + a V + b V^2 of Gudmundsson ("General Aviation Aircraft Design", ch. 14, from
    memory) with V1 chosen so that a = 0 (common practice).

    Parameters
    ----------
    speed : array_like
        True airspeed, >= 0 [m s^-1].
    power : array_like
        Shaft power delivered [W].
    efficiency : array_like
        Propeller efficiency at speed [-].
    static_thrust : array_like
        T0 from :func:`static_thrust_momentum` [N].
    """
    v = np.maximum(np.asarray(speed, dtype=float), 0.0)
    ep = np.asarray(efficiency, dtype=float) * np.asarray(power, dtype=float)
    t0 = np.maximum(np.asarray(static_thrust, dtype=float), 1e-9)
    v1 = 1.5 * ep / t0
    low = t0 * (1.0 - v * v / (3.0 * v1 * v1 + 1e-300))
    high = ep / np.maximum(v, 1e-9)
    return np.where(v < v1, low, high)


LB_PER_HP_H = 0.45359237 / (745.69987 * 3600.0)
"""1 lb/(hp h) in kg/J (= 1.68966e-7)."""
LB_PER_LBF_H = 0.45359237 / (4.4482216 * 3600.0)
"""1 lb/(lbf h) in kg/(N s) (= 2.83255e-5)."""
