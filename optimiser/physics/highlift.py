"""High-lift catalogue and airplane-level increments in CLmax and CD0.

The catalogue is data: one entry per trailing-edge flap type, plus leading-edge slats as an
add-on. A study may override any field of an entry or add entries of its own.

Sources of the numbers (each field of an entry):

``section_cl_increment``, ``chord_extension``
    Section increment in c_lmax at the landing deflection, Franchini et al., reproduced in
    Arnedo, "Fundamentals of Aerospace Engineering", LibreTexts, Table 3.1: plain 0.9, split 0.9, single-slotted 1.3, Fowler 1.3 c'/c, double-slotted
    1.6 c'/c, slat 0.4 c'/c. The chord extensions c'/c (Fowler 1.25, double-slotted 1.30,
    slat 1.10) are common practice.
``takeoff_fraction``
    Share of the landing increment available at the takeoff setting: 0.62 for flaps
    (60 to 70 %, common practice), 1.0 for slats (fully deployed at takeoff).
``cd0_factor_takeoff``, ``cd0_factor_landing``
    Multipliers on the mid values of Roskam, "Airplane Design" Part I, Table 3.6 (takeoff
    flaps 0.010 to 0.020, landing flaps 0.055 to 0.075; mid 0.015 / 0.065, from memory);
    per-type multipliers are common practice. Slats add ``cd0_add_*`` absolute.
``mass_per_area_kg_m2``
    Mass per unit flap (or slat) area, common practice (no compact published per-type law).
``elements``, ``supports``, ``actuators``, ``slots``
    Moving elements, hinges or tracks, actuators and slots per wing side, for the maintenance
    index (common practice, after the qualitative comparison in P. K. C. Rudolph,
    "High-Lift Systems on Commercial Subsonic Airliners", NASA CR-4746, 1996).
``support_spacing_m``
    Largest spacing between hinges or tracks along the span (common practice): a longer flap
    needs more supports than the table's minimum.

Airplane level (simple form, common practice):
dCLmax = 0.9 dc_lmax (c'/c) (S_flapped / S) cos(Lambda_hinge), the hinge-line sweep from
:func:`hinge_line_sweep`.
"""

from __future__ import annotations

import numpy as np

FLAP_CD0_MID_TAKEOFF = 0.015
"""Mid value of takeoff-flap dCD0, Roskam Part I Table 3.6 (from memory)."""
FLAP_CD0_MID_LANDING = 0.065
"""Mid value of landing-flap dCD0, Roskam Part I Table 3.6 (from memory)."""
FLAP_CHORD_RATIO = 0.30
"""Flap chord over wing chord, for the flap area (common practice)."""
SLAT_CHORD_RATIO = 0.15
"""Slat chord over wing chord, for the slat area (common practice)."""

MAINTENANCE_WEIGHTS = {"elements": 1.0, "supports": 0.5, "actuators": 1.0, "slots": 0.5}
"""Weights of the maintenance index per counted item (common practice; relative score)."""

FLAP_CATALOGUE: dict[str, dict[str, float]] = {
    "none": dict(section_cl_increment=0.0, chord_extension=1.0, takeoff_fraction=0.0,
                 cd0_factor_takeoff=0.0, cd0_factor_landing=0.0, mass_per_area_kg_m2=0.0,
                 elements=0, supports=0, actuators=0, slots=0, support_spacing_m=1.5),
    "plain": dict(section_cl_increment=0.9, chord_extension=1.0, takeoff_fraction=0.62,
                  cd0_factor_takeoff=1.0, cd0_factor_landing=0.9, mass_per_area_kg_m2=10.0,
                  elements=1, supports=2, actuators=1, slots=0, support_spacing_m=1.5),
    "split": dict(section_cl_increment=0.9, chord_extension=1.0, takeoff_fraction=0.62,
                  cd0_factor_takeoff=1.3, cd0_factor_landing=1.1, mass_per_area_kg_m2=10.0,
                  elements=1, supports=2, actuators=1, slots=0, support_spacing_m=1.5),
    "single_slotted": dict(section_cl_increment=1.3, chord_extension=1.0, takeoff_fraction=0.62,
                           cd0_factor_takeoff=0.8, cd0_factor_landing=0.9,
                           mass_per_area_kg_m2=14.0,
                           elements=1, supports=2, actuators=1, slots=1, support_spacing_m=1.5),
    "double_slotted": dict(section_cl_increment=1.6, chord_extension=1.30, takeoff_fraction=0.62,
                           cd0_factor_takeoff=0.8, cd0_factor_landing=1.0,
                           mass_per_area_kg_m2=21.0,
                           elements=2, supports=3, actuators=2, slots=2, support_spacing_m=1.2),
    "fowler": dict(section_cl_increment=1.3, chord_extension=1.25, takeoff_fraction=0.62,
                   cd0_factor_takeoff=0.6, cd0_factor_landing=0.8, mass_per_area_kg_m2=24.0,
                   elements=1, supports=3, actuators=2, slots=1, support_spacing_m=1.2),
}
"""Trailing-edge flap types; see the module docstring for the source of each field."""

