"""Units of the reader's choice: SI or US customary, for what a person reads.

Every number the model computes, every CSV file and every JSON file stays SI (machines read
them unchanged). Only console summaries, sheets and figures are converted, through
:func:`to_display` and :func:`display_label`, when the reader asks for ``us``
(``optimiser --units us ...`` or ``OPTIMISER_UNITS=us``). In ``si`` every value is passed
through untouched, so SI output is bit-identical to output without this module.

Exact definitions (NIST Special Publication 811 (2008), "Guide for the Use of the
International System of Units", Appendix B, and the international yard and pound agreement
of 1959; from memory):

- 1 ft = 0.3048 m; 1 in = 0.0254 m
- 1 lb = 0.45359237 kg; standard gravity g0 = 9.80665 m/s^2; 1 lbf = 0.45359237 x 9.80665 N
- 1 nmi = 1852 m; 1 kn = 1852/3600 m/s
- 1 hp = 550 ft lbf/s (= 745.69987158227022 W)
- 1 US gal = 231 in^3 exactly

Temperatures: a temperature difference in K stays K (``"K"``, e.g. a deviation from the
standard atmosphere); an absolute temperature (unit ``"K abs"``) is shown in degF with the
offset, degF = K x 9/5 - 459.67. Dimensionless numbers, names, flags and angles are unchanged.

Standard library and numpy only (a leaf module): any layer may import it.
"""

from __future__ import annotations

import contextlib
import contextvars
import os
from dataclasses import dataclass

import numpy as np

from .columns import BY_NAME, display_unit
from .errors import UsageError

SI = "si"
US = "us"
SYSTEMS = (SI, US)
"""The unit systems a reader may choose."""

ENV_VAR = "OPTIMISER_UNITS"
"""Environment variable giving the unit system when ``--units`` is not given."""

# exact definitions: NIST SP 811 (2008) Appendix B; 1959 yard and pound agreement (from memory)
FOOT_M = 0.3048
INCH_M = 0.0254
POUND_KG = 0.45359237
STANDARD_GRAVITY_M_S2 = 9.80665
POUND_FORCE_N = POUND_KG * STANDARD_GRAVITY_M_S2          # 4.4482216152605 N
NAUTICAL_MILE_M = 1852.0
KNOT_M_S = 1852.0 / 3600.0
HORSEPOWER_W = 550.0 * FOOT_M * POUND_FORCE_N             # 745.69987158227022 W
US_GALLON_M3 = 231.0 * INCH_M ** 3                        # 3.785411784e-3 m^3
FOOT_PER_MINUTE_M_S = FOOT_M / 60.0


@dataclass(frozen=True)
class Conversion:
    """How one SI unit is shown in US customary units: ``shown = si / factor + offset``.

    ``unit`` is ASCII like :attr:`optimiser.columns.Column.unit` (``"lbf/ft^2"``);
    ``factor`` is the SI value of one shown unit (1 lbf/ft^2 = 47.880... N/m^2)."""

    unit: str
    factor: float
    offset: float = 0.0


UNCHANGED = ("", "-", "deg", "rad", "K", "s")
"""Units shown as they are in every system (names, flags, dimensionless numbers, angles,
temperature differences and times)."""

US_CONVERSIONS = {
    "N/m^2": Conversion("lbf/ft^2", POUND_FORCE_N / FOOT_M ** 2),   # wing loading
    "N/kW": Conversion("lbf/hp", POUND_FORCE_N / (HORSEPOWER_W / 1000.0)),  # weight / power
    "kg": Conversion("lb", POUND_KG),
    "m": Conversion("ft", FOOT_M),
    "m^2": Conversion("ft^2", FOOT_M ** 2),
    "m^3": Conversion("US gal", US_GALLON_M3),
    "kg/m^3": Conversion("lb/ft^3", POUND_KG / FOOT_M ** 3),
    "m/s": Conversion("kn", KNOT_M_S),
    "m/s^2": Conversion("ft/s^2", FOOT_M),
    "N": Conversion("lbf", POUND_FORCE_N),
    "kN": Conversion("lbf", POUND_FORCE_N / 1000.0),
    "kW": Conversion("hp", HORSEPOWER_W / 1000.0),
    "km": Conversion("nmi", NAUTICAL_MILE_M / 1000.0),  # ranges (payload-range corners)
    "kg/(N s)": Conversion("lb/lbf/h", POUND_KG / (POUND_FORCE_N * 3600.0)),  # jet TSFC
    "K abs": Conversion("degF", 5.0 / 9.0, -459.67),   # absolute temperature, with offset
    # the study's own engine figures (``optimiser check``, the report's study table)
    "kg/kW": Conversion("lb/hp", POUND_KG / (HORSEPOWER_W / 1000.0)),   # specific mass
    "kg/J": Conversion("lb/hp/h", POUND_KG / (HORSEPOWER_W * 3600.0)),  # shaft-engine SFC
    "kg/N/s": Conversion("lb/lbf/h", POUND_KG / (POUND_FORCE_N * 3600.0)),  # fuel per impulse
}
"""SI unit (as written in :mod:`optimiser.columns`) -> its US customary display."""

US_COLUMN_CONVERSIONS = {
    "climb_rate_m_s": Conversion("ft/min", FOOT_PER_MINUTE_M_S),
}
"""Columns shown in another US unit than their SI unit's default (a climb rate in ft/min,
not kn)."""

RANGE_CONVERSION = Conversion("nmi", NAUTICAL_MILE_M)
"""A range or mission distance in metres, shown in nautical miles (:func:`to_display` with
``quantity="range"``)."""


