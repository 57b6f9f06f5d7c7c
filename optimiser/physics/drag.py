"""Zero-lift drag by component build-up: skin friction, form and interference factors.

C_D0 = sum_i C_f,i FF_i Q_i S_wet,i / S_ref + Delta C_D,misc. Every function broadcasts over
designs (numpy arrays, SI); a component's drag area is f_i = C_f,i FF_i Q_i S_wet,i [m^2].
"""

from __future__ import annotations

import numpy as np


def reynolds_number(density_kg_m3, speed_m_s, length_m, viscosity_kg_m_s):
    """Re = rho V l / mu [-] of a component of length ``length_m`` [m] (density [kg m^-3],
    speed [m s^-1], dynamic viscosity [kg m^-1 s^-1]; definition)."""
    return (np.asarray(density_kg_m3, dtype=float) * np.asarray(speed_m_s, dtype=float)
            * np.asarray(length_m, dtype=float) / np.asarray(viscosity_kg_m_s, dtype=float))


RE_MIN = 1e3
"""Lowest Reynolds number the friction laws are evaluated at (a floor that keeps a vanishing
component finite) [-]."""


def skin_friction_turbulent_prandtl_schlichting(reynolds):
    """Mean skin-friction coefficient of a turbulent flat plate, 0.455 / (log10 Re)^2.58 [-].

    Parameters
    ----------
    reynolds : array_like
        Reynolds number on the plate length, valid about 1e5 to 1e9 (floored at
        :data:`RE_MIN`) [-].

    References
    ----------
    .. [1] H. Schlichting, "Boundary-Layer Theory", McGraw-Hill, 7th ed., 1979, ch. XXI
       (Prandtl-Schlichting; from memory, chapter not checked); one of the curves of J. D. Anderson,
       "Aircraft Performance and Design", 1999, Fig. 2.38.
    """
    return 0.455 / np.log10(np.maximum(np.asarray(reynolds, dtype=float), RE_MIN)) ** 2.58


def skin_friction_laminar_blasius(reynolds):
    """Mean skin-friction coefficient of a laminar flat plate, 1.328 / sqrt(Re) [-].

    Parameters
    ----------
    reynolds : array_like
        Reynolds number on the plate length (floored at :data:`RE_MIN`) [-].

    References
    ----------
    .. [1] H. Blasius, "Grenzschichten in Fluessigkeiten mit kleiner Reibung", Z. Math. Phys.
       56, 1908; H. Schlichting, "Boundary-Layer Theory", 7th ed., 1979, ch. VII (from memory).
    """
    return 1.328 / np.sqrt(np.maximum(np.asarray(reynolds, dtype=float), RE_MIN))


def skin_friction_mixed(reynolds, laminar_fraction=0.0):
    """Skin friction of a plate that is laminar over ``laminar_fraction`` of its wetted area
    and turbulent elsewhere: f C_f,lam(Re) + (1 - f) C_f,turb(Re) [-].

    Parameters
    ----------
    reynolds : array_like
        Reynolds number on the component length [-].
    laminar_fraction : array_like, default 0
        Share of the wetted area in laminar flow, 0 to 1 [-].

    Notes
    -----
    The area-weighted mixture of the two plate laws at the component's Reynolds number
    (common practice for conceptual build-ups; it ignores the turbulent layer's virtual
    origin, which slightly overstates the saving of a long laminar run).
    """
    f = np.asarray(laminar_fraction, dtype=float)
    return (f * skin_friction_laminar_blasius(reynolds)
            + (1.0 - f) * skin_friction_turbulent_prandtl_schlichting(reynolds))


def skin_friction_compressibility_factor(mach):
    """Ratio of compressible to incompressible turbulent skin friction, (1 + 0.144 M^2)^-0.65 [-].

    Parameters
    ----------
    mach : array_like
        Flight Mach number, subsonic [-].

    References
    ----------
    An empirical fit for an adiabatic wall (form and constants from memory; its original
    source is not verified here). 0.957 at M 0.7, 0.994 at M 0.2.
    """
    m = np.asarray(mach, dtype=float)
    return (1.0 + 0.144 * m**2) ** -0.65


def form_factor_body_hoerner1965(fineness_ratio):
    """Form factor of a streamlined body, FF = 1 + 1.5 / (l/d)^1.5 + 7 / (l/d)^3 [-].

    Parameters
    ----------
    fineness_ratio : array_like
        Length over largest diameter l/d, valid about 2 to 12 (floored at 1) [-].

    References
    ----------
    .. [1] S. F. Hoerner, "Fluid-Dynamic Drag", Hoerner Fluid Dynamics, 1965, ch. 6 (from memory;
       the chapter not checked).
    """
    f = np.maximum(np.asarray(fineness_ratio, dtype=float), 1.0)
    return 1.0 + 1.5 / f**1.5 + 7.0 / f**3


def form_factor_wing_torenbeek1982(thickness_ratio):
    """Form factor of a wing or tail section, FF = 1 + 2.7 (t/c) + 100 (t/c)^4 [-].

    Parameters
    ----------
    thickness_ratio : array_like
        Thickness over chord, valid about 0.06 to 0.24 [-].

    References
    ----------
    .. [1] E. Torenbeek, "Synthesis of Subsonic Airplane Design", 1982, App. F (from memory).
    """
    tc = np.asarray(thickness_ratio, dtype=float)
    return 1.0 + 2.7 * tc + 100.0 * tc**4


INTERFERENCE_FACTORS = {"wing": 1.0, "fuselage": 1.0, "tail": 1.05, "nacelle": 1.3}
"""Interference factors Q [-] (common practice: a filleted wing-body 1.0-1.1, tails 1.04-1.08,
a nacelle pod near the wing or fuselage 1.3-1.5)."""


def drag_area(skin_friction, form_factor, interference, wetted_area_m2):
    """Drag area f = C_f FF Q S_wet [m^2] of one component (its D/q; definition)."""
    return skin_friction * form_factor * interference * np.asarray(wetted_area_m2, dtype=float)
