"""The installed engines: rating, propeller size, efficiencies and thrust at an air state."""

from __future__ import annotations

import functools
from dataclasses import dataclass

import numpy as np

from ..physics import atmosphere as atm
from ..physics import propulsion
from ..spec import AircraftSpec
from .inputs import col


@functools.lru_cache(maxsize=64)
def _density_ratio(h_m: float) -> float:
    return float(atm.density_ratio(h_m))


@dataclass(frozen=True, slots=True)
class CruiseConsumption:
    """Propeller efficiency and fuel consumption in cruise (scalars or one per design)."""

    propeller_efficiency: np.ndarray | float  # [-], 1 for a turbofan
    sfc_kg_J: np.ndarray | float  # power-specific, propellers; 1 (unused) for a turbofan
    tsfc_kg_N_s: np.ndarray | float  # thrust-specific, turbofan; 1 (unused) for propellers


def cruise_consumption(spec: AircraftSpec, overrides) -> CruiseConsumption:
    """Cruise propeller efficiency and specific fuel consumption of the study's engines.

    Parameters
    ----------
    spec : AircraftSpec
        Resolved study: propeller efficiency [-], SFC [kg J^-1] or TSFC [kg N^-1 s^-1].
    overrides : dict
        Per-design values of those keys, when given.

    Returns
    -------
    CruiseConsumption
        Efficiency [-], SFC [kg J^-1], TSFC [kg N^-1 s^-1] (the unused ones are 1).

    References
    ----------
    Study inputs; defaults from the family tables of :mod:`optimiser.study` (each cited there).
    """
    pr = spec.propulsion
    is_jet = pr.family == "turbofan"
    eta_cr = overrides.get("propeller_efficiency_cruise", pr.propeller_efficiency_cruise) \
        if not is_jet else 1.0
    sfc_p = overrides.get("sfc_cruise", pr.sfc_cruise) if not is_jet else 1.0
    sfc_t = overrides.get("tsfc_cruise", pr.tsfc_cruise) if is_jet else 1.0
    return CruiseConsumption(eta_cr, sfc_p, sfc_t)


@dataclass(frozen=True, slots=True)
class InstalledPropulsion:
    """Sea-level rating of the installed engines and what follows from it."""

    rated: np.ndarray  # all engines: static thrust [N] (turbofan) or rated power [W]
    propeller_diameter_m: np.ndarray | None  # None for a turbofan
    propeller_efficiency_climb: np.ndarray | float  # takeoff and climb [-], 1 for a turbofan


def installed_propulsion(spec: AircraftSpec, rated, overrides) -> InstalledPropulsion:
    """Propeller diameter and climb efficiency of engines of the given rating.

    The diameter is the largest the tip limits allow at the study's propeller rpm: helical
    tip Mach in cruise (cruise speed and altitude of the mission) and static tip speed at
    takeoff (:func:`optimiser.physics.propulsion.propeller_diameter_tip_limits`), the same for
    every design of a study.

    Parameters
    ----------
    spec : AircraftSpec
        Resolved study: engine count, propeller rpm in cruise and at takeoff [min^-1], tip
        Mach [-] and tip speed [m s^-1] limits, cruise speed [m s^-1] and altitude [m], climb
        efficiency [-].
    rated : ndarray
        Sea-level static thrust [N] (turbofan) or rated power [W], all engines.
    overrides : dict
        Per-design ``propeller_efficiency_climb`` [-] and ``cruise_altitude_m`` [m], when
        given.

    Returns
    -------
    InstalledPropulsion
        The rating [N or W], propeller diameter [m] (None for a turbofan), climb
        efficiency [-].

    References
    ----------
    Helical tip speed sqrt((pi n D)^2 + V^2) set to each limit (kinematics, derived in
    :func:`optimiser.physics.propulsion.propeller_diameter_tip_limits`); the limits are common
    practice.
    """
    pr, ms = spec.propulsion, spec.mission
    if pr.family == "turbofan":
        return InstalledPropulsion(rated, None, 1.0)
    h_cr = overrides.get("cruise_altitude_m", ms.cruise_altitude_m)  # per design, if a variable
    t_cr = atm.isa_temperature(h_cr, ms.cruise_temperature_offset_K)
    d = propulsion.propeller_diameter_tip_limits(
        pr.propeller_rpm_cruise / 60.0, ms.cruise_speed_m_s, atm.speed_of_sound(t_cr),
        pr.propeller_rpm_takeoff / 60.0, 0.0, pr.propeller_tip_mach_max,
        pr.propeller_tip_speed_takeoff_max_m_s)
    diameter = np.full_like(np.asarray(rated, dtype=float), d)
    return InstalledPropulsion(rated, diameter, overrides.get("propeller_efficiency_climb",
                                                              pr.propeller_efficiency_climb))