SLAT_ENTRY: dict[str, float] = dict(
    section_cl_increment=0.4, chord_extension=1.10, takeoff_fraction=1.0,
    cd0_add_takeoff=0.002, cd0_add_landing=0.005, mass_per_area_kg_m2=17.0,
    elements=4, supports=8, actuators=4, slots=4, support_spacing_m=1.0)
"""Leading-edge slats as an add-on ("<flap>+slats"); see the module docstring."""

FLAP_FIELDS = tuple(FLAP_CATALOGUE["plain"])
SLAT_FIELDS = tuple(SLAT_ENTRY)


def maintenance_items(entry):
    """Weighted count of elements, supports, actuators and slots per wing side [-]."""
    w = MAINTENANCE_WEIGHTS
    fixed = w["elements"] * entry["elements"] + w["actuators"] * entry["actuators"] \
        + w["slots"] * entry["slots"]
    return fixed, w["supports"] * entry["supports"]


def clmax_increment_landing(section_cl_increment, chord_extension, span_fraction,
                            hinge_sweep=0.0):
    """Airplane dCLmax [-] at the landing setting: 0.9 dc_lmax (c'/c) (S_f/S) cos(Lambda).

    Common-practice airplane-level form of the section increments of Franchini et al.
    (Arnedo, Fundamentals of Aerospace Engineering, Table 3.1).
    """
    return 0.9 * np.asarray(section_cl_increment, float) * chord_extension * span_fraction \
        * np.cos(hinge_sweep)


def sweep_at_chord_fraction(sweep_quarter_chord, aspect_ratio, taper_ratio, chord_fraction):
    """Sweep [rad] of the line at ``chord_fraction`` x/c of a straight-tapered wing.

    tan(Lambda_x) = tan(Lambda_c/4) - (4 / A) (x - 1/4) (1 - lambda) / (1 + lambda).

    Parameters
    ----------
    sweep_quarter_chord : array_like
        Quarter-chord sweep [rad].
    aspect_ratio : array_like
        A = b^2 / S [-].
    taper_ratio : array_like
        Tip over root chord, 0 to 1 [-].
    chord_fraction : array_like
        Chordwise position of the line, 0 (leading edge) to 1 (trailing edge) [-].

    Notes
    -----
    Derived from the trapezoidal planform: each chord line runs straight from root to tip, and
    the line at x moves aft by x (c_t - c_r) over the semi-span b/2, with c_r - c_t =
    2 S (1 - lambda) / (b (1 + lambda)); hence the difference of tangents
    (x - 1/4) 2 (c_t - c_r) / b = -(4/A)(x - 1/4)(1 - lambda)/(1 + lambda). The same relation is
    given in USAF Stability and Control DATCOM, sec. 2.2.2 (from memory). Tested against the
    geometry of a trapezoidal wing.
    """
    lam = np.asarray(taper_ratio, dtype=float)
    return np.arctan(np.tan(np.asarray(sweep_quarter_chord, dtype=float))
                     - 4.0 / np.asarray(aspect_ratio, dtype=float)
                     * (np.asarray(chord_fraction, dtype=float) - 0.25) * (1.0 - lam) / (1.0 + lam))


def hinge_line_sweep(sweep_quarter_chord, aspect_ratio, taper_ratio,
                     flap_chord_ratio=FLAP_CHORD_RATIO):
    """Sweep of a trailing-edge flap's hinge line [rad], at x/c = 1 - c_f/c.

    See :func:`sweep_at_chord_fraction` for the parameters; ``flap_chord_ratio`` c_f/c [-]
    (default :data:`FLAP_CHORD_RATIO`, 0.30, common practice). The hinge is taken at the
    flap's leading edge, a constant fraction of the local chord along the span.
    """
    return sweep_at_chord_fraction(sweep_quarter_chord, aspect_ratio, taper_ratio,
                                   1.0 - np.asarray(flap_chord_ratio, dtype=float))


def parse_high_lift_name(name, flap_catalogue):
    """Split ``"fowler+slats"`` into ``("fowler", True)``; raise ValueError if unknown."""
    base, plus, extra = name.partition("+")
    if base not in flap_catalogue or (plus and extra != "slats"):
        valid = ", ".join(sorted(flap_catalogue))
        raise ValueError(f"unknown flap type {name!r}: expected one of {valid}, "
                         "optionally followed by '+slats'")
    return base, bool(plus)


