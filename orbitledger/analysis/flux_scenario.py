"""A case's density: the model it names and its flux scenario, as a kernel density profile.

``force_model.density_model`` chooses NRLMSIS 2.1 (default; ``orbitledger.kernel.nrlmsis``,
driven by ``force_model.flux_scenario``) or the fast exponential atmosphere at
``force_model.solar_activity`` (``orbitledger.kernel.atmosphere``). Without a flux scenario,
NRLMSIS runs at the constant ECSS-E-ST-10-04C level named by ``solar_activity``.

A table scenario reads the analyst's CSV file: a header line ``date_utc,f107_sfu,f107a_sfu,ap``
(columns in any order, more columns ignored), then one row per date in increasing order
(``2027-01-01`` or ``2027-01-01T00:00:00Z``); blank lines and lines starting with ``#`` are
skipped. A bad row is refused with one line naming the file, the line and the column.
"""

from __future__ import annotations

import csv
import functools
import hashlib
import math
import os
from typing import Any

import numpy as np

from ..kernel.density import DensityProfile, exponential_profile
from ..kernel.errors import InputError
from ..kernel.flux import (
    FLUX_LEVELS,
    FLUX_LIMITS,
    FluxHistory,
    constant_flux,
    level_flux,
    solar_cycle_flux,
    table_flux,
)

__all__ = [
    "CYCLE_25_MINIMUM_UTC",
    "TABLE_COLUMNS",
    "case_density_profile",
    "case_flux_history",
    "level_density_profile",
    "profile_from",
    "read_flux_table",
    "scenario_profiles",
]

TABLE_COLUMNS = ("date_utc", "f107_sfu", "f107a_sfu", "ap")
# The minimum that started solar cycle 25: December 2019 (NASA/NOAA Solar Cycle 25 Prediction
# Panel, announcement of 15 September 2020); the middle of the month is taken.
CYCLE_25_MINIMUM_UTC = "2019-12-15T00:00:00Z"


def _jd(text: str) -> float:
    from ..case.utc import utc_to_jd

    stamp = text if "T" in text else f"{text}T00:00:00Z"
    jd1, jd2 = utc_to_jd(stamp)
    return jd1 + jd2


@functools.lru_cache(maxsize=16)
def _read_table(path: str, mtime_ns: int) -> tuple[np.ndarray, np.ndarray, str]:
    del mtime_ns  # part of the cache key only: an edited file is read again
    dates: list[float] = []
    rows: list[list[float]] = []
    try:
        with open(path, newline="", encoding="utf-8") as handle:
            raw = handle.read()
    except (OSError, UnicodeDecodeError) as err:
        raise InputError(
            "force_model.flux_scenario.file", path, f"cannot be read ({err})"
        ) from None
    digest = hashlib.sha256(raw.encode("utf-8")).hexdigest()
    lines = [
        (n, t)
        for n, t in enumerate(raw.splitlines(), 1)
        if t.strip() and not t.lstrip().startswith("#")
    ]
    if not lines:
        raise InputError("line 1", None, "the flux table is empty", file=path)
    header_no, header = lines[0]
    names = [c.strip().lower() for c in next(csv.reader([header]))]
    for col in TABLE_COLUMNS:
        if col not in names:
            raise InputError(
                f"line {header_no}", header, f"the header lacks the column {col!r}", file=path
            )
    where = {col: names.index(col) for col in TABLE_COLUMNS}
    for number, text in lines[1:]:
        cells = next(csv.reader([text]))
        values = []
        for col in TABLE_COLUMNS:
            k = where[col]
            cell = cells[k].strip() if k < len(cells) else ""
            place = f"line {number}, column {col}"
            if col == "date_utc":
                try:
                    jd = _jd(cell)
                except (InputError, ValueError) as err:
                    raise InputError(
                        place, cell, str(getattr(err, "reason", err)), file=path
                    ) from None
                if dates and jd <= dates[-1]:
                    raise InputError(place, cell, "dates must increase", file=path)
                continue
            try:
                x = float(cell)
            except ValueError:
                raise InputError(place, cell, "not a number", file=path) from None
            lo, hi = FLUX_LIMITS[col]
            if not (math.isfinite(x) and lo <= x <= hi):
                raise InputError(place, cell, f"must be within {lo:g}..{hi:g}", file=path)
            values.append(x)
        dates.append(jd)
        rows.append(values)
    if not rows:
        raise InputError(f"line {header_no}", None, "the flux table has no rows", file=path)
    return np.array(dates), np.array(rows), digest


def read_flux_table(path: str | os.PathLike) -> tuple[np.ndarray, np.ndarray, str]:
    """(dates as UTC Julian dates, rows of F10.7, F10.7a, Ap, sha256 of the file) of a flux
    CSV (module docstring); cached per file and modification time."""
    text = os.fspath(path)
    try:
        mtime = os.stat(text).st_mtime_ns
    except OSError as err:
        raise InputError(
            "force_model.flux_scenario.file", text, f"cannot be read ({err.strerror})"
        ) from None
    return _read_table(text, mtime)