class InstalledThrust:
    """Thrust of the installed engines at one air state, for a batch of designs.

    ``rated`` is the sea-level static thrust [N] or rated power [W] of all engines,
    ``diameter`` the propeller diameter [m] (None for a turbofan), ``density`` [kg m^-3],
    ``temperature`` [K] and ``pressure`` [Pa] the air state, ``setting`` the power or thrust
    setting [-] and ``engines_working`` the engines delivering thrust (default all).
    Lapse laws of :mod:`optimiser.physics.propulsion` (Mattingly for turbofans, each cited
    there); propeller static thrust by momentum theory (McCormick).
    """

    __slots__ = ("is_jet", "share", "thrust_sl", "temperature", "pressure", "sound", "tr",
                 "power_per_engine", "power", "static")

    def __init__(self, spec, rated, diameter, density, temperature, pressure, setting=1.0,
                 engines_working=None):
        p = spec.propulsion
        self.is_jet = p.family == "turbofan"
        share = 1.0 if engines_working is None else engines_working / p.engine_count
        self.share = share
        sigma = density / atm.RHO0
        if self.is_jet:
            self.thrust_sl = rated * setting * share
            self.temperature, self.pressure = temperature, pressure
            self.sound = atm.speed_of_sound(temperature)
            self.tr = p.turbofan_throttle_ratio
        else:
            if p.family == "piston":
                sig_crit = _density_ratio(p.turbocharged_critical_altitude_m)
                lapse = propulsion.piston_power_lapse(sigma, sig_crit)
            else:
                lapse = propulsion.turboprop_power_lapse(sigma, p.turboprop_lapse_exponent,
                                                         p.turboprop_flat_rating_margin)
            self.power_per_engine = rated / p.engine_count * setting * lapse
            self.power = self.power_per_engine * p.engine_count * share
            disc = 0.25 * np.pi * diameter**2
            self.static = propulsion.static_thrust_momentum(
                self.power_per_engine, density, disc, p.propeller_figure_of_merit) \
                * p.engine_count * share

    def thrust_at(self, efficiency):
        """Thrust of all working engines [N] as a function of speed alone (one per design,
        arrays shaped like the designs), each value bit for bit that of :meth:`thrust`: for
        propellers what does not depend on speed is computed once
        (:class:`~optimiser.physics.propulsion.PropellerThrustCurve`)."""
        if self.is_jet:
            return lambda speed: self.thrust(speed, efficiency)
        return propulsion.PropellerThrustCurve(np.asarray(self.power, dtype=float),
                                               np.asarray(efficiency, dtype=float),
                                               np.asarray(self.static, dtype=float))

    def thrust(self, speed, efficiency):
        """Thrust of all working engines [N] at ``speed`` [m s^-1] (propeller efficiency [-])."""
        if self.is_jet:
            mach = speed / col(self.sound, speed)
            return col(self.thrust_sl, speed) * propulsion.turbofan_thrust_lapse_mattingly(
                col(self.temperature, speed), col(self.pressure, speed), mach, self.tr)
        return propulsion.propeller_thrust(speed, col(self.power, speed),
                                           col(efficiency, speed), col(self.static, speed))


def engines_at(spec: AircraftSpec, engines: InstalledPropulsion, density, temperature, pressure,
               setting=1.0, engines_working=None, ix=slice(None)) -> InstalledThrust:
    """The installed engines of designs ``ix`` at one air state (see :class:`InstalledThrust`)."""
    d = engines.propeller_diameter_m
    return InstalledThrust(spec, engines.rated[ix], None if d is None else d[ix], density,
                           temperature, pressure, setting, engines_working)
