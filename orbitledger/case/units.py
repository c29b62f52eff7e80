"""The unit a field carries in its name: the one table of unit suffixes (docs/case-file.md).

Case-file fields (``orbit.altitude_km``), kernel result keys (``raan_rate_deg_day``) and trade
table columns all name their unit by a suffix. This table reads it for every face: the editor,
the records, the command line's tables and the trade tables, so they agree (years are ``yr``,
as the results of the analysis give them). Units are plain ASCII (``km^3/s^2``); a face that
can show superscripts converts them (``widgets.fields.unit_for``).
"""

from __future__ import annotations

__all__ = ["UNIT_SUFFIXES", "split_unit", "unit_of"]

# Longest (most specific) first, so "_km_s" wins over "_s" and "_km3_s2" over "_s2".
UNIT_SUFFIXES: tuple[tuple[str, str], ...] = (
    ("_km3_s2", "km^3/s^2"),
    ("_km2_s2", "km^2/s^2"),
    ("_km2_s", "km^2/s"),
    ("_rad_s", "rad/s"),
    ("_deg_s", "deg/s"),
    ("_deg_day", "deg/day"),
    ("_km_s", "km/s"),
    ("_m_s", "m/s"),
    ("_arcsec", "arcsec"),
    ("_percent", "%"),
    ("_years", "yr"),
    ("_utc", "UTC"),
    ("_deg", "deg"),
    ("_rad", "rad"),
    ("_min", "min"),
    ("_km", "km"),
    ("_kg", "kg"),
    ("_m2", "m^2"),
    ("_s", "s"),
)


def split_unit(name: str) -> tuple[str, str]:
    """``"raan_rate_deg_day"`` -> ``("raan_rate", "deg/day")``; ``(name, "")`` without a unit."""
    for suffix, unit in UNIT_SUFFIXES:
        if name.endswith(suffix) and len(name) > len(suffix):
            return name[: -len(suffix)], unit
    return name, ""


def unit_of(path: str) -> str:
    """The unit a field path names by its last field (``orbit.altitude_km`` -> ``km``)."""
    leaf = path.rsplit(".", 1)[-1].split("[", 1)[0]
    return split_unit(leaf)[1]