def case_flux_history(case: Any) -> FluxHistory:
    """The case's flux scenario as kernel nodes from the case epoch (module docstring)."""
    fm = case.force_model
    spec = fm.flux_scenario
    if spec is None:
        return level_flux(fm.solar_activity)
    if spec.kind == "constant":
        if spec.level is not None:
            return level_flux(spec.level)
        return constant_flux(
            spec.f107_sfu, spec.f107a_sfu, spec.ap,
            f"constant, F10.7 = {spec.f107_sfu:g} sfu, F10.7a = {spec.f107a_sfu:g} sfu, "
            f"Ap = {spec.ap:g} (stated in the case)",
        )  # fmt: skip
    jd1, jd2 = case.epoch_jd_utc()
    start = jd1 + jd2
    if spec.kind == "solar-cycle":
        low, high = FLUX_LEVELS["low"][0], FLUX_LEVELS["high"][0]
        minimum = spec.minimum_utc or CYCLE_25_MINIMUM_UTC
        return solar_cycle_flux(
            start,
            _jd(minimum),
            period_years=spec.period_years or 11.0,
            f107_min_sfu=low if spec.f107_min_sfu is None else spec.f107_min_sfu,
            f107_max_sfu=high if spec.f107_max_sfu is None else spec.f107_max_sfu,
            ap=15.0 if spec.ap is None else spec.ap,
        )
    dates, rows, digest = read_flux_table(spec.file)
    try:
        history = table_flux(
            start, dates, rows[:, 0], rows[:, 1], rows[:, 2],
            f"table {os.path.basename(spec.file)} (sha256 {digest[:16]}), quarterly means",
        )  # fmt: skip
    except InputError as err:
        raise InputError(err.field, err.value, err.reason, file=spec.file) from None
    return history


def case_density_profile(case: Any, i_deg: float | None = None) -> DensityProfile:
    """The density profile of the case's model and scenario, for an orbit of inclination
    ``i_deg`` (default: the case orbit's)."""
    fm = case.force_model
    if fm.density_model == "exponential":
        return exponential_profile(fm.solar_activity)
    from ..kernel.nrlmsis import nrlmsis_profile

    if i_deg is None:
        i_deg = float(np.asarray(case.elements().i_deg))
    return nrlmsis_profile(case_flux_history(case), float(np.asarray(i_deg)))


def level_density_profile(case: Any, level: str, i_deg: float | None = None) -> DensityProfile:
    """The case's density model at the constant activity ``level`` (low, moderate, high)."""
    if case.force_model.density_model == "exponential":
        return exponential_profile(level)
    from ..kernel.nrlmsis import nrlmsis_profile

    if i_deg is None:
        i_deg = float(np.asarray(case.elements().i_deg))
    return nrlmsis_profile(level_flux(level), float(np.asarray(i_deg)))


def profile_from(profile: DensityProfile, start_years: float) -> DensityProfile:
    """``profile`` with its time origin moved ``start_years`` later (e.g. the disposal that
    follows the mission); a profile that does not change with time is returned as it is."""
    if not profile.time_varying or start_years == 0.0:
        return profile
    return DensityProfile(
        profile.model,
        f"{profile.scenario}, from {start_years:g} years after the epoch",
        profile.key + ("from", float(start_years)),
        profile.h0_km,
        profile.dh_km,
        profile.log_rho,
        profile.t_years - float(start_years),
        profile.period_years,
        profile.notes,
    )


def scenario_profiles(case: Any) -> list[tuple[str, DensityProfile]]:
    """(name, profile) of the case's scenario ("case") then of the constant low, moderate and
    high levels of the same model: the spread a lifetime is shown with."""
    out = [("case", case_density_profile(case))]
    for level in FLUX_LEVELS:
        profile = level_density_profile(case, level)
        if profile.key != out[0][1].key:
            out.append((level, profile))
    return out


def density_statement(case_data: dict[str, Any]) -> tuple[str, str]:
    """(density model, flux scenario) in words for a record's models and assumptions, from the
    case's JSON data alone (what the lifetime, the disposal and, with drag, the numerical
    propagation use)."""
    from ..kernel.atmosphere import DENSITY_MODEL_NAME
    from ..kernel.flux import FLUX_LEVELS_SOURCE
    from ..kernel.nrlmsis import NRLMSIS_MODEL_NAME

    fm = case_data.get("force_model") or {}
    level = fm.get("solar_activity", "moderate")
    uses = "lifetime and disposal" + (
        ", and drag in the numerical propagation" if fm.get("drag") else ""
    )
    if fm.get("density_model", "nrlmsis") == "exponential":
        return f"{DENSITY_MODEL_NAME}; used for {uses}", f"{level}, held constant"
    spec = fm.get("flux_scenario") or {"kind": "constant", "level": level}
    kind = spec.get("kind")
    if kind == "constant" and spec.get("level"):
        f, fa, ap = FLUX_LEVELS[spec["level"]]
        flux = (f"constant {spec['level']} activity: F10.7 = {f:g}, F10.7a = {fa:g} sfu, "
                f"Ap = {ap:g} ({FLUX_LEVELS_SOURCE})")  # fmt: skip
    elif kind == "constant":
        flux = (f"constant: F10.7 = {spec['f107_sfu']:g}, F10.7a = {spec['f107a_sfu']:g} sfu, "
                f"Ap = {spec['ap']:g} (stated in the case)")  # fmt: skip
    elif kind == "solar-cycle":
        flux = (
            f"solar cycle (Hathaway, Wilson & Reichmann 1994 shape), minimum "
            f"{spec.get('minimum_utc') or CYCLE_25_MINIMUM_UTC}, period "
            f"{spec.get('period_years') or 11.0:g} years, F10.7 "
            f"{spec.get('f107_min_sfu') or FLUX_LEVELS['low'][0]:g}-"
            f"{spec.get('f107_max_sfu') or FLUX_LEVELS['high'][0]:g} sfu, "
            f"Ap {15.0 if spec.get('ap') is None else spec['ap']:g}"
        )
    else:
        flux = f"table of F10.7, F10.7a and Ap from the file {spec.get('file')}, quarterly means"
    return f"{NRLMSIS_MODEL_NAME}; used for {uses}", flux
