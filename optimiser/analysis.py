"""Frozen designs as tables: read them, set an operating case, analyse them into a frame.

A frozen-designs table (CSV) gives each airplane as built, in the columns evaluate writes:
``flap``, ``wing_area_m2``, ``aspect_ratio`` (or ``span_m``), ``engine_power_kW``
(propeller studies) or ``engine_thrust_kN`` (turbofan), ``empty_mass_kg`` and
``max_takeoff_mass_kg`` (or ``takeoff_mass_kg``, the sized mass, taken as the maximum). A
table of evaluate's inputs (``wing_loading_N_m2``, the loading column, ``aspect_ratio``,
``flap``, as ``pick`` writes in ``design_input.csv``) is sized first and then frozen, so a
front row, an evaluate output and a pick all feed the analysis directly.

The frame holds the inputs of each airplane, every column of
:func:`optimiser.sizing.frozen.analyse_designs` and the verdict columns of evaluate
(``feasible``, ``limiting_constraint``, ``most_violated``).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from .errors import StudyError
from .evaluation import design_columns, design_overrides, size_frame
from .physics import G0
from .quantities import _Reader
from .sizing.frozen import (CONDITION_FIELDS, FrozenDesigns, analyse_designs,
                            analysis_checked_constraints, case_spec, frozen_designs,
                            frozen_from_sized, operating_masses)
from .sizing.inputs import CRUISE_ALTITUDE_MAX_M, MODEL_RANGES, range_text

FROZEN_COLUMNS = ("flap", "wing_area_m2", "aspect_ratio", "empty_mass_kg",
                  "max_takeoff_mass_kg")
"""The columns of a frozen-designs table besides the engine size (``aspect_ratio`` may be
``span_m``, ``max_takeoff_mass_kg`` may be ``takeoff_mass_kg``)."""


@dataclass(frozen=True)
class OperatingCase:
    """One operating case of a frozen design (SI; ``None``: the default).

    Masses [kg]: ``takeoff_mass_kg`` (default the design's maximum), ``payload_kg`` (default
    the study's), ``fuel_kg`` (default what the takeoff mass leaves). ``conditions``: keys of
    :data:`~optimiser.sizing.frozen.CONDITION_FIELDS` (default the study's own)."""

    takeoff_mass_kg: float | None = None
    payload_kg: float | None = None
    fuel_kg: float | None = None
    conditions: dict = field(default_factory=dict)

    def describe(self, study) -> str:
        """One line: what the case changes from the study's design case."""
        parts = []
        for key in ("takeoff_mass_kg", "payload_kg", "fuel_kg"):
            value = getattr(self, key)
            if value is not None:
                parts.append(f"{key[:-3].replace('_', ' ')} {value:g} kg")
        units = {"_m_s": "m/s", "_m": "m", "_K": "K"}
        for key, value in self.conditions.items():
            if value is None:
                continue
            unit = next((u for suffix, u in units.items() if key.endswith(suffix)), "")
            name = key[:len(key) - len(next((s for s in units if key.endswith(s)), ""))]
            name = name.replace("_", " ")
            parts.append(f"{name} {value:g} {unit}" if unit else f"{name} {value}")
        return "; ".join(parts) if parts else ("the design case (maximum takeoff mass, the "
                                               "study's payload, airfields and cruise)")


CASE_OPTIONS = {
    # option: (case field, SI unit for a quantity or None for text, lower, upper)
    "takeoff_mass": ("takeoff_mass_kg", "kg", 1.0, 1e6),
    "payload": ("payload_kg", "kg", 0.0, 1e6),
    "fuel": ("fuel_kg", "kg", 0.0, 1e6),
    "elevation": ("departure_elevation_m", "m", -500.0, 5000.0),
    "temperature_offset": ("departure_temperature_offset_K", "K", -60.0, 50.0),
    "runway": ("departure_runway", None, None, None),
    "field_length": ("departure_field_length_m", "m", 50.0, 6000.0),
    "destination_elevation": ("destination_elevation_m", "m", -500.0, 5000.0),
    "destination_temperature_offset": ("destination_temperature_offset_K", "K", -60.0, 50.0),
    "destination_runway": ("destination_runway", None, None, None),
    "landing_field_length": ("destination_field_length_m", "m", 50.0, 6000.0),
    "cruise_altitude": ("cruise_altitude_m", "m", 0.0, 15000.0),
    "cruise_speed": ("cruise_speed_m_s", "m/s", 10.0, 300.0),
    "cruise_temperature_offset": ("cruise_temperature_offset_K", "K", -60.0, 50.0),
    "range": ("range_m", "m", 1e3, 2e7),
    "headwind": ("departure_headwind_m_s", "m/s", -30.0, 30.0),
    "destination_headwind": ("destination_headwind_m_s", "m/s", -30.0, 30.0),
}
"""Operating-case options of ``optimiser analyse`` (``--takeoff-mass "2100 kg"``...), each
with its case field, SI unit and range (the study's own limits for the same fields; winds
along the runway within 30 m/s, :data:`~optimiser.sizing.inputs.OVERRIDE_RANGES`)."""

WIND_CONDITIONS = ("departure_headwind_m_s", "destination_headwind_m_s")
"""Case conditions that are no field of the study (sizing overrides): the wind components
along the runways [m s^-1], negative for a tailwind; the field lengths count 50 % of a
headwind and 150 % of a tailwind (:func:`optimiser.physics.performance.factored_wind`)."""


def read_case(options: dict) -> OperatingCase:
    """An :class:`OperatingCase` from option texts (``{"takeoff_mass": "4600 lb", ...}``,
    ``None`` for an option not given): each a quantity with its unit (pint), checked against
    :data:`CASE_OPTIONS`' range; raises :class:`StudyError` naming the option."""
    from .physics.performance import RUNWAY_SURFACES
    rd = _Reader("command line")
    masses, conditions = {}, {}
    for option, text in options.items():
        if text is None:
            continue
        key, unit, lo, hi = CASE_OPTIONS[option]
        where = "--" + option.replace("_", "-")
        if unit is None:
            value = rd.choice(where, text, tuple(RUNWAY_SURFACES))
        else:
            value = rd.quantity(where, text, unit, lo, hi)
        (masses if key in ("takeoff_mass_kg", "payload_kg", "fuel_kg") else conditions)[key] = value
    if len(masses) == 3:
        raise StudyError("command line: --takeoff-mass, --payload and --fuel: got all three; "
                         "expected at most two (the third follows from the empty mass)")
    return OperatingCase(conditions=conditions, **masses)


def _number_column(table, column, source, lo=0.0) -> np.ndarray:
    values = []
    for i, v in enumerate(table[column].tolist()):
        try:
            x = float(str(v).strip()) if not isinstance(v, (int, float)) else float(v)
        except ValueError:
            x = math.nan
        if not (math.isfinite(x) and x > lo):
            raise StudyError(f"{source}: row {i + 1}, column {column!r}: got {v!r}; expected a "
                             f"finite number greater than {lo:g}")
        values.append(x)
    return np.asarray(values, dtype=float)


def is_frozen_table(table: pd.DataFrame) -> bool:
    """True for a table of airplanes as built (it has ``wing_area_m2``), False for one of
    evaluate's inputs."""
    return "wing_area_m2" in [str(c).strip() for c in table.columns]


def frozen_from_table(study, table: pd.DataFrame, source: str = "designs"
                      ) -> tuple[FrozenDesigns, np.ndarray]:
    """The airplanes of a table (frozen columns, or evaluate's inputs sized first) and their
    flap names. Raises :class:`StudyError` (one line) naming the column, row and value."""
    from .designs import check_designs
    table = table.copy()
    table.columns = [str(c).strip() for c in table.columns]
    if len(table) == 0:
        raise StudyError(f"{source}: no design rows; expected at least one row")
    spec = study.spec
    names = spec.high_lift_names
    if not is_frozen_table(table):
        checked = check_designs(study, table, source, model_range=True)
        index = np.array([names.index(f) for f in checked["flap"]], dtype=int)
        sized = size_frame(study, checked["wing_loading_N_m2"].to_numpy(float),
                           checked[study.loading_column].to_numpy(float),
                           checked["aspect_ratio"].to_numpy(float), index,
                           design_overrides(study, checked))
        return (frozen_from_sized(sized, index, spec.uses_power_loading),
                sized["flap"].to_numpy(object))
    size_col = study.engine_size_column
    need = ["flap", "wing_area_m2", "aspect_ratio|span_m", size_col, "empty_mass_kg",
            "max_takeoff_mass_kg|takeoff_mass_kg"]
    for want in need:
        if not any(w in table.columns for w in want.split("|")):
            raise StudyError(f"{source}: missing column {want.replace('|', ' or ')!r}; "
                             "expected the columns of a frozen design: "
                             + ", ".join(n.replace("|", " or ") for n in need)
                             + " (or evaluate's inputs: " + ", ".join(design_columns(study))
                             + ")")
    flaps = [str(f).strip() for f in table["flap"].tolist()]
    for i, f in enumerate(flaps):
        if f not in names:
            raise StudyError(f"{source}: row {i + 1}, column 'flap': got {f!r}; expected one of "
                             "the study's catalogue: " + ", ".join(names))
    s = _number_column(table, "wing_area_m2", source)
    ar = (_number_column(table, "aspect_ratio", source) if "aspect_ratio" in table.columns
          else _number_column(table, "span_m", source) ** 2 / s)
    r = MODEL_RANGES["aspect_ratio"]
    for i, a in enumerate(ar):
        if not r.lower <= a <= r.upper:
            raise StudyError(f"{source}: row {i + 1}: aspect ratio {a:g}; expected a number "
                             + range_text("aspect_ratio"))
    rated = _number_column(table, size_col, source) * 1e3
    m_e = _number_column(table, "empty_mass_kg", source)
    m_col = "max_takeoff_mass_kg" if "max_takeoff_mass_kg" in table.columns else \
        "takeoff_mass_kg"
    m_max = _number_column(table, m_col, source)
    bad = np.nonzero(m_max <= m_e + spec.weights.crew_kg)[0]
    if bad.size:
        i = int(bad[0])
        raise StudyError(f"{source}: row {i + 1}, column {m_col!r}: got {m_max[i]:g} kg; "
                         f"expected more than the empty mass plus crew ({m_e[i]:g} + "
                         f"{spec.weights.crew_kg:g} kg)")
    index = np.array([names.index(f) for f in flaps], dtype=int)
    altitude = None  # a design's own cruise altitude, where the table gives one
    if "cruise_altitude_m" in table.columns:
        altitude = _number_column(table, "cruise_altitude_m", source)
        bad = np.nonzero(altitude > CRUISE_ALTITUDE_MAX_M)[0]
        if bad.size:
            i = int(bad[0])
            raise StudyError(f"{source}: row {i + 1}, column 'cruise_altitude_m': got "
                             f"{altitude[i]:g}; expected a cruise pressure altitude in metres "
                             f"up to {CRUISE_ALTITUDE_MAX_M:g}")
    return (frozen_designs(s, ar, rated, index, m_e, m_max, altitude),
            np.asarray(flaps, dtype=object))


def analyse(study, frozen: FrozenDesigns, flaps, case: OperatingCase = OperatingCase(),
            overrides=None) -> pd.DataFrame:
    """The frame of frozen designs at one operating case: the airplane (flap, wing area,
    aspect ratio, engine size, empty and maximum takeoff mass), every analysed number and
    margin, ``feasible``, ``limiting_constraint`` and ``most_violated``."""
    conditions = dict(case.conditions)
    wind = {k: conditions.pop(k, None) for k in WIND_CONDITIONS}
    wind = {k: v for k, v in wind.items() if v is not None}
    if wind:
        overrides = {**{k: np.full(frozen.size, float(v)) for k, v in wind.items()},
                     **(overrides or {})}
    try:
        spec = case_spec(study.spec, **conditions)
    except KeyError as exc:  # a programming error: the options are checked by read_case
        raise StudyError(f"operating case: unknown condition {exc}; expected one of: "
                         + ", ".join(CONDITION_FIELDS)) from None
    masses = operating_masses(spec, frozen, case.takeoff_mass_kg, case.payload_kg, case.fuel_kg)
    h_case = case.conditions.get("cruise_altitude_m")
    if h_case is not None and frozen.cruise_altitude_m is not None:
        # the case's cruise altitude, in place of each design's own
        overrides = {"cruise_altitude_m": np.full(frozen.size, float(h_case)), **(overrides or {})}
    out = analyse_designs(spec, frozen, masses, overrides)
    names = analysis_checked_constraints(spec, out)
    feasible = out.pop("feasible")
    limiting = np.asarray(names, dtype=object)[out.pop("limiting_index")]
    weight = masses.takeoff_mass_kg * G0
    columns = {"flap": np.asarray(flaps, dtype=object),
               "wing_loading_N_m2": weight / frozen.wing_area_m2,
               study.loading_column: (frozen.rated / weight if not spec.uses_power_loading
                                      else weight / (frozen.rated / 1e3)),
               "aspect_ratio": frozen.aspect_ratio}
    columns.update(out)
    columns["feasible"] = feasible
    columns["limiting_constraint"] = limiting
    columns["most_violated"] = np.where(feasible, "", limiting).astype(object)
    return pd.DataFrame(columns)


MAX_TABLE_ROWS = 1_000_000
"""Most rows ``optimiser analyse`` reads from one file (each is analysed at once)."""


def read_table(study, path) -> pd.DataFrame:
    """The rows of a CSV table of frozen designs or of evaluate's inputs (every cell as
    text; UTF-8, one header). Raises :class:`StudyError` (one line naming the file)."""
    from .designs import _csv_rows
    rows = _csv_rows(study, path)
    header = next(rows, None)
    if header is None:
        raise StudyError(f"{path}: the file is empty; expected a header and design rows")
    header = [h.strip() for h in header]
    body = []
    for r in rows:
        if len(r) != len(header):
            raise StudyError(f"{path}: row {len(body) + 1} has {len(r)} cells; expected "
                             f"{len(header)} like the header")
        body.append(r)
        if len(body) > MAX_TABLE_ROWS:
            raise StudyError(f"{path}: more than {MAX_TABLE_ROWS} rows; expected at most "
                             f"{MAX_TABLE_ROWS} (split the file)")
    repeated = sorted({c for c in header if header.count(c) > 1})
    if repeated:
        raise StudyError(f"{path}: column {repeated[0]!r} appears {header.count(repeated[0])} "
                         "times; expected each column once")
    return pd.DataFrame(body, columns=header, dtype=object)
