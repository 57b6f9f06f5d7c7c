"""Constraints of a study and the margin of each design against them."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..columns import CONSTRAINT_LABELS  # noqa: F401  (re-exported from the results schema)
from ..physics import G0, performance
from ..spec import AircraftSpec


TRANSPORT_CLIMB_CHECKS = {"first_segment_climb": "first_segment",
                          "final_takeoff_climb": "final_takeoff", "approach_climb": "approach",
                          "landing_climb": "landing"}
"""Part 25 climb constraints (beside the second segment, ``oei_climb_gradient``) and their
segment in :data:`optimiser.physics.performance.PART25_CLIMB_SEGMENTS`."""


OUTSIDE_MODEL_RANGE = "outside_model_range"
"""The constraint a batch gains when it holds a design given outside the model's valid
ranges (:data:`~optimiser.sizing.inputs.MODEL_RANGES`): checked last, it is the limiting
constraint of every such design. Not in :func:`active_constraints`: the study refuses
variable bounds outside the ranges, so a search never meets it and its files keep their
columns."""


def active_constraints(spec: AircraftSpec) -> tuple[str, ...]:
    """Names of the constraints that apply to this study, in a fixed order (a batch holding
    a design outside the model's ranges adds :data:`OUTSIDE_MODEL_RANGE` after them)."""
    names = ["mass_closure"]
    if np.isfinite(spec.requirements.max_takeoff_mass_kg):
        names.append("takeoff_mass_limit")
    names += ["runway_acceleration", "stall_speed", "takeoff_field", "landing_field",
              "climb_rate"]
    if spec.certification.aeo_climb_gradient_min > 0:
        names.append("climb_gradient")
    if spec.propulsion.engine_count > 1 and spec.certification.oei_climb_gradient_min > 0:
        names.append("oei_climb_gradient")
    skipped = {name for name, _ in spec.requirements.skip_checks}
    if spec.certification.basis == "part25" and spec.propulsion.engine_count > 1:
        names += [c for c in TRANSPORT_CLIMB_CHECKS if c not in skipped]
    names += ["cruise_speed", "service_ceiling"]
    if spec.cruise_altitude_searched:
        names.append("cruise_ceiling")
    names.append("fuel_volume")
    if spec.requirements.max_span_m is not None:
        names.append("span")
    return tuple(names)


def required_margins(spec: AircraftSpec, constraints=None) -> np.ndarray:
    """The design margin the study requires on each active constraint, in the order of
    :func:`active_constraints` (or of ``constraints``) [-] (``[requirements] margins``; 0
    where none is given).

    A design meets a constraint when its margin is at least the required one; the margin
    columns themselves stay the raw margins."""
    required = dict(spec.requirements.margins)
    names = active_constraints(spec) if constraints is None else constraints
    return np.array([float(required.get(c, 0.0)) for c in names])


@dataclass(frozen=True, slots=True)
class Margins:
    """Margins of the active constraints (positive = met, as a fraction of the limit)."""

    names: tuple[str, ...]  # active_constraints(spec)
    matrix: np.ndarray  # (designs, constraints) [-], raw margins, NaN/inf -> -1e3/1e3
    feasible: np.ndarray  # bool, every margin >= its required margin
    limiting_index: np.ndarray  # index into names of the smallest margin beyond the required
    # one (0 when the mass does not close)


def constraint_margins(spec: AircraftSpec, *, closure_margin, takeoff_mass_kg,
                       min_runway_acceleration_m_s2, stall_speed_m_s, takeoff_field_required_m,
                       landing_field_required_m, climb_rate_m_s, climb_gradient,
                       climb_gradient_required, oei_climb_gradient, transport_climb,
                       cruise_speed_m_s, service_ceiling_m, fuel_volume_required_m3,
                       fuel_volume_available_m3, span_m, model_range_margin=None,
                       constraints=None, extra_margins=None,
                       exempt_when_met=0, cruise_altitude_m=None) -> Margins:
    """Margin of every active constraint: ``1 - value / limit`` for upper limits and
    ``value / limit - 1`` for lower limits.

    Parameters
    ----------
    spec : AircraftSpec
        Resolved study: requirements, certification minima, field lengths available [m].
    closure_margin : ndarray
        Mass-closure margin from the closure stage. [-]
    takeoff_mass_kg : ndarray
        [kg]
    min_runway_acceleration_m_s2 : ndarray
        [m s^-2]
    stall_speed_m_s : ndarray
        Landing configuration, sea level. [m s^-1]
    takeoff_field_required_m, landing_field_required_m : ndarray
        Field lengths the rules require. [m]
    climb_rate_m_s : ndarray
        [m s^-1]
    climb_gradient, climb_gradient_required, oei_climb_gradient : ndarray
        All-engines gradient, its minimum per design, the one-engine-out gradient. [-]
    transport_climb : TransportClimb
        Part 25 segment gradients (first segment, final takeoff, approach, landing). [-]
    cruise_speed_m_s : ndarray
        Highest level speed. [m s^-1]
    service_ceiling_m : ndarray
        [m]
    fuel_volume_required_m3, fuel_volume_available_m3 : ndarray
        Volume of the fuel carried and the usable tank volume. [m^3]
    model_range_margin : ndarray, optional
        How far inside the model's valid ranges each design was given
        (:class:`~optimiser.sizing.inputs.DesignBatch`) [-]. Where any is negative, the
        constraint ``outside_model_range`` is added last, with this margin, and is the
        limiting constraint of each design outside (before ``mass_closure``).
    span_m : ndarray
        Wing span [m] (checked against ``[requirements] max_span`` when the study sets one).
    cruise_altitude_m : ndarray, optional
        Each design's cruise altitude [m] where the study searches it (default the study's):
        ``cruise_ceiling`` is ``service ceiling / cruise altitude - 1``.
    constraints : tuple of str, optional
        The constraints checked, in order (default :func:`active_constraints`); the first
        one's margin is ``closure_margin``, and a design whose first margin is negative has it
        as its limiting constraint.
    extra_margins : dict of str -> ndarray, optional
        Margins [-] of constraints the model does not compute here (a frozen design's
        ``max_takeoff_mass``).
    exempt_when_met : int, default 0
        How many leading constraints are named limiting only where one of them is violated
        (then the most violated of them): a frozen design's fuel on board and maximum
        takeoff mass, both at zero margin by construction at its design case, would
        otherwise name themselves limiting for every design analysed there.

    Returns
    -------
    Margins
        Raw margin matrix [-]; feasibility and the limiting constraint of each design judged
        against the required margins (:func:`required_margins`).

    References
    ----------
    Common practice: constraints normalised by their limits, so that violations have
    similar sizes.
    """
    rq, cert = spec.requirements, spec.certification
    margins = {
        "mass_closure": closure_margin,
        "takeoff_mass_limit": 1.0 - takeoff_mass_kg / rq.max_takeoff_mass_kg,
        "runway_acceleration": min_runway_acceleration_m_s2 / G0,
        "stall_speed": 1.0 - stall_speed_m_s / rq.stall_speed_m_s,
        "takeoff_field": 1.0 - takeoff_field_required_m / spec.departure.field_length_m,
        "landing_field": 1.0 - landing_field_required_m / spec.destination.field_length_m,
        "climb_rate": climb_rate_m_s / rq.climb_rate_m_s - 1.0,
        "climb_gradient": climb_gradient / np.maximum(climb_gradient_required, 1e-9) - 1.0,
        "oei_climb_gradient": oei_climb_gradient / max(cert.oei_climb_gradient_min, 1e-9) - 1.0,
        "cruise_speed": cruise_speed_m_s / spec.mission.cruise_speed_m_s - 1.0,
        "service_ceiling": service_ceiling_m / rq.service_ceiling_m - 1.0,
        "fuel_volume": 1.0 - fuel_volume_required_m3 / np.maximum(fuel_volume_available_m3,
                                                                 1e-9),
    }
    if rq.max_span_m is not None:
        margins["span"] = 1.0 - span_m / rq.max_span_m
    if spec.cruise_altitude_searched:
        h = spec.mission.cruise_altitude_m if cruise_altitude_m is None else cruise_altitude_m
        h = np.broadcast_to(np.asarray(h, dtype=float), np.shape(service_ceiling_m))
        with np.errstate(divide="ignore"):  # sea-level cruise: always under the ceiling
            margins["cruise_ceiling"] = np.where(h > 0.0, service_ceiling_m / h - 1.0, 1e3)
    names = active_constraints(spec) if constraints is None else tuple(constraints)
    margins[names[0]] = closure_margin
    margins.update(extra_margins or {})
    outside = None
    if model_range_margin is not None and not np.all(np.asarray(model_range_margin) >= 0.0):
        margins[OUTSIDE_MODEL_RANGE] = np.broadcast_to(model_range_margin, np.shape(closure_margin))
        names += (OUTSIDE_MODEL_RANGE,)
        outside = ~(np.asarray(margins[OUTSIDE_MODEL_RANGE]) >= 0.0)
    for name, segment in TRANSPORT_CLIMB_CHECKS.items():
        if name in names:
            margins[name] = transport_climb_margin(
                getattr(transport_climb, segment),
                performance.part25_climb_gradient_min(segment, spec.propulsion.engine_count))
    matrix = np.column_stack([margins[c] for c in names])
    matrix = np.nan_to_num(matrix, nan=-1e3, posinf=1e3, neginf=-1e3)
    required = required_margins(spec, names)  # none can be required on outside_model_range
    beyond = matrix - required if required.any() else matrix  # no copy when none is required
    feasible = np.all(beyond >= 0.0, axis=1)
    # a design whose mass does not close is reported as such: its other margins were computed
    # at the capped mass and mean little (mass_closure is always the first constraint; for a
    # frozen design the first is the fuel on board, which likewise decides the rest)
    if exempt_when_met and len(names) > exempt_when_met:
        k = exempt_when_met
        lead = beyond[:, :k]
        limiting = np.where(np.any(lead < 0.0, axis=1), np.argmin(lead, axis=1),
                            k + np.argmin(beyond[:, k:], axis=1))
    else:
        limiting = np.where(matrix[:, 0] < 0.0, 0, np.argmin(beyond, axis=1))
    if outside is not None:  # sized at the clipped values: that is what limits it
        limiting = np.where(outside, len(names) - 1, limiting)
    return Margins(names, matrix, feasible, limiting)


TWIN_FIRST_SEGMENT_SCALE = 0.005
"""Gradient that stands for one unit of margin where the rule asks only for a positive
gradient (twins' first segment, 14 CFR 25.121(a)) [-] (common practice: the smallest
positive minimum of the segment, 0.5 %, keeps the margin's scale like the others')."""


def transport_climb_margin(gradient, minimum) -> np.ndarray:
    """Margin of a Part 25 climb gradient [-]: ``gradient / minimum - 1``, or, where the
    minimum is 0 (a positive gradient required), ``gradient / 0.5 %`` (see
    :data:`TWIN_FIRST_SEGMENT_SCALE`). Source: 14 CFR 25.121(a) for the positive gradient."""
    if minimum > 0.0:
        return np.asarray(gradient, dtype=float) / minimum - 1.0
    return np.asarray(gradient, dtype=float) / TWIN_FIRST_SEGMENT_SCALE
