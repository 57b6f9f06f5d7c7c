"""Drag polar, Oswald factor, ground effect and wave drag.

Parabolic polar C_D = C_D0 + K C_L^2 with K = 1 / (pi A e). All functions broadcast.
"""

from __future__ import annotations

import numpy as np


def induced_drag_factor(aspect_ratio, oswald_e):
    """K = 1 / (pi A e) [-] of the parabolic polar."""
    return 1.0 / (np.pi * np.asarray(aspect_ratio, dtype=float) * np.asarray(oswald_e, dtype=float))


def oswald_nita_scholz2012(aspect_ratio, taper_ratio, sweep_quarter_chord, fuselage_span_ratio,
                           mach, k_ed0):
    """Oswald factor [-] by Nita & Scholz (2012).

    Parameters
    ----------
    aspect_ratio : array_like
        Wing aspect ratio, valid 4 to 12 [-].
    taper_ratio : array_like
        Tip over root chord, 0.1 to 1 [-].
    sweep_quarter_chord : array_like
        Quarter-chord sweep, 0 to 35 deg [rad].
    fuselage_span_ratio : array_like
        Fuselage diameter over span d_F / b [-].
    mach : array_like
        Flight Mach number [-].
    k_ed0 : array_like
        Zero-lift-drag correction: 0.804 GA and turboprops, 0.873 jets [-].

    Notes
    -----
    e = e_theo k_eF k_eD0 k_eM, e_theo = 1 / (1 + f(lambda - dlambda) A),
    f(x) = 0.0524 x^4 - 0.15 x^3 + 0.1659 x^2 - 0.0706 x + 0.0119,
    dlambda = -0.357 + 0.45 exp(-0.0375 phi25[deg]), k_eF = 1 - 2 (d_F/b)^2,
    k_eM = 1 for M <= 0.3, else 1 - 0.001521 (M/0.3 - 1)^10.82.

    References
    ----------
    .. [1] M. Nita, D. Scholz, "Estimating the Oswald factor from basic aircraft geometrical
       parameters", Deutscher Luft- und Raumfahrtkongress 2012, Doc. ID 281424
       (f(lambda) and dlambda as published; the k-factors from memory).
    """
    a = np.asarray(aspect_ratio, dtype=float)
    sweep_deg = np.degrees(np.asarray(sweep_quarter_chord, dtype=float))
    dlam = -0.357 + 0.45 * np.exp(-0.0375 * sweep_deg)
    x = np.asarray(taper_ratio, dtype=float) - dlam
    f = 0.0524 * x**4 - 0.15 * x**3 + 0.1659 * x**2 - 0.0706 * x + 0.0119
    e_theo = 1.0 / (1.0 + f * a)
    k_ef = oswald_fuselage_factor("nita_scholz2012", fuselage_span_ratio)
    return e_theo * k_ef * k_ed0 * _mach_factor_nita_scholz(mach)


def _mach_factor_nita_scholz(mach):
    """k_eM of Nita & Scholz: 1 for M <= 0.3, else 1 - 0.001521 (M/0.3 - 1)^10.82 [-]."""
    m = np.asarray(mach, dtype=float)
    return np.where(m <= 0.3, 1.0, 1.0 - 0.001521 * np.maximum(m / 0.3 - 1.0, 0.0) ** 10.82)


def oswald_obert2009(aspect_ratio):
    """Oswald factor [-] of the complete aircraft, e = 1 / (1.05 + 0.007 pi A).

    References
    ----------
    .. [1] E. Obert, "Aerodynamic Design of Transport Aircraft", IOS Press, 2009, p. 542
       (constants from memory).
    """
    return 1.0 / (1.05 + 0.007 * np.pi * np.asarray(aspect_ratio, dtype=float))


OSWALD_METHODS = {
    "nita_scholz2012": "Nita & Scholz (2012), DLRK 2012, Doc. ID 281424; A 4-12, taper 0.1-1",
    "obert2009": "Obert (2009), Aerodynamic Design of Transport Aircraft, p. 542; unswept to moderate sweep",
}
"""Registry of Oswald-factor methods: key -> citation and validity."""


