"""Numbers as an engineer writes them in a record: as many digits as the tolerance supports.

The record's JSON keeps every value at full precision; the page shows it rounded:

- a standard result to the decimals its verify tolerance supports: the smallest number of
  decimals ``d`` with half a unit in the last place no more than the tolerance,
  ``0.5 * 10**-d <= max(rel_tol * |value|, abs_tol)``, so the shown value differs from the full
  value by no more than ``verify`` allows (trailing zeros dropped; scientific notation below
  1e-4 and from 1e15);
- an angle within noise of zero as ``0`` (below 1e-9 deg, 1e-11 rad, 1e-6 arcsec: common
  practice for double-precision angle arithmetic, whose rounding error is near 1e-13 deg);
- a date more than three calendar years from the record's build date to the day, not the
  second (a prediction that far ahead is not good to the second): the calendar day as the
  date is written (an event at 23:59:59.9 UTC stays on its day), with the three years counted
  by the calendar in exact integer time (``datetime``), never through float days;
- a case-file value of the inputs table as written (``display_input``), unset or an empty list
  as "—": a case that leaves a list out and one that writes ``[]`` show the same.

The template and ``verify`` both format through these functions: a value is compared as it
is displayed, by one rule.
"""

from __future__ import annotations

import math
from datetime import datetime
from typing import Any

from .ledger_parts import parse_utc_stamp

__all__ = [
    "UNSET",
    "display_input",
    "display_number",
    "display_result",
    "display_value",
    "noise_floor",
]

_ANGLE_NOISE = {"deg": 1e-9, "rad": 1e-11, "arcsec": 1e-6}
_FAR_YEARS = 3
UNSET = "—"


def noise_floor(unit: str) -> float:
    """Below this magnitude a value in ``unit`` is zero within noise (0 when not an angle)."""
    return _ANGLE_NOISE.get(unit.strip(), 0.0)


def _plain(value: Any) -> str:
    from .filters import format_value

    return format_value(value)


def _strip(text: str) -> str:
    if "e" in text:
        mantissa, exponent = text.split("e")
        if "." in mantissa:
            mantissa = mantissa.rstrip("0").rstrip(".")
        return f"{mantissa}e{int(exponent):+03d}"
    if "." in text:
        text = text.rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text


def display_number(value: Any, rel_tol: float, abs_tol: float, unit: str = "") -> str:
    """``value`` rounded to the precision its tolerance supports (module doc)."""
    if value is None:
        return UNSET
    if isinstance(value, bool) or not isinstance(value, int | float):
        return _plain(value)  # "NaN", "Infinity" as the record writes them, or text
    value = float(value)
    if not math.isfinite(value):
        return _plain(value)
    tol = max(float(rel_tol) * abs(value), float(abs_tol), noise_floor(unit))
    if abs(value) <= noise_floor(unit):
        return "0"
    if tol <= 0:
        return _plain(value)
    decimals = math.ceil(-math.log10(2 * tol) - 1e-12)
    rounded = round(value, decimals) if decimals < 0 else value
    if rounded == 0 or f"{rounded:.{max(decimals, 0)}f}".strip("-0.") == "":
        return "0"
    if 1e-4 <= abs(rounded) < 1e15:
        return _strip(f"{rounded:.{max(decimals, 0)}f}")
    digits = max(1, math.floor(math.log10(abs(rounded))) + decimals + 1)
    return _strip(f"{rounded:.{digits - 1}e}")


def display_input(value: Any) -> str:
    """A case-file value as the inputs table shows it: as written, unset or ``[]`` as "—"."""
    if value is None or (isinstance(value, list | dict) and not value):
        return UNSET
    return _plain(value)


def display_value(value: Any, unit: str = "", built_utc: str | None = None) -> str:
    """A value without a tolerance (a named result): angles near zero as 0, far dates by day."""
    if isinstance(value, float) and math.isfinite(value) and abs(value) <= noise_floor(unit):
        return "0"
    if isinstance(value, str) and built_utc:
        if _beyond_years(value, built_utc, _FAR_YEARS):  # an instant (YYYY-MM-DDTHH:MM:SS[.f]Z)
            return value[:10]
    return _plain(value)


def _add_years(when: datetime, years: int) -> datetime:
    try:
        return when.replace(year=when.year + years)
    except ValueError:  # 29 February in a common year: the day after 28 February
        return when.replace(year=when.year + years, month=3, day=1)


def _beyond_years(a: str, b: str, years: int) -> bool:
    """``a`` lies more than ``years`` calendar years before or after ``b`` (exact, no floats)."""
    try:
        when = parse_utc_stamp(a, fractions=True)
        built = parse_utc_stamp(b, fractions=True)
    except ValueError:
        return False
    try:
        return when > _add_years(built, years) or when < _add_years(built, -years)
    except (ValueError, OverflowError):  # beyond year 1 or 9999: far by any measure
        return True


def display_result(row: dict[str, Any], built_utc: str | None = None) -> str:
    """A result row of the record as the page shows it: rounded by its tolerance when it has one."""
    if "rel_tol" in row or "abs_tol" in row:
        return display_number(
            row.get("value"), row.get("rel_tol", 0.0), row.get("abs_tol", 0.0), row.get("unit", "")
        )
    return display_value(row.get("value"), row.get("unit", ""), built_utc)
