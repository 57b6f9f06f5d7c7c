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


PROPELLER_TIP_MACH_MAX = 0.85
"""Helical tip Mach number limit in cruise [-]: 0.85 for metal blades of conventional
sections, to keep the tip below its drag rise and noise in bounds (common practice; 0.8 to 0.9
is used)."""
PROPELLER_TIP_SPEED_MAX_TAKEOFF = 260.0
"""Static tip speed limit at takeoff [m s^-1]: 260 m/s (M 0.76 at sea level), for the
takeoff noise of a propeller of a light airplane (common practice; 240 to 290 m/s is used)."""


def helical_tip_speed(diameter, rotational_speed, true_airspeed):
    """Helical tip speed [m s^-1]: V_tip = sqrt((pi n D)^2 + V^2), the vector sum of the
    rotational tip speed and the flight speed.

    Parameters
    ----------
    diameter : array_like
        Propeller diameter [m].
    rotational_speed : array_like
        n, propeller revolutions per second [s^-1] (rpm / 60).
    true_airspeed : array_like
        Flight speed [m s^-1].
    """
    tip = np.pi * np.asarray(rotational_speed, dtype=float) * np.asarray(diameter, dtype=float)
    return np.sqrt(tip * tip + np.asarray(true_airspeed, dtype=float) ** 2)


def propeller_diameter_tip_limits(rotational_speed_cruise, cruise_speed, cruise_sound_speed,
                                  rotational_speed_takeoff=None, takeoff_speed=0.0,
                                  tip_mach_max=PROPELLER_TIP_MACH_MAX,
                                  tip_speed_max_takeoff=PROPELLER_TIP_SPEED_MAX_TAKEOFF):
    """Largest propeller diameter [m] within the cruise tip Mach and takeoff tip-speed limits.

    From the helical tip speed (:func:`helical_tip_speed`) set equal to each limit:
    cruise, D_cr = sqrt((M_tip a)^2 - V_cr^2) / (pi n_cr); takeoff,
    D_TO = sqrt(V_tip,TO^2 - V_TO^2) / (pi n_TO); D = min(D_cr, D_TO).

    Parameters
    ----------
    rotational_speed_cruise : array_like
        Propeller revolutions per second in cruise [s^-1] (rpm / 60, after any gearbox).
    cruise_speed : array_like
        Cruise true airspeed [m s^-1].
    cruise_sound_speed : array_like
        Speed of sound at cruise altitude [m s^-1].
    rotational_speed_takeoff : array_like, optional
        Revolutions per second at takeoff [s^-1]; default: the cruise value.
    takeoff_speed : array_like, default 0.0
        Speed at which the takeoff limit applies, 0 for the static case [m s^-1].
    tip_mach_max : array_like
        Helical tip Mach limit in cruise [-] (:data:`PROPELLER_TIP_MACH_MAX`).
    tip_speed_max_takeoff : array_like
        Helical tip speed limit at takeoff [m s^-1] (:data:`PROPELLER_TIP_SPEED_MAX_TAKEOFF`).

    Returns
    -------
    ndarray
        Diameter [m]; 0 where the flight speed alone exceeds a limit.

    Notes
    -----
    Kinematics only (derived here): the diameter a given rpm allows. A propeller also needs
    the disc area to absorb its power at a sensible loading and ground clearance; the caller
    checks those.
    """
    n_cr = np.asarray(rotational_speed_cruise, dtype=float)
    n_to = n_cr if rotational_speed_takeoff is None else np.asarray(rotational_speed_takeoff,
                                                                    dtype=float)
    tip_cr = np.asarray(tip_mach_max, dtype=float) * np.asarray(cruise_sound_speed, dtype=float)
    d_cr = np.sqrt(np.maximum(tip_cr**2 - np.asarray(cruise_speed, dtype=float) ** 2, 0.0)) \
        / (np.pi * n_cr)
    d_to = np.sqrt(np.maximum(np.asarray(tip_speed_max_takeoff, dtype=float) ** 2
                              - np.asarray(takeoff_speed, dtype=float) ** 2, 0.0)) / (np.pi * n_to)
    return np.minimum(d_cr, d_to)


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
    return PropellerThrustCurve(power, efficiency, static_thrust)(speed)


class PropellerThrustCurve:
    """The thrust of :func:`propeller_thrust` as a function of speed alone, for searches that
    evaluate it at many speeds: what does not depend on speed (eta P, T0, the blend speed V1)
    is computed once, by the same operations, so that every value is bit for bit that of
    :func:`propeller_thrust`. Arguments as there (power [W], efficiency [-], T0 [N])."""

    __slots__ = ("ep", "t0", "v1", "blend_scale", "shape")

    def __init__(self, power, efficiency, static_thrust):
        self.ep = np.asarray(efficiency, dtype=float) * np.asarray(power, dtype=float)
        self.t0 = np.maximum(np.asarray(static_thrust, dtype=float), 1e-9)
        self.v1 = 1.5 * self.ep / self.t0
        self.blend_scale = 3.0 * self.v1 * self.v1 + 1e-300
        self.shape = np.broadcast_shapes(self.ep.shape, self.t0.shape)

    def take(self, index):
        """The curve of the elements ``index`` (an index array) alone, values unchanged."""
        part = object.__new__(PropellerThrustCurve)
        for name in ("ep", "t0", "v1", "blend_scale"):
            setattr(part, name, np.broadcast_to(getattr(self, name), self.shape)[index])
        part.shape = part.ep.shape
        return part

    def __call__(self, speed):
        """Thrust [N] at true airspeed ``speed`` [m s^-1] (>= 0)."""
        v = np.maximum(np.asarray(speed, dtype=float), 0.0)
        if v.ndim == 0 or np.broadcast_shapes(v.shape, self.shape) != v.shape:
            # one speed, or speeds fewer than designs: no array of the result's shape to reuse
            low = self.t0 * (1.0 - v * v / self.blend_scale)
            high = self.ep / np.maximum(v, 1e-9)
            return np.where(v < self.v1, low, high)
        # the same operations in place (multiplication commutes exactly): fewer temporaries
        low = v * v
        low /= self.blend_scale
        np.subtract(1.0, low, out=low)
        low *= self.t0                                    # T0 (1 - V^2 / (3 V1^2))
        high = np.maximum(v, 1e-9)
        np.divide(self.ep, high, out=high)                # eta P / V
        np.copyto(high, low, where=v < self.v1)
        return high


LB_PER_HP_H = 0.45359237 / (745.69987 * 3600.0)
"""1 lb/(hp h) in kg/J (= 1.68966e-7)."""
LB_PER_LBF_H = 0.45359237 / (4.4482216 * 3600.0)
"""1 lb/(lbf h) in kg/(N s) (= 2.83255e-5)."""
