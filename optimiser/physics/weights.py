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


# --- Class II component masses ------------------------------------------------------------
#
# Each equation is evaluated in its native units (lb, ft, ft^2, knots, US gallons) and
# converted at its boundary only; inputs and outputs are SI (kg, m, m^2, m s^-1, m^3).
# Constants are from memory (recalled, not checked against the printed page), as written
# beside each one; METHODS.md sec. 5 and 10 name the sources.

_FT = 0.3048
_USGAL = 3.785411784e-3  # m^3, exact by definition


def _lb(mass):
    return np.asarray(mass, float) / _LB


def horizontal_tail_mass_usaf(takeoff_mass, ultimate_load_factor, area, tail_arm, span,
                              root_thickness):
    """Horizontal tail mass [kg] by the USAF light-airplane equation.

    W_h = 127 [(W_TO n_ult / 1e5)^0.87 (S_h / 100)^1.2 (l_h / 10)^0.483 (b_h / t_rh)^0.5]^0.458
    in lb, ft^2 and ft (constants from memory).

    Parameters
    ----------
    takeoff_mass : array_like
        Takeoff mass [kg].
    ultimate_load_factor : array_like
        n_ult [-].
    area : array_like
        Horizontal tail area S_h [m^2].
    tail_arm : array_like
        Wing to tail quarter-chord distance l_h [m].
    span : array_like
        Horizontal tail span b_h [m].
    root_thickness : array_like
        Maximum thickness of the tail root t_rh [m].

    Notes
    -----
    Light and utility airplanes to about 10 000 lb (4 500 kg), up to about 300 kt.

    References
    ----------
    .. [1] J. Roskam, "Airplane Design", Part V, ch. 5, USAF method for general aviation
       airplanes; L. M. Nicolai, G. E. Carichner, "Fundamentals of Aircraft and Airship
       Design", Vol. I, AIAA, 2010, ch. 20 (both from memory).
    """
    load = _lb(takeoff_mass) * ultimate_load_factor / 1e5
    inner = (load**0.87 * (np.asarray(area, float) / _FT2 / 100.0) ** 1.2
             * (np.asarray(tail_arm, float) / _FT / 10.0) ** 0.483
             * (np.asarray(span, float) / np.asarray(root_thickness, float)) ** 0.5)
    return 127.0 * inner**0.458 * _LB  # 127, 0.87, 1.2, 0.483, 0.5, 0.458: from memory


def vertical_tail_mass_usaf(takeoff_mass, ultimate_load_factor, area, span, root_thickness):
    """Vertical tail mass [kg] by the USAF light-airplane equation.

    W_v = 98.5 [(W_TO n_ult / 1e5)^0.87 (S_v / 100)^1.2 (b_v / t_rv)^0.5]^0.458 in lb, ft^2
    and ft (constants from memory).

    Parameters
    ----------
    takeoff_mass : array_like
        Takeoff mass [kg].
    ultimate_load_factor : array_like
        n_ult [-].
    area : array_like
        Vertical tail area S_v [m^2].
    span : array_like
        Vertical tail height b_v [m].
    root_thickness : array_like
        Maximum thickness of the fin root t_rv [m].

    Notes
    -----
    Range as :func:`horizontal_tail_mass_usaf`.

    References
    ----------
    .. [1] J. Roskam, "Airplane Design", Part V, ch. 5, USAF method; Nicolai & Carichner
       2010, ch. 20 (both from memory).
    """
    load = _lb(takeoff_mass) * ultimate_load_factor / 1e5
    inner = (load**0.87 * (np.asarray(area, float) / _FT2 / 100.0) ** 1.2
             * (np.asarray(span, float) / np.asarray(root_thickness, float)) ** 0.5)
    return 98.5 * inner**0.458 * _LB  # 98.5, 0.87, 1.2, 0.5, 0.458: from memory


