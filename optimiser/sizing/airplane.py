"""The airplane that the performance stages analyse: geometry, engines, high lift, polar and
mass, whatever produced them (the mass closure today, a frozen design later)."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..physics import G0
from ..physics import highlift
from .aero import CleanDrag, HighLift, LowSpeedPolar
from .engines import InstalledPropulsion


@dataclass(frozen=True, slots=True)
class Airplane:
    """One airplane per design, at the mass its performance is computed for.

    ``wing_loading_N_m2`` is kept beside ``weight_N`` and ``wing_area_m2`` (their ratio) so
    that the stages use the very number the designs were given.
    """

    mass_kg: np.ndarray
    weight_N: np.ndarray
    wing_loading_N_m2: np.ndarray
    aspect_ratio: np.ndarray  # [-]
    wing_area_m2: np.ndarray
    span_m: np.ndarray
    engines: InstalledPropulsion
    high_lift: HighLift
    drag: CleanDrag
    polar: LowSpeedPolar

    @property
    def size(self) -> int:
        """Number of designs."""
        return self.wing_loading_N_m2.size


def airplane(mass_kg, wing_loading_N_m2, aspect_ratio, wing_area_m2, span_m,
             engines: InstalledPropulsion, hl: HighLift, drag: CleanDrag,
             polar: LowSpeedPolar) -> Airplane:
    """The airplane at ``mass_kg`` [kg] (weight = mass x g0 [N]); the other arguments are the
    fields of :class:`Airplane` (wing loading [N m^-2], aspect ratio [-], wing area [m^2],
    span [m], and the engine, high-lift and drag stages). Source: Newton's second law."""
    return Airplane(mass_kg, mass_kg * G0, wing_loading_N_m2, aspect_ratio, wing_area_m2, span_m,
                    engines, hl, drag, polar)


def maintenance_index(ap: Airplane) -> np.ndarray:
    """Relative maintenance complexity of each airplane's high-lift system, per side.

    Parameters
    ----------
    ap : Airplane
        Span [m] and the high-lift option's item counts [-], support spacings [m] and span
        fractions [-].

    Returns
    -------
    ndarray
        Maintenance index [-].

    References
    ----------
    .. [1] The index of :func:`optimiser.physics.highlift.maintenance_index` (cited there).
    """
    hl = ap.high_lift
    return highlift.maintenance_index(ap.span_m, hl.flap_items, hl.flap_supports_min,
                                      hl.flap_support_spacing_m, hl.flapped_span_fraction,
                                      hl.slat_items, hl.slat_supports_min,
                                      hl.slat_support_spacing_m, hl.slat_span_fraction,
                                      hl.support_weight)