OSWALD_MACH_RANGE = {"nita_scholz2012": (0.0, 0.8), "obert2009": (0.0, 0.7)}
"""Flight Mach range [-] in which each Oswald method is used here.

``nita_scholz2012``: its compressibility factor k_eM was fitted to data reaching about
M 0.8 (from memory); above, k_eM falls steeply and reaches zero at M = 0.3 (1 +
(1/0.001521)^(1/10.82)) = 0.8465, so the method is not extrapolated. ``obert2009``: no Mach
term; the complete-aircraft value is used up to M 0.7, below the drag rise of the wings it
was given for (common practice)."""


def oswald_mach_factor(method, mach):
    """The Mach-dependent factor of ``method``'s Oswald factor [-], per point.

    e(M) = e(M <= 0.3) x oswald_mach_factor(method, M): Nita & Scholz's k_eM (see
    :func:`oswald_nita_scholz2012`); Obert's e has no Mach term (1). Not clipped: use
    :func:`oswald_mach_valid` to flag points outside the method's range.

    Parameters
    ----------
    method : str
        A key of :data:`OSWALD_METHODS`.
    mach : array_like
        Flight Mach number of each point [-].
    """
    if method == "nita_scholz2012":
        return _mach_factor_nita_scholz(mach)
    if method == "obert2009":
        return np.ones_like(np.asarray(mach, dtype=float))
    raise ValueError(f"unknown Oswald method {method!r}; choose one of: "
                     + ", ".join(repr(k) for k in OSWALD_METHODS))


def oswald_mach_valid(method, mach):
    """True where ``mach`` [-] lies inside ``method``'s range (:data:`OSWALD_MACH_RANGE`)."""
    if method not in OSWALD_MACH_RANGE:
        raise ValueError(f"unknown Oswald method {method!r}; choose one of: "
                         + ", ".join(repr(k) for k in OSWALD_METHODS))
    low, high = OSWALD_MACH_RANGE[method]
    m = np.asarray(mach, dtype=float)
    return (m >= low) & (m <= high)


def oswald_fuselage_factor(method, fuselage_span_ratio):
    """The fuselage's factor of the Oswald factor of ``method`` [-]: the method's e is the
    product of this and the method's e at d_F/b = 0 (see :func:`oswald_factor`).

    Nita & Scholz: k_eF = 1 - 2 (d_F/b)^2, d_F/b clipped at 0.5 (k_eF >= 0.5) so that the
    estimate stays positive for the odd design far outside the method's range (inside it,
    d_F/b < 0.2, nothing changes). Obert's e has no fuselage term: 1.
    """
    r = np.asarray(fuselage_span_ratio, dtype=float)
    if method == "nita_scholz2012":
        return 1.0 - 2.0 * np.minimum(r, 0.5) ** 2
    if method == "obert2009":
        return np.ones_like(r)
    raise ValueError(f"unknown Oswald method {method!r}; choose one of: "
                     + ", ".join(repr(k) for k in OSWALD_METHODS))


def oswald_factor(method, aspect_ratio, taper_ratio, sweep_quarter_chord, fuselage_span_ratio,
                  mach, k_ed0):
    """Dispatch to the Oswald method named by ``method`` (a key of :data:`OSWALD_METHODS`)."""
    if method == "nita_scholz2012":
        return oswald_nita_scholz2012(aspect_ratio, taper_ratio, sweep_quarter_chord,
                                      fuselage_span_ratio, mach, k_ed0)
    if method == "obert2009":
        return oswald_obert2009(aspect_ratio) * np.ones_like(np.asarray(fuselage_span_ratio, float))
    raise ValueError(f"unknown Oswald method {method!r}; choose one of: "
                     + ", ".join(repr(k) for k in OSWALD_METHODS))