def fuselage_mass_usaf(takeoff_mass, ultimate_load_factor, length, width, height,
                       cruise_equivalent_airspeed):
    """Fuselage mass [kg] by the USAF light-airplane equation.

    W_f = 200 [(W_TO n_ult / 1e5)^0.286 (l_f / 10)^0.857 ((w_f + h_f) / 10)
    (V_C / 100)^0.338]^1.1 in lb, ft and KEAS (constants from memory).

    Parameters
    ----------
    takeoff_mass : array_like
        Takeoff mass [kg].
    ultimate_load_factor : array_like
        n_ult [-].
    length, width, height : array_like
        Fuselage length l_f, maximum width w_f and maximum height h_f [m].
    cruise_equivalent_airspeed : array_like
        Design cruise speed V_C, equivalent airspeed [m s^-1].

    Notes
    -----
    Light and utility airplanes to about 10 000 lb (4 500 kg).

    References
    ----------
    .. [1] J. Roskam, "Airplane Design", Part V, ch. 5, USAF method; Nicolai & Carichner
       2010, ch. 20 (both from memory).
    """
    load = _lb(takeoff_mass) * ultimate_load_factor / 1e5
    inner = (load**0.286 * (np.asarray(length, float) / _FT / 10.0) ** 0.857
             * ((np.asarray(width, float) + height) / _FT / 10.0)
             * (np.asarray(cruise_equivalent_airspeed, float) / _KT / 100.0) ** 0.338)
    return 200.0 * inner**1.1 * _LB  # 200, 0.286, 0.857, 0.338, 1.1: from memory


def fuel_system_mass_usaf(fuel_volume, integral_tank_fraction, tank_count, engine_count):
    """Fuel system mass [kg] by the USAF light-airplane equation.

    W_fs = 2.49 [V_f^0.6 (1 / (1 + f_int))^0.3 N_t^0.2 N_e^0.13]^1.21 in lb and US gallons
    (constants from memory; METHODS.md sec. 5).

    Parameters
    ----------
    fuel_volume : array_like
        Total fuel volume V_f [m^3].
    integral_tank_fraction : array_like
        Share of the fuel in integral (wet) tanks f_int, 0 to 1 [-].
    tank_count : array_like
        Number of separate tanks N_t [-].
    engine_count : array_like
        Number of engines N_e [-].

    References
    ----------
    .. [1] J. Roskam, "Airplane Design", Part V, ch. 6, USAF method for general aviation
       airplanes (from memory).
    """
    gal = np.asarray(fuel_volume, float) / _USGAL
    inner = (gal**0.6 * (1.0 / (1.0 + np.asarray(integral_tank_fraction, float))) ** 0.3
             * np.asarray(tank_count, float) ** 0.2 * np.asarray(engine_count, float) ** 0.13)
    return 2.49 * inner**1.21 * _LB  # 2.49, 0.6, 0.3, 0.2, 0.13, 1.21: from memory


def propulsion_installation_mass_usaf(dry_engine_mass, engine_count):
    """Installed propulsion mass [kg] of propeller airplanes by the USAF equation.

    W_pwr = 2.575 W_e^0.922 N_e in lb (constants from memory): each dry engine with its
    propeller, mount, cowling, exhaust, cooling and engine controls.

    Parameters
    ----------
    dry_engine_mass : array_like
        Dry mass of one engine W_e [kg].
    engine_count : array_like
        Number of engines N_e [-].

    Notes
    -----
    Piston and small turboprop engines of light airplanes.

    References
    ----------
    .. [1] L. M. Nicolai, G. E. Carichner, "Fundamentals of Aircraft and Airship Design",
       Vol. I, AIAA, 2010, ch. 20 (from memory).
    """
    return 2.575 * _lb(dry_engine_mass) ** 0.922 * engine_count * _LB  # from memory


