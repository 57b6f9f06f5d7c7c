"""Payload-range of frozen designs: the four corner points of each airplane's chart.

For a fixed airplane (:class:`~optimiser.sizing.frozen.FrozenDesigns`) the corners are

``A``  maximum payload, zero range: the takeoff mass is empty + crew + payload + the fuel
       the mission needs at zero range (reserves, trapped fuel and the fixed segment
       fractions of start, taxi, takeoff, climb, descent and landing);
``B``  maximum payload and the fuel the maximum takeoff mass leaves (the range at maximum
       payload); when the tanks hold less, full tanks at a takeoff mass below the maximum;
``C``  full tanks (usable fuel volume x fuel density) and the payload the maximum takeoff
       mass then leaves; B and C coincide when the tanks hold less than the maximum takeoff
       mass leaves at maximum payload;
``D``  ferry: full tanks, zero payload, the takeoff mass below the maximum.

The maximum payload is the study's design payload (``[weights] payload``): the model has no
maximum zero-fuel mass or cabin limit beyond it. At every corner the mission's reserves and
trapped fuel are held back: the range is the one whose mission fuel
(:func:`optimiser.sizing.closure.mission_fuel`, Breguet cruise at the mid-cruise L/D with
segment fractions and reserves) equals the fuel on board, found by a vectorised root solve on
that same function, so the frozen analysis at a corner's mass and range balances its fuel
(``margin_mission_fuel`` 0). The mid-cruise L/D depends on the range, so the mission is not
exactly one closed Breguet form and no closed form is used.

The four corners are the usual payload-range construction (common practice); the masses
follow Roskam, "Airplane Design", Part I, ch. 2 (takeoff = empty + crew + payload + fuel).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from .solvers import secant_in_bracket
from .sizing.closure import mission_fuel
from .sizing.engines import CruiseConsumption
from .sizing.frozen import FUEL_BALANCE_TOLERANCE, FrozenDesigns, cruise_setup
from .sizing.inputs import at
from .sizing.layout import fuel_volume

CORNERS = ("A", "B", "C", "D")
"""The corner points, in order of range."""

CORNER_NAMES = {"A": "maximum payload, zero range",
                "B": "maximum payload, maximum takeoff mass",
                "C": "full tanks, maximum takeoff mass",
                "D": "ferry: full tanks, no payload"}
"""What each corner holds fixed (for tables and figure labels)."""

RANGE_LIMIT_M = 2e7
"""Longest range the root solve brackets [m] (the analysis's own upper range limit)."""

RANGE_RTOL = 1e-10
"""The range solve stops when the fuel imbalance (in millionths of the takeoff mass) is
below this share of the range in metres: 1e-10 of the mass at 1000 km (ours)."""

RANGE_ACCEPT = 1e-8
"""A range the solve leaves unconverged is still kept when its fuel imbalance is below this
share of the takeoff mass (1 % of the analysis's balance tolerance; ours)."""


def tank_capacity_kg(spec, frozen: FrozenDesigns) -> np.ndarray:
    """Usable fuel the tanks hold [kg]: the available volume of the fuel-volume constraint
    (:func:`optimiser.sizing.layout.fuel_volume`) x the study's fuel density."""
    tanks = fuel_volume(spec, frozen.wing_area_m2, frozen.span_m, np.zeros(frozen.size))
    return tanks.available_m3 * spec.weights.fuel_density_kg_m3


def _fuel_needed(spec, frozen, setup, takeoff_mass_kg, range_m, ix) -> np.ndarray:
    """Mission fuel [kg] (trip, reserve, trapped) of designs ``ix`` at their takeoff mass
    flying ``range_m`` [m]."""
    cons = setup.consumption
    fuel = mission_fuel(spec, takeoff_mass_kg[ix], frozen.wing_area_m2[ix], at(setup.k_cr, ix),
                        at(setup.cd0_cruise, ix),
                        CruiseConsumption(at(cons.propeller_efficiency, ix),
                                          at(cons.sfc_kg_J, ix), at(cons.tsfc_kg_N_s, ix)),
                        setup.air, range_m=range_m)
    return fuel.fuel_mass_kg


def zero_range_fuel_kg(spec, frozen: FrozenDesigns, takeoff_mass_kg) -> np.ndarray:
    """Mission fuel at zero range [kg]: reserves, trapped fuel and the segment fractions."""
    m = np.asarray(takeoff_mass_kg, dtype=float)
    setup = cruise_setup(spec, frozen, m)
    return _fuel_needed(spec, frozen, setup, m, 0.0, slice(None))


def range_for_fuel(spec, frozen: FrozenDesigns, takeoff_mass_kg, fuel_on_board_kg
                   ) -> np.ndarray:
    """Range [m] the fuel on board flies at a takeoff mass, reserves and trapped fuel held
    back, one per design.

    The root in range of ``mission_fuel(range) - fuel on board`` (increasing in range), by
    :func:`optimiser.solvers.secant_in_bracket` between zero and :data:`RANGE_LIMIT_M`. 0
    where the fuel on board is the zero-range fuel (within the analysis's balance
    tolerance); NaN where it is less, or more than the limit's."""
    m = np.asarray(takeoff_mass_kg, dtype=float)
    fuel = np.asarray(fuel_on_board_kg, dtype=float)
    n = frozen.size
    setup = cruise_setup(spec, frozen, m)

    def f(r, ix):  # fuel imbalance as parts per million of the takeoff mass
        return (_fuel_needed(spec, frozen, setup, m, r, ix) - fuel[ix]) / m[ix] * 1e6

    guess = np.full(n, min(float(spec.mission.range_m), 0.5 * RANGE_LIMIT_M))
    three = f(np.concatenate([np.zeros(n), np.full(n, RANGE_LIMIT_M), guess]),
              np.concatenate([np.arange(n)] * 3))
    f_zero, f_limit, f_guess = three[:n], three[n:2 * n], three[2 * n:]
    at_zero = np.abs(f_zero) <= FUEL_BALANCE_TOLERANCE * 1e6
    active = (f_zero < 0.0) & (f_limit > 0.0) & ~at_zero
    r, converged = secant_in_bracket(f, guess, f_guess, active, low=0.0, high=RANGE_LIMIT_M,
                                     f_low=f_zero, f_high=f_limit, x_prev=0.0, f_prev=f_zero,
                                     rtol=RANGE_RTOL, nan_low=-1.0, max_iterations=100)
    late = np.flatnonzero(active & ~converged)
    if late.size:  # kept where the imbalance is already far inside the tolerance
        converged[late] = np.abs(f(r[late], late)) <= RANGE_ACCEPT * 1e6
    return np.where(at_zero, 0.0, np.where(active & converged, r, np.nan))


def payload_range(spec, frozen: FrozenDesigns, flaps=None) -> pd.DataFrame:
    """The corners A-D of every design's payload-range chart, one row per corner and design.

    Columns: ``design`` (row of the designs table, from 1), ``flap``, ``corner``, ``range_km``,
    ``payload_kg``, ``fuel_on_board_kg``, ``takeoff_mass_kg``, ``max_takeoff_mass_kg``,
    ``tank_capacity_kg`` (see the module docstring)."""
    n = frozen.size
    crew, payload_max = spec.weights.crew_kg, float(spec.weights.payload_kg)
    m_max, m_e = frozen.max_takeoff_mass_kg, frozen.empty_mass_kg
    capacity = tank_capacity_kg(spec, frozen)
    useful = m_max - m_e - crew  # payload + fuel the maximum takeoff mass allows

    # A: zero range; its fuel depends on its takeoff mass (a few fixed-point steps, each a
    # contraction by about the fuel's share of the mass)
    fuel_a = zero_range_fuel_kg(spec, frozen, m_max)
    for _ in range(60):
        fuel_new = zero_range_fuel_kg(spec, frozen, m_e + crew + payload_max + fuel_a)
        done = np.all(np.abs(fuel_new - fuel_a) <= 1e-12 * m_max)
        fuel_a = fuel_new
        if done:
            break
    fuel_b = np.minimum(useful - payload_max, capacity)
    payload_c = np.clip(useful - capacity, 0.0, payload_max)
    fuel_c = np.minimum(capacity, useful - payload_c)
    fuel_d = np.minimum(capacity, useful)
    payloads = (np.full(n, payload_max), np.full(n, payload_max), payload_c, np.zeros(n))
    fuels = (fuel_a, fuel_b, fuel_c, fuel_d)
    masses = [m_e + crew + p + f for p, f in zip(payloads, fuels)]
    # B, C and D in one root solve (three copies of the designs)
    idx = np.concatenate([np.arange(n)] * 3)
    triple = FrozenDesigns(*(getattr(frozen, name)[idx] for name in (
        "wing_area_m2", "aspect_ratio", "rated", "high_lift_index", "empty_mass_kg",
        "max_takeoff_mass_kg")))
    ranges = range_for_fuel(spec, triple, np.concatenate(masses[1:]), np.concatenate(fuels[1:]))
    ranges_km = [np.zeros(n)] + [ranges[k * n:(k + 1) * n] / 1e3 for k in range(3)]
    flaps = np.asarray(flaps if flaps is not None else [""] * n, dtype=object)
    rows = []
    for k, corner in enumerate(CORNERS):
        rows.append(pd.DataFrame({
            "design": np.arange(1, n + 1), "flap": flaps, "corner": corner,
            "range_km": ranges_km[k], "payload_kg": payloads[k],
            "fuel_on_board_kg": fuels[k], "takeoff_mass_kg": masses[k],
            "max_takeoff_mass_kg": m_max, "tank_capacity_kg": capacity}))
    frame = pd.concat(rows, ignore_index=True)
    order = np.argsort(frame["design"].to_numpy() * 10
                       + frame["corner"].map(CORNERS.index).to_numpy(), kind="stable")
    return frame.iloc[order].reset_index(drop=True)

