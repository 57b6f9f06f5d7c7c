"""Reading values out of a parsed study file: numbers, choices, tables and quantities with
units (pint), each failure one :class:`~optimiser.errors.StudyError` line naming the file, the
key, what was given and what was expected."""

from __future__ import annotations

import difflib
import math
import re

from .errors import StudyError

_UREG = None


def units():
    """The shared pint UnitRegistry (created on first use)."""
    global _UREG
    if _UREG is None:
        import pint
        _UREG = pint.UnitRegistry()
    return _UREG


def _suggest(word, choices):
    close = difflib.get_close_matches(word, list(choices), n=1)
    return f" (did you mean {close[0]!r}?)" if close else ""


class _Reader:
    """Reads values out of the parsed TOML, with the file name in every message."""

    def __init__(self, path: str):
        self.path = path

    def fail(self, where: str, message: str):
        raise StudyError(f"{self.path}: {where}: {message}")

    def number(self, where, value, lo=None, hi=None, lo_open=False, integer=False):
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            kind = "a string" if isinstance(value, str) else type(value).__name__
            extra = " (drop the quotes and any unit: this value is dimensionless)" \
                if isinstance(value, str) else ""
            self.fail(where, f"got {value!r} ({kind}); expected a number{extra}")
        if integer and not isinstance(value, int):
            self.fail(where, f"got {value!r}; expected a whole number")
        try:
            finite = math.isfinite(value)
        except OverflowError:  # an integer too large for a float
            finite = False
            value = float("inf") if value > 0 else float("-inf")
        if not finite:
            self.fail(where, f"got {value!r}; expected a finite number")
        self._range(where, float(value), lo, hi, lo_open, "")
        return int(value) if integer else float(value)

    def _range(self, where, x, lo, hi, lo_open, unit):
        u = f" {unit}" if unit else ""
        if lo is not None and (x < lo or (lo_open and x <= lo)):
            rel = "greater than" if lo_open else "at least"
            self.fail(where, f"got {x:g}{u}; expected {rel} {lo:g}{u}"
                      + (f" and at most {hi:g}{u}" if hi is not None else ""))
        if hi is not None and x > hi:
            self.fail(where, f"got {x:g}{u}; expected at most {hi:g}{u}")

    def quantity(self, where, value, unit, lo=None, hi=None, lo_open=False):
        ureg = units()
        example = {"m": '"600 m"', "m/s": '"61 kn"', "kg": '"400 kg"', "s": '"45 min"',
                   "K": '"15 K"', "rad": '"3 deg"', "kg/J": '"0.45 lb/hp/hour"',
                   "kg/N/s": '"0.7 lb/lbf/hour"', "kg/kW": '"1.3 kg/kW"',
                   "N/m^2": '"1200 N/m^2"', "N/kW": '"80 N/kW"'}.get(unit, f'"1 {unit}"')
        want = ureg.Quantity(1.0, unit)
        dim_name = _dimension_name(unit)
        if isinstance(value, bool) or not isinstance(value, (str, int, float)):
            self.fail(where, f"got {value!r}; expected {dim_name} as a string with its unit, "
                      f"e.g. {example}")
        if not isinstance(value, str):
            self.fail(where, f"got {value!r} (a bare number); expected {dim_name} with its unit, "
                      f"e.g. {example}")
        try:
            if _UNSAFE_POWER.search(value):  # pint evaluates 9**9**9 exactly: refuse it
                raise ValueError("exponent")
            q = ureg.Quantity(value)
        except Exception as exc:
            if "offset" in type(exc).__name__.lower() or "offset" in str(exc).lower():
                self.fail(where, f"got {value!r}, an absolute temperature; expected a "
                          "temperature difference, e.g. \"15 K\" or \"15 delta_degC\"")
            self.fail(where, f"got {value!r}, which is not a quantity with a known unit; "
                      f"expected {dim_name}, e.g. {example}")
        if isinstance(getattr(q, "magnitude", None), int):  # pint keeps "1000...0 ft" exact
            try:
                q = ureg.Quantity(float(q.magnitude), q.units)
            except OverflowError:
                self.fail(where, f"got {value!r}; expected a finite value")
        if not hasattr(q, "units") or q.unitless:
            self.fail(where, f"got {value!r} (no unit); expected {dim_name} with its unit, "
                      f"e.g. {example}")
        if unit == "K" and not q._ok_for_muldiv():
            self.fail(where, f"got {value!r}, an absolute temperature; expected a "
                      "temperature difference, e.g. \"15 K\" or \"15 delta_degC\"")
        if q.dimensionality != want.dimensionality:
            self.fail(where, f"got {value!r}, which is not {dim_name}; expected {dim_name}, "
                      f"e.g. {example}" + _force_hint(q, want))
        try:
            x = float(q.to(unit).magnitude)
        except OverflowError:  # an exact integer too large for a float
            x = math.inf
        if not math.isfinite(x):
            self.fail(where, f"got {value!r}; expected a finite value")
        self._range(where, x, lo, hi, lo_open, unit)
        return x

    def choice(self, where, value, choices):
        if not isinstance(value, str) or value not in choices:
            self.fail(where, f"got {value!r}; expected one of: "
                      + ", ".join(repr(c) for c in choices)
                      + (_suggest(value, choices) if isinstance(value, str) else ""))
        return value

    def table(self, where, value):
        if not isinstance(value, dict):
            self.fail(where, f"got {value!r}; expected a table ([{where.strip('[]')}])")
        return value


_UNSAFE_POWER = re.compile(r"[\d.)]\s*(\*\*|\^)|(\*\*|\^)(?!\s*[-+]?\d{1,2}(\.\d+)?(?![\d.]|\s*(\*\*|\^)))")
"""A power of a number, or a power that is not a plain small exponent ("m^2", "s**-1")."""


_DIMENSIONS = {"m": "a length", "m/s": "a speed", "kg": "a mass", "s": "a time",
               "K": "a temperature difference", "rad": "an angle",
               "kg/J": "a power-specific fuel consumption",
               "kg/N/s": "a thrust-specific fuel consumption",
               "kg/kW": "a mass per power", "N/m^2": "a wing loading (force per area)",
               "N/kW": "a power loading (force per power)"}


def _force_hint(q, want) -> str:
    """A hint when a mass was written where a force is needed ('lb/ft^2' for 'lbf/ft^2')."""
    if (q * units().standard_gravity).dimensionality != want.dimensionality:
        return ""
    per = ("area" if want.dimensionality == units().Quantity(1, "N/m^2").dimensionality else
           "power" if want.dimensionality == units().Quantity(1, "N/kW").dimensionality else "")
    examples = {"area": "lbf/ft^2 or kgf/m^2", "power": "lbf/hp or kgf/kW"}.get(per, "lbf or kgf")
    return (f" (a mass per {per or 'unit'} was given; a force is needed: write pound-force or "
            f"kilogram-force, e.g. {examples})")


def _dimension_name(unit):
    return _DIMENSIONS.get(unit, f"a quantity in {unit}")