GEAR_COEFFICIENTS_TORENBEEK = {
    # gear kind: (A [lb], B [lb^0.25], C [-], D [lb^-0.5]) of W = A + B W^0.75 + C W + D W^1.5;
    # Torenbeek, "Synthesis of Subsonic Airplane Design", 1982, sec. 8.4.1 (e) (from memory)
    "fixed_main": (20.0, 0.10, 0.019, 0.0),
    "fixed_nose": (25.0, 0.0, 0.0024, 0.0),
    "retractable_main": (40.0, 0.16, 0.019, 1.5e-5),
    "retractable_nose": (20.0, 0.10, 0.0, 2.0e-6),
    "business_jet_main": (33.0, 0.04, 0.021, 0.0),
    "business_jet_nose": (12.0, 0.06, 0.0, 0.0),
}
"""Torenbeek's landing-gear coefficients by kind: fixed or retractable gear of civil
airplanes, and the retractable gear of jet trainers and business jets."""


def landing_gear_mass_torenbeek(takeoff_mass, kind, wing_position_factor=1.0):
    """Mass of one landing-gear unit group [kg] (all main or all nose legs) by Torenbeek.

    W_g = K_g (A + B W_TO^0.75 + C W_TO + D W_TO^1.5) in lb, with A to D from
    :data:`GEAR_COEFFICIENTS_TORENBEEK` (from memory).

    Parameters
    ----------
    takeoff_mass : array_like
        Takeoff mass [kg].
    kind : str
        A key of :data:`GEAR_COEFFICIENTS_TORENBEEK`.
    wing_position_factor : array_like, default 1.0
        K_g: 1.0 low wing, 1.08 high wing (from memory) [-].

    Raises
    ------
    ValueError
        For an unknown ``kind`` (listing the valid ones).

    References
    ----------
    .. [1] E. Torenbeek, "Synthesis of Subsonic Airplane Design", Delft University Press,
       1982, sec. 8.4.1 (e); reproduced in J. Roskam, "Airplane Design", Part V, ch. 5
       (both from memory).
    """
    if kind not in GEAR_COEFFICIENTS_TORENBEEK:
        raise ValueError(f"unknown landing-gear kind {kind!r}; choose one of: "
                         + ", ".join(repr(k) for k in GEAR_COEFFICIENTS_TORENBEEK))
    a, b, c, d = GEAR_COEFFICIENTS_TORENBEEK[kind]
    w = _lb(takeoff_mass)
    root = np.sqrt(w)  # W^0.75 = sqrt(W sqrt(W)), W^1.5 = W sqrt(W): square roots are cheap
    return wing_position_factor * (a + b * np.sqrt(w * root) + c * w + d * w * root) * _LB


def flight_controls_mass_torenbeek(takeoff_mass, control_coefficient):
    """Flight-control system mass [kg] by Torenbeek: W_fc = k_sc W_TO^(2/3) in lb.

    Parameters
    ----------
    takeoff_mass : array_like
        Takeoff mass [kg].
    control_coefficient : array_like
        k_sc [lb^(1/3)]: 0.23 light airplanes without duplicated controls, 0.44 transports
        and trainers with manual controls, 0.64 transports with powered controls and
        trailing-edge high lift; 20 % more with leading-edge slats (from memory).

    References
    ----------
    .. [1] E. Torenbeek, "Synthesis of Subsonic Airplane Design", 1982, sec. 8.4.4;
       reproduced in J. Roskam, "Airplane Design", Part V, ch. 7 (both from memory).
    """
    return np.asarray(control_coefficient, float) * _lb(takeoff_mass) ** (2.0 / 3.0) * _LB


