"""CSV of a case's ephemeris, ground track, passes and eclipse intervals.

One header row whose names carry their units as everywhere in orbitledger (``x_gcrf_km``,
``vx_gcrf_km_s``, ``lat_deg``, ``aos_utc``, ``duration_s``: the suffix is the unit, ``_utc`` an
ISO 8601 UTC time), then one row per sample or event. Numbers are written by ``repr`` (the
shortest text that reads back as the same double), booleans as ``true``/``false``, so a CSV
loses nothing. The values come from the same functions as the ``ephemeris``, ``groundtrack``,
``passes`` and ``eclipses`` verbs (``analysis.environment_data``), so the CSV and the tables agree.
"""

from __future__ import annotations

import csv
import io
from collections.abc import Mapping, Sequence
from typing import Any

from ..kernel.errors import InputError

__all__ = ["CSV_KINDS", "case_csv", "columns_csv", "rows_csv"]

CSV_KINDS = ("ephemeris", "groundtrack", "passes", "eclipses")

_PASS_COLUMNS = (
    "station", "aos_utc", "tmax_utc", "los_utc", "aos_s", "tmax_s", "los_s", "duration_s",
    "max_elevation_deg", "aos_azimuth_deg", "los_azimuth_deg", "starts_in_view", "ends_in_view",
)  # fmt: skip
_ECLIPSE_COLUMNS = (
    "entry_utc", "exit_utc", "entry_s", "exit_s", "duration_s", "umbra_entry_s",
    "umbra_exit_s", "umbra_duration_s", "starts_in_shadow", "ends_in_shadow",
)  # fmt: skip


def _cell(value: Any) -> str:
    if isinstance(value, bool):
        return "true" if value else "false"
    if value is None:
        return ""
    if isinstance(value, float):
        return repr(value)
    return str(value)


def columns_csv(columns: Mapping[str, Sequence[Any]]) -> str:
    """CSV text of equal-length columns: the names as the header row, one row per index."""
    names = list(columns)
    lengths = {len(columns[n]) for n in names}
    if len(lengths) > 1:
        raise InputError("columns", sorted(lengths), "must all have the same length")
    out = io.StringIO()
    writer = csv.writer(out, lineterminator="\n")
    writer.writerow(names)
    for k in range(lengths.pop() if lengths else 0):
        writer.writerow([_cell(columns[n][k]) for n in names])
    return out.getvalue()


def rows_csv(rows: Sequence[Mapping[str, Any]], names: Sequence[str]) -> str:
    """CSV text of records (one mapping per row) with the columns ``names``, in that order."""
    return columns_csv({n: [row.get(n) for row in rows] for n in names})


def case_csv(case: Any, what: str = "ephemeris") -> tuple[str, dict[str, Any]]:
    """CSV of ``what`` (one of ``CSV_KINDS``) over the case's window, and the data behind it
    (the verbs' JSON-ready dict, with its model notes, warnings and caution)."""
    from ..analysis import environment_data as env

    if what == "ephemeris":
        data = env.ephemeris_data(case)
        return columns_csv(data["columns"]), data
    if what == "groundtrack":
        data = env.groundtrack_data(case)
        return columns_csv(data["columns"]), data
    if what == "passes":
        data = env.passes_data(case)
        return rows_csv(data["passes"], _PASS_COLUMNS), data
    if what == "eclipses":
        data = env.eclipses_data(case)
        return rows_csv(data["eclipses"], _ECLIPSE_COLUMNS), data
    raise InputError("what", what, f"must be one of {', '.join(CSV_KINDS)}")