def high_lift_config(name, flap_catalogue, slat_entry, flapped_span_fraction,
                     slat_span_fraction, hinge_sweep, actuator_unit_mass):
    """Airplane-level numbers of one high-lift configuration ("fowler", "plain+slats", ...).

    Returns a dict of plain floats: CLmax and CD0 increments at takeoff and landing, flap and
    slat area ratios (S_device / S_ref) and areal masses, actuator mass (both sides), and the
    maintenance counts per wing side. See the module docstring for the sources.
    """
    base, slats = parse_high_lift_name(name, flap_catalogue)
    f = flap_catalogue[base]
    d_land = float(clmax_increment_landing(f["section_cl_increment"], f["chord_extension"],
                                           flapped_span_fraction, hinge_sweep))
    cd_to = FLAP_CD0_MID_TAKEOFF * f["cd0_factor_takeoff"]
    cd_l = FLAP_CD0_MID_LANDING * f["cd0_factor_landing"]
    d_to = f["takeoff_fraction"] * d_land
    flap_items, _ = maintenance_items(f)
    has_flap = f["section_cl_increment"] > 0.0 or f["elements"] > 0
    out = dict(
        name=name,
        flap_area_ratio=FLAP_CHORD_RATIO * flapped_span_fraction if has_flap else 0.0,
        flap_mass_per_area_kg_m2=float(f["mass_per_area_kg_m2"]),
        flap_items=float(flap_items), flap_supports_min=float(f["supports"]),
        flap_support_spacing_m=float(f["support_spacing_m"]),
        actuators=float(f["actuators"]),
        slat_area_ratio=0.0, slat_mass_per_area_kg_m2=0.0, slat_items=0.0,
        slat_supports_min=0.0, slat_support_spacing_m=1.0,
        flapped_span_fraction=float(flapped_span_fraction) if has_flap else 0.0,
        slat_span_fraction=0.0, slat_cl_increment_takeoff=0.0, slat_cl_increment_landing=0.0,
        support_weight=MAINTENANCE_WEIGHTS["supports"])
    if slats:
        s = slat_entry
        s_land = float(clmax_increment_landing(s["section_cl_increment"], s["chord_extension"],
                                               slat_span_fraction, hinge_sweep))
        d_land += s_land
        d_to += s["takeoff_fraction"] * s_land
        cd_to += s["cd0_add_takeoff"]
        cd_l += s["cd0_add_landing"]
        slat_items, _ = maintenance_items(s)
        out.update(slat_area_ratio=SLAT_CHORD_RATIO * slat_span_fraction,
                   slat_mass_per_area_kg_m2=float(s["mass_per_area_kg_m2"]),
                   slat_items=float(slat_items), slat_supports_min=float(s["supports"]),
                   slat_support_spacing_m=float(s["support_spacing_m"]),
                   slat_span_fraction=float(slat_span_fraction),
                   slat_cl_increment_takeoff=s["takeoff_fraction"] * s_land,
                   slat_cl_increment_landing=s_land)
        out["actuators"] += float(s["actuators"])
    out.update(cl_increment_takeoff=d_to, cl_increment_landing=d_land,
               cd0_increment_takeoff=cd_to, cd0_increment_landing=cd_l,
               actuator_mass_kg=2.0 * out["actuators"] * actuator_unit_mass)
    return out


def maintenance_index(span, flap_items, flap_supports_min, flap_support_spacing,
                      flapped_span_fraction, slat_items, slat_supports_min, slat_support_spacing,
                      slat_span_fraction, support_weight):
    """Maintenance complexity index of the high-lift system, per wing side [-].

    MCI = sum over devices of (w_E elements + w_A actuators + w_G slots) + w_S n_supports,
    with n_supports = max(table minimum, device span per side / support spacing), so a longer
    flap (larger span or aspect ratio) needs more hinges or tracks. A relative, ordinal score
    (common practice): plain flap on two hinges = 3.0, Fowler on three tracks = 5.0.
    """
    half = 0.5 * np.asarray(span, float)
    flap_sup = np.where(flapped_span_fraction > 0,
                        np.maximum(flap_supports_min, flapped_span_fraction * half
                                   / flap_support_spacing), 0.0)
    slat_sup = np.where(slat_span_fraction > 0,
                        np.maximum(slat_supports_min, slat_span_fraction * half
                                   / slat_support_spacing), 0.0)
    return flap_items + slat_items + support_weight * (flap_sup + slat_sup)