def tail_mass_torenbeek(area, dive_equivalent_airspeed, sweep_quarter_chord,
                        construction_factor=1.0):
    """Horizontal or vertical tail mass [kg] of transport airplanes by Torenbeek.

    W = K S [3.81 S^0.2 V_D / (1000 cos^0.5 Lambda) - 0.287] in lb, ft^2 and KEAS
    (constants from memory).

    Parameters
    ----------
    area : array_like
        Tail area S_h or S_v [m^2].
    dive_equivalent_airspeed : array_like
        Design diving speed V_D, equivalent airspeed [m s^-1].
    sweep_quarter_chord : array_like
        Tail sweep [rad].
    construction_factor : array_like, default 1.0
        K_h: 1.0 fixed-incidence stabiliser, 1.1 variable incidence; K_v: 1.0 with the
        horizontal tail on the fuselage (from memory) [-].

    Notes
    -----
    Transport airplanes and business jets with V_D up to about 500 KEAS.

    References
    ----------
    .. [1] E. Torenbeek, "Synthesis of Subsonic Airplane Design", 1982, sec. 8.4.1 (c);
       reproduced in J. Roskam, "Airplane Design", Part V, ch. 5 (both from memory).
    """
    s_ft2 = np.asarray(area, float) / _FT2
    v_kt = np.asarray(dive_equivalent_airspeed, float) / _KT
    per_area = 3.81 * s_ft2**0.2 * v_kt / (1000.0 * np.sqrt(np.cos(sweep_quarter_chord))) \
        - 0.287
    return construction_factor * s_ft2 * np.maximum(per_area, 0.0) * _LB


def fuselage_mass_torenbeek(dive_equivalent_airspeed, tail_arm, width, height, shell_area,
                            construction_factor=1.08):
    """Fuselage mass [kg] of transport airplanes by Torenbeek.

    W_f = 0.021 K_f sqrt(V_D l_h / (w_f + h_f)) S_G^1.2 in lb, KEAS, ft and ft^2 (constants
    from memory).

    Parameters
    ----------
    dive_equivalent_airspeed : array_like
        Design diving speed V_D, equivalent airspeed [m s^-1].
    tail_arm : array_like
        Wing root quarter chord to horizontal tail quarter chord l_h [m].
    width, height : array_like
        Maximum fuselage width and height [m].
    shell_area : array_like
        Gross shell (wetted) area of the fuselage S_G [m^2].
    construction_factor : array_like, default 1.08
        K_f: 1.08 pressurised, times 1.07 with the main gear on the fuselage, times 1.10
        for a freighter floor (from memory) [-].

    References
    ----------
    .. [1] E. Torenbeek, "Synthesis of Subsonic Airplane Design", 1982, sec. 8.4.1 (d);
       reproduced in J. Roskam, "Airplane Design", Part V, ch. 5 (both from memory).
    """
    v_kt = np.asarray(dive_equivalent_airspeed, float) / _KT
    ratio = v_kt * (np.asarray(tail_arm, float) / _FT) / ((np.asarray(width, float) + height)
                                                         / _FT)
    s_ft2 = np.asarray(shell_area, float) / _FT2
    return 0.021 * construction_factor * np.sqrt(ratio) * s_ft2**1.2 * _LB


def fuel_system_mass_torenbeek(fuel_volume, tank_count, engine_count):
    """Fuel system mass [kg] of transport airplanes with integral tanks by Torenbeek.

    W_fs = 80 (N_e + N_t - 1) + 15 N_t^0.5 V_f^0.333 in lb and US gallons (constants from
    memory).

    Parameters
    ----------
    fuel_volume : array_like
        Total fuel volume V_f [m^3].
    tank_count : array_like
        Number of separate tanks N_t [-].
    engine_count : array_like
        Number of engines N_e [-].

    References
    ----------
    .. [1] E. Torenbeek, "Synthesis of Subsonic Airplane Design", 1982, sec. 8.4.3;
       reproduced in J. Roskam, "Airplane Design", Part V, ch. 6 (both from memory).
    """
    gal = np.asarray(fuel_volume, float) / _USGAL
    n_t = np.asarray(tank_count, float)
    return (80.0 * (engine_count + n_t - 1.0) + 15.0 * np.sqrt(n_t) * gal**0.333) * _LB