def ground_effect_mccormick(height_span_ratio):
    """Induced-drag factor phi [-] in ground effect, phi = (16 h/b)^2 / (1 + (16 h/b)^2).

    References
    ----------
    .. [1] B. W. McCormick, "Aerodynamics, Aeronautics and Flight Mechanics", 2nd ed., Wiley,
       1995; as used in J. D. Anderson, "Aircraft Performance and Design", 1999, sec. 6.7.
    """
    r = (16.0 * np.asarray(height_span_ratio, dtype=float)) ** 2
    return r / (1.0 + r)


def ground_effect_wieselsberger(height_span_ratio):
    """Induced-drag factor phi [-], phi = 1 - (1 - 1.32 h/b) / (1.05 + 7.4 h/b).

    Valid 0.033 < h/b < 0.25; clipped to that range here.

    References
    ----------
    .. [1] Wieselsberger, as given in L. M. Nicolai and G. E. Carichner, "Fundamentals of
       Aircraft and Airship Design", Vol. I, AIAA, 2010, pp. 259-260.
    """
    hb = np.clip(np.asarray(height_span_ratio, dtype=float), 0.033, 0.25)
    return 1.0 - (1.0 - 1.32 * hb) / (1.05 + 7.4 * hb)


GROUND_EFFECT_METHODS = {
    "mccormick": "McCormick (1995), AAFM 2nd ed.; Anderson APD sec. 6.7",
    "wieselsberger": "Wieselsberger, in Nicolai & Carichner (2010) pp. 259-260; 0.033 < h/b < 0.25",
}


def ground_effect_factor(method, height_span_ratio):
    """Dispatch to the ground-effect method named by ``method``."""
    if method == "mccormick":
        return ground_effect_mccormick(height_span_ratio)
    if method == "wieselsberger":
        return ground_effect_wieselsberger(height_span_ratio)
    raise ValueError(f"unknown ground-effect method {method!r}; choose one of: "
                     + ", ".join(repr(k) for k in GROUND_EFFECT_METHODS))


def wave_drag_lock(mach, drag_divergence_mach):
    """Wave-drag increment [-] by Lock's fourth-power law.

    dC_D = 20 (M - M_crit)^4 for M > M_crit, M_crit = M_DD - (0.1 / 80)^(1/3), so that
    dC_D/dM = 0.1 at M_DD.

    References
    ----------
    .. [1] Lock's empirical law, as given by W. H. Mason, "Configuration Aerodynamics",
       Virginia Tech, ch. 7 (from memory).
    """
    return 20.0 * _beyond_critical_mach(mach, drag_divergence_mach) ** 4


def _beyond_critical_mach(mach, drag_divergence_mach):
    """max(M - M_crit, 0) of Lock's law, M_crit = M_DD - (0.1 / 80)^(1/3)."""
    m_crit = np.asarray(drag_divergence_mach, dtype=float) - (0.1 / 80.0) ** (1.0 / 3.0)
    return np.maximum(np.asarray(mach, dtype=float) - m_crit, 0.0)


def wave_drag_lock_and_slope(mach, drag_divergence_mach):
    """Lock's wave-drag increment [-] and its slope dC_D/dM [-] (see :func:`wave_drag_lock`):
    20 (M - M_crit)^4 and 80 (M - M_crit)^3 above M_crit, zero below (by products, for a
    solver's inner loop)."""
    over = _beyond_critical_mach(mach, drag_divergence_mach)
    over3 = over * over * over
    return 20.0 * over3 * over, 80.0 * over3


def drag_coefficient(cl, cd0, k):
    """C_D = C_D0 + K C_L^2 [-]."""
    return cd0 + k * np.asarray(cl, dtype=float) ** 2


def lift_to_drag(cl, cd0, k):
    """L/D [-] at lift coefficient ``cl`` on the parabolic polar."""
    cl = np.asarray(cl, dtype=float)
    return cl / (cd0 + k * cl**2)
