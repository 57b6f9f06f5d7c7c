"""Airplane geometry for drag and mass estimates: wing planform, fuselage, tails, nacelles,
wing fuel volume.

Every function broadcasts over designs (numpy arrays, SI). The wing is a straight-tapered
(trapezoidal) planform given by its reference area, aspect ratio, taper, quarter-chord sweep
and thickness ratio; the fuselage a cylinder with a conical nose and a conical tail cone; the
tails are sized by tail-volume coefficients; nacelles by the rating of the engine they hold.

Class data (tail volumes, nacelle sizes) are conceptual-design values: each names its source
or says "common practice".
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .highlift import sweep_at_chord_fraction


@dataclass(frozen=True, slots=True)
class WingGeometry:
    """A straight-tapered wing (arrays, one element per design)."""

    area_m2: np.ndarray  # reference (trapezoidal) area, through the fuselage
    span_m: np.ndarray
    root_chord_m: np.ndarray  # at the centre line
    tip_chord_m: np.ndarray
    mean_aerodynamic_chord_m: np.ndarray
    mac_spanwise_position_m: np.ndarray  # from the centre line
    exposed_area_m2: np.ndarray  # outside a fuselage of the given diameter
    exposed_root_chord_m: np.ndarray  # at the fuselage side
    exposed_taper_ratio: np.ndarray  # tip chord over exposed root chord
    sweep_leading_edge_rad: np.ndarray
    sweep_half_chord_rad: np.ndarray
    thickness_ratio: np.ndarray  # t/c [-]


def wing_span(area_m2, aspect_ratio):
    """Span b = sqrt(A S) [m] of a wing of area ``area_m2`` [m^2] and aspect ratio [-]
    (definition of the aspect ratio, A = b^2 / S)."""
    return np.sqrt(np.asarray(aspect_ratio, dtype=float) * np.asarray(area_m2, dtype=float))


def root_chord(area_m2, span_m, taper_ratio):
    """Centre-line chord c_r = 2 S / (b (1 + lambda)) [m] of a trapezoidal wing.

    Parameters
    ----------
    area_m2 : array_like
        Reference area [m^2].
    span_m : array_like
        Span [m].
    taper_ratio : array_like
        Tip over root chord, 0 to 1 [-].

    Notes
    -----
    Area of the trapezoid: S = (b/2) (c_r + c_t) with c_t = lambda c_r (derived).
    """
    return 2.0 * np.asarray(area_m2, dtype=float) / (
        np.asarray(span_m, dtype=float) * (1.0 + np.asarray(taper_ratio, dtype=float)))


def mean_aerodynamic_chord(root_chord_m, taper_ratio):
    """Mean aerodynamic chord (2/3) c_r (1 + lambda + lambda^2) / (1 + lambda) [m].

    Notes
    -----
    c_bar = (2/S) int_0^{b/2} c(y)^2 dy for the linear chord c(y) = c_r (1 - (1 - lambda) 2y/b)
    (derived; the same closed form is in every design text, e.g. Torenbeek, "Synthesis of
    Subsonic Airplane Design", 1982, App. A, from memory).
    """
    lam = np.asarray(taper_ratio, dtype=float)
    return (2.0 / 3.0) * np.asarray(root_chord_m, dtype=float) * (1.0 + lam + lam**2) / (1.0 + lam)


def mac_spanwise_position(span_m, taper_ratio):
    """Spanwise station of the mean aerodynamic chord, y = (b/6) (1 + 2 lambda)/(1 + lambda)
    [m] from the centre line (the area centroid of a half trapezoid, derived)."""
    lam = np.asarray(taper_ratio, dtype=float)
    return np.asarray(span_m, dtype=float) / 6.0 * (1.0 + 2.0 * lam) / (1.0 + lam)


def exposed_wing_area(area_m2, span_m, root_chord_m, taper_ratio, fuselage_diameter_m):
    """Wing area outside a fuselage of diameter d [m^2]: S - d c_r (1 - (1 - lambda) d / (2b)).

    Parameters
    ----------
    area_m2, span_m, root_chord_m : array_like
        Reference area [m^2], span [m], centre-line chord [m].
    taper_ratio : array_like
        [-].
    fuselage_diameter_m : array_like
        Width of the fuselage where the wing meets it; kept below the span [m].

    Notes
    -----
    The part inside the fuselage is the trapezoid between y = -d/2 and d/2,
    d (c_r + c(d/2)) / 2 with c(d/2) = c_r (1 - (1 - lambda) d / b) (derived). Never negative.
    """
    b = np.asarray(span_m, dtype=float)
    d = np.minimum(np.asarray(fuselage_diameter_m, dtype=float), b)
    lam = np.asarray(taper_ratio, dtype=float)
    inside = d * np.asarray(root_chord_m, dtype=float) * (1.0 - (1.0 - lam) * d / (2.0 * b))
    return np.maximum(np.asarray(area_m2, dtype=float) - inside, 0.0)


def wing_geometry(area_m2, aspect_ratio, taper_ratio, sweep_quarter_chord_rad,
                  thickness_ratio, fuselage_diameter_m=0.0) -> WingGeometry:
    """Span, chords, mean aerodynamic chord, exposed area and sweeps of a trapezoidal wing.

    Parameters
    ----------
    area_m2 : array_like
        Reference area S [m^2].
    aspect_ratio : array_like
        A = b^2 / S [-].
    taper_ratio : array_like
        Tip over root chord, 0.1 to 1 [-].
    sweep_quarter_chord_rad : array_like
        Quarter-chord sweep [rad].
    thickness_ratio : array_like
        Thickness over chord t/c [-].
    fuselage_diameter_m : array_like, default 0
        Fuselage width at the wing, for the exposed area [m].

    Returns
    -------
    WingGeometry
        Lengths [m], areas [m^2], sweeps [rad], taper and t/c [-].

    References
    ----------
    Trapezoidal planform geometry (derived; see each function); the sweep of other chord
    lines by :func:`optimiser.physics.highlift.sweep_at_chord_fraction`.
    """
    s = np.asarray(area_m2, dtype=float)
    lam = np.asarray(taper_ratio, dtype=float)
    b = wing_span(s, aspect_ratio)
    c_r = root_chord(s, b, lam)
    c_t = lam * c_r
    d = np.minimum(np.asarray(fuselage_diameter_m, dtype=float), b)
    c_side = c_r * (1.0 - (1.0 - lam) * d / b)
    s_exp = exposed_wing_area(s, b, c_r, lam, d)
    return WingGeometry(
        s, b, c_r, c_t, mean_aerodynamic_chord(c_r, lam), mac_spanwise_position(b, lam),
        s_exp, c_side, c_t / c_side,
        sweep_at_chord_fraction(sweep_quarter_chord_rad, aspect_ratio, lam, 0.0),
        sweep_at_chord_fraction(sweep_quarter_chord_rad, aspect_ratio, lam, 0.5),
        np.broadcast_to(np.asarray(thickness_ratio, dtype=float), s.shape))


def wing_wetted_area_torenbeek1982(exposed_area_m2, thickness_ratio_root, taper_ratio,
                                   thickness_taper=1.0):
    """Wetted area of an exposed wing or tail panel [m^2].

    S_wet = 2 S_exp (1 + 0.25 (t/c)_r (1 + tau lambda) / (1 + lambda)).

    Parameters
    ----------
    exposed_area_m2 : array_like
        Planform area outside the fuselage, both sides [m^2].
    thickness_ratio_root : array_like
        t/c at the exposed root [-].
    taper_ratio : array_like
        Tip chord over exposed root chord [-].
    thickness_taper : array_like, default 1
        tau = (t/c)_tip / (t/c)_root [-].

    Notes
    -----
    Both surfaces of the panel (2 S_exp), raised by the arc-length excess of a section of
    thickness ratio t/c; (t/c)_r (1 + tau lambda)/(1 + lambda) is the chord-weighted mean
    thickness ratio of the panel.

    References
    ----------
    .. [1] E. Torenbeek, "Synthesis of Subsonic Airplane Design", Delft University Press /
       Kluwer, 1982, App. F (form and constant 0.25 from memory).
    """
    lam = np.asarray(taper_ratio, dtype=float)
    tc = np.asarray(thickness_ratio_root, dtype=float)
    return 2.0 * np.asarray(exposed_area_m2, dtype=float) * (
        1.0 + 0.25 * tc * (1.0 + np.asarray(thickness_taper, dtype=float) * lam) / (1.0 + lam))


@dataclass(frozen=True, slots=True)
class FuselageGeometry:
    """A fuselage: a cylinder between a conical nose and a conical tail cone."""

    length_m: np.ndarray | float
    diameter_m: np.ndarray | float
    nose_length_m: np.ndarray | float
    tailcone_length_m: np.ndarray | float
    cylinder_length_m: np.ndarray | float
    fineness_ratio: np.ndarray | float  # length over diameter [-]
    wetted_area_m2: np.ndarray | float


def body_wetted_area_cones(length_m, diameter_m, nose_length_m, tailcone_length_m):
    """Wetted area [m^2] of a cylinder of diameter d with a conical nose and tail cone.

    S_wet = pi d l_cyl + pi r sqrt(r^2 + l_n^2) + pi r sqrt(r^2 + l_t^2), r = d/2,
    l_cyl = l - l_n - l_t (kept >= 0).

    Parameters
    ----------
    length_m, diameter_m : array_like
        Overall length and largest diameter [m].
    nose_length_m, tailcone_length_m : array_like
        Lengths of the nose and tail cones [m] (a zero-length cone is a flat end, pi r^2).

    Notes
    -----
    Exact for that shape (lateral area of a right circular cone pi r s, s the slant height;
    derived). A rounded nose has a little more area than its cone; the form factor carries
    the shape's effect on drag.
    """
    d = np.asarray(diameter_m, dtype=float)
    r = 0.5 * d
    ln = np.asarray(nose_length_m, dtype=float)
    lt = np.asarray(tailcone_length_m, dtype=float)
    l_cyl = np.maximum(np.asarray(length_m, dtype=float) - ln - lt, 0.0)
    return np.pi * d * l_cyl + np.pi * r * (np.sqrt(r**2 + ln**2) + np.sqrt(r**2 + lt**2))


def fuselage_geometry(length_m, diameter_m, nose_fineness, tailcone_fineness) -> FuselageGeometry:
    """Fuselage from its length, diameter and the fineness of its nose and tail cone.

    Parameters
    ----------
    length_m, diameter_m : array_like
        Overall length and largest diameter [m].
    nose_fineness, tailcone_fineness : array_like
        Nose and tail-cone length over the diameter [-]; their sum is kept within the length.

    Returns
    -------
    FuselageGeometry
        Lengths [m], fineness [-] and the wetted area [m^2] by
        :func:`body_wetted_area_cones`.
    """
    length = np.asarray(length_m, dtype=float)
    d = np.asarray(diameter_m, dtype=float)
    ln = np.asarray(nose_fineness, dtype=float) * d
    lt = np.asarray(tailcone_fineness, dtype=float) * d
    scale = np.minimum(1.0, length / np.maximum(ln + lt, 1e-12))
    ln, lt = ln * scale, lt * scale
    return FuselageGeometry(length, d, ln, lt, length - ln - lt, length / d,
                            body_wetted_area_cones(length, d, ln, lt))


TAIL_VOLUME_COEFFICIENTS = {
    # class: (horizontal V_H = S_H l_H / (S c_bar), vertical V_V = S_V l_V / (S b))
    "single_engine_prop": (0.65, 0.045),
    "twin_engine_prop": (0.80, 0.065),
    "regional_turboprop": (0.95, 0.080),
    "business_jet": (0.75, 0.080),
}
"""Tail-volume coefficients by class (keys of the mission segment table) [-]. Typical values
inside the ranges of the tail-volume tables of J. Roskam, "Airplane Design", Part II, ch. 8,
and E. Torenbeek, "Synthesis of Subsonic Airplane Design", 1982, ch. 9 (from memory; the
single values are common practice)."""

TAIL_ARM_FRACTION = 0.50
"""Tail moment arm (wing to tail quarter-chord points) over fuselage length [-] (common
practice: 0.45-0.55 for a rear-mounted tail)."""

HORIZONTAL_TAIL_ASPECT_RATIO = 4.5
"""Aspect ratio of the horizontal tail [-] (common practice: 3.5-5.5)."""
VERTICAL_TAIL_ASPECT_RATIO = 1.5
"""Aspect ratio of the vertical tail, height^2 / area [-] (common practice: 1.2-2)."""
TAIL_TAPER_RATIO = 0.5
"""Taper of both tails [-] (common practice: 0.4-0.6)."""


def tail_areas(wing_area_m2, mean_aerodynamic_chord_m, span_m, horizontal_tail_volume,
               vertical_tail_volume, tail_arm_m):
    """Horizontal and vertical tail areas from tail-volume coefficients [m^2].

    S_H = V_H S c_bar / l_H,  S_V = V_V S b / l_V  (one arm l for both).

    Parameters
    ----------
    wing_area_m2, mean_aerodynamic_chord_m, span_m : array_like
        Wing reference area [m^2], mean aerodynamic chord [m], span [m].
    horizontal_tail_volume, vertical_tail_volume : array_like
        V_H and V_V [-].
    tail_arm_m : array_like
        Moment arm from the wing's to the tails' quarter-chord points [m].

    Returns
    -------
    (ndarray, ndarray)
        S_H and S_V [m^2].

    References
    ----------
    .. [1] J. Roskam, "Airplane Design", Part II, ch. 8 (the volume-coefficient method; from
       memory).
    """
    s = np.asarray(wing_area_m2, dtype=float)
    arm = np.asarray(tail_arm_m, dtype=float)
    return (horizontal_tail_volume * s * np.asarray(mean_aerodynamic_chord_m, dtype=float) / arm,
            vertical_tail_volume * s * np.asarray(span_m, dtype=float) / arm)


def tail_geometry(area_m2, aspect_ratio, thickness_ratio,
                  taper_ratio=TAIL_TAPER_RATIO) -> WingGeometry:
    """Planform of a tail surface (unswept at the quarter chord, all of it exposed): the
    trapezoid of :func:`wing_geometry` with no fuselage [m, m^2, rad, -]. For a vertical tail
    give its height^2 / area as ``aspect_ratio``: its 'span' is then the height."""
    return wing_geometry(area_m2, aspect_ratio, taper_ratio, 0.0, thickness_ratio, 0.0)


NACELLE_SIZING = {
    # family: (reference rating per engine [N or W], diameter at that rating [m],
    #          length over diameter [-])
    "turbofan": (15e3, 0.85, 2.8),
    "turboprop": (800e3, 0.90, 3.5),
    "piston": (200e3, 0.85, 2.2),
}
"""Nacelle size per engine (common practice, no single source): the diameter grows with the
square root of the rating (for a turbofan, the fan area goes with the air mass flow, which goes
with the thrust at a given specific thrust; for a propeller engine, the frontal area with the
power) and the length is a class-typical multiple of it. Rounded from invented, class-typical
layouts (a 15 kN turbofan in a 0.85 m nacelle; an 800 kW turboprop in a 0.9 m nacelle that
also stows the gear; a 200 kW flat piston engine in a 0.85 m cowling)."""


def nacelle_size(family, rating_per_engine):
    """Diameter and length of one nacelle [m] from the engine's sea-level rating.

    Parameters
    ----------
    family : str
        ``"turbofan"``, ``"turboprop"`` or ``"piston"`` (a key of :data:`NACELLE_SIZING`).
    rating_per_engine : array_like
        Static thrust [N] (turbofan) or rated power [W] (propeller engines) of one engine.

    Returns
    -------
    (ndarray, ndarray)
        d = d_ref sqrt(rating / rating_ref) and l = (l/d) d [m].

    Raises
    ------
    ValueError
        For an unknown family.

    References
    ----------
    Common practice (see :data:`NACELLE_SIZING`).
    """
    if family not in NACELLE_SIZING:
        raise ValueError(f"nacelle_size: unknown family {family!r}; choose one of: "
                         + ", ".join(NACELLE_SIZING))
    ref, d_ref, fineness = NACELLE_SIZING[family]
    d = d_ref * np.sqrt(np.maximum(np.asarray(rating_per_engine, dtype=float), 0.0) / ref)
    return d, fineness * d


NACELLE_AFTERBODY_FINENESS = 1.0
"""Length of a nacelle's conical afterbody over its diameter [-] (common practice)."""


def nacelle_wetted_area(diameter_m, length_m):
    """Wetted area of one nacelle [m^2]: an open-fronted cylinder with a conical afterbody of
    length :data:`NACELLE_AFTERBODY_FINENESS` x d, pi d (l - l_a) + pi r sqrt(r^2 + l_a^2)
    (derived; the inlet face is not wetted). ``diameter_m`` and ``length_m`` [m]."""
    d = np.asarray(diameter_m, dtype=float)
    r = 0.5 * d
    la = np.minimum(NACELLE_AFTERBODY_FINENESS * d, np.asarray(length_m, dtype=float))
    return np.pi * d * (np.asarray(length_m, dtype=float) - la) + np.pi * r * np.sqrt(r**2 + la**2)


def wing_fuel_volume_torenbeek1982(area_m2, span_m, thickness_ratio_root, taper_ratio,
                                   thickness_taper=1.0):
    """Wing fuel-tank volume [m^3] of a trapezoidal wing, before the usable share.

    V = 0.54 (S^2 / b) (t/c)_r (1 + lambda sqrt(tau) + lambda^2 tau) / (1 + lambda)^2.

    Parameters
    ----------
    area_m2, span_m : array_like
        Reference area [m^2] and span [m].
    thickness_ratio_root : array_like
        t/c at the root [-].
    taper_ratio : array_like
        [-].
    thickness_taper : array_like, default 1
        tau = (t/c)_tip / (t/c)_root [-].

    Notes
    -----
    The form is the volume of a frustum whose sections, of area k c t, scale from root to
    tip by lambda^2 tau: (b/3) k c_r t_r (1 + lambda sqrt(tau) + lambda^2 tau) over both sides,
    with c_r = 2S / (b (1 + lambda)), hence 4k/3 = 0.54, k = 0.405 (a box of about half the
    chord at 0.8 of the section's thickness). It is exact for tau = 1 and within 1.1 % of the
    exact integral (:func:`wing_box_volume_exact`) for tau 0.6 to 1, lambda 0.1 to 1 (0.21 %
    for tau >= 0.8; checked in the tests).

    References
    ----------
    .. [1] E. Torenbeek, "Synthesis of Subsonic Airplane Design", 1982, sec. 8.5 / App. B
       (form and constant 0.54 from memory; verified here against the exact integral).
    """
    s = np.asarray(area_m2, dtype=float)
    lam = np.asarray(taper_ratio, dtype=float)
    tau = np.asarray(thickness_taper, dtype=float)
    return 0.54 * s**2 / np.asarray(span_m, dtype=float) * np.asarray(
        thickness_ratio_root, dtype=float) * (1.0 + lam * np.sqrt(tau) + lam**2 * tau) / (1.0 + lam)**2


WING_BOX_AREA_RATIO = 0.405
"""Cross-section of the fuel box over chord x thickness [-] that makes the exact integral equal
Torenbeek's 0.54 form for a constant t/c (0.54 x 3/4; derived)."""


def wing_box_volume_exact(area_m2, span_m, thickness_ratio_root, taper_ratio,
                          thickness_taper=1.0, box_area_ratio=WING_BOX_AREA_RATIO):
    """Exact volume [m^3] of a wing box of section k c(y) t(y), c and t linear in span.

    V = 2 int_0^{b/2} k c t dy = (b/3) k c_r t_r (1 + (lambda + tau lambda)/2 + tau lambda^2),
    with t_r = (t/c)_r c_r and t_tip = tau lambda t_r.

    Parameters
    ----------
    area_m2, span_m, thickness_ratio_root, taper_ratio, thickness_taper : array_like
        As :func:`wing_fuel_volume_torenbeek1982` [m^2, m, -, -, -].
    box_area_ratio : array_like, default :data:`WING_BOX_AREA_RATIO`
        k = box section over c t [-].

    Notes
    -----
    With eta = 2y/b: c = c_r ((1 - eta) + lambda eta), t = t_r ((1 - eta) + tau lambda eta), and
    int_0^1 c t d eta = c_r t_r (1/3 + (lambda + tau lambda)/6 + tau lambda^2 / 3) (derived).
    """
    s = np.asarray(area_m2, dtype=float)
    b = np.asarray(span_m, dtype=float)
    lam = np.asarray(taper_ratio, dtype=float)
    tl = np.asarray(thickness_taper, dtype=float) * lam
    c_r = root_chord(s, b, lam)
    t_r = np.asarray(thickness_ratio_root, dtype=float) * c_r
    return b / 3.0 * box_area_ratio * c_r * t_r * (1.0 + 0.5 * (lam + tl) + tl * lam)