def parse_system(text, source: str = "--units") -> str:
    """``"si"`` or ``"us"`` from what a user typed (case and spaces ignored); anything else
    is a :class:`~optimiser.errors.UsageError` naming ``source``."""
    value = str(text).strip().lower()
    if value not in SYSTEMS:
        raise UsageError(f"{source}: got {text!r}; expected si or us")
    return value


def system_from(option=None, environ=None) -> str:
    """The unit system: the ``--units`` option when given, else ``OPTIMISER_UNITS``, else SI."""
    if option is not None:
        return parse_system(option, "--units")
    env = os.environ if environ is None else environ
    given = env.get(ENV_VAR)
    if given is None or given == "":
        return SI
    return parse_system(given, ENV_VAR)


_SYSTEM = contextvars.ContextVar("optimiser_display_units", default=SI)
"""The reader's unit system for deep report code (sheets, figures) that the command line
does not reach with an argument; set only by :func:`using`."""


def current_system() -> str:
    """The unit system in force (:func:`using`; SI by default)."""
    return _SYSTEM.get()


@contextlib.contextmanager
def using(system: str):
    """Show numbers in ``system`` inside the ``with`` block (the command line wraps a
    command in it)."""
    token = _SYSTEM.set(parse_system(system))
    try:
        yield system
    finally:
        _SYSTEM.reset(token)


def resolve(system=None) -> str:
    """``system`` when given, else :func:`current_system`."""
    return current_system() if system is None else parse_system(system)


def conversion(unit: str, system=None, column: str | None = None,
               quantity: str | None = None) -> Conversion | None:
    """The conversion of ``unit`` (of ``column``, if given) in ``system``; None when the
    number is shown as it is (SI, or a unit in :data:`UNCHANGED`)."""
    if resolve(system) == SI:
        return None
    if quantity == "range" and unit == "m":
        return RANGE_CONVERSION
    if column is not None and column in US_COLUMN_CONVERSIONS:
        return US_COLUMN_CONVERSIONS[column]
    if unit in UNCHANGED:
        return None
    try:
        return US_CONVERSIONS[unit]
    except KeyError:
        raise ValueError(f"no US customary display for unit {unit!r}") from None


def to_display(values, unit: str, system=None, column: str | None = None,
               quantity: str | None = None):
    """``(values, display_unit)``: SI ``values`` in ``unit`` as the reader sees them.

    In SI the values come back as the very same object, with ``unit``. In US customary a
    scalar comes back as a float and anything else as a float numpy array; ``display_unit``
    is ASCII (``"lbf/ft^2"``; :func:`optimiser.columns.display_unit` prettifies it)."""
    c = conversion(unit, system, column, quantity)
    if c is None:
        return values, unit
    if np.ndim(values) == 0:
        return float(values) / c.factor + c.offset, c.unit
    return np.asarray(values, dtype=float) / c.factor + c.offset, c.unit


def from_display(values, unit: str, system=None, column: str | None = None,
                 quantity: str | None = None):
    """The inverse of :func:`to_display`: displayed ``values`` back to SI in ``unit``."""
    c = conversion(unit, system, column, quantity)
    if c is None:
        return values
    if np.ndim(values) == 0:
        return (float(values) - c.offset) * c.factor
    return (np.asarray(values, dtype=float) - c.offset) * c.factor


def column_display(column: str, values, system=None):
    """``(values, sheet unit)`` of a column of :mod:`optimiser.columns` in ``system``: the
    unit as sheets show it (``"lbf/ft²"``, ``""`` for a dimensionless number). An unknown
    column is passed through with no unit."""
    c = BY_NAME.get(column)
    if c is None:
        return values, ""
    shown, unit = to_display(values, c.unit, system, column)
    return shown, display_unit(unit)


def column_values(column: str, values, system=None):
    """The values of :func:`column_display` alone: what a figure plots (SI: the very same
    object)."""
    return column_display(column, values, system)[0]


def display_label(column_name: str, system=None) -> str:
    """Axis label of a column in ``system``: the Column's label with its unit in brackets
    swapped for the displayed one (``"wing loading [lbf/ft²]"``). SI: the label as it is;
    an unknown column is labelled by its name."""
    c = BY_NAME.get(column_name)
    if c is None:
        return column_name
    conv = conversion(c.unit, system, column_name)
    if conv is None:
        return c.label
    si_part = f"[{display_unit(c.unit) or '-'}]"
    us_part = f"[{display_unit(conv.unit)}]"
    if c.label.endswith(si_part):
        return c.label[: -len(si_part)] + us_part
    return f"{c.label} {us_part}"


def heading(column_name: str, system=None) -> str:
    """Table heading ``"<plain name> [<unit>]"`` in ``system`` (SI: as
    :func:`optimiser.columns.heading`)."""
    from .columns import heading as si_heading, short_and_unit
    if resolve(system) == SI or column_name not in BY_NAME:
        return si_heading(column_name)
    name, _ = short_and_unit(column_name)
    _, unit = column_display(column_name, 0.0, system)
    return f"{name} [{unit or '-'}]"


def table_cells(column_name: str, value, system=None):
    """``(heading, value)`` of one column of a console table: in SI the file's own column
    name and the value as it is (the console names columns the way the files do); in US
    customary the plain name with the display unit, and the converted value."""
    if resolve(system) == SI:
        return column_name, value
    shown, _ = column_display(column_name, value, system)
    return heading(column_name, system), shown
