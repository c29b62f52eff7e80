"""NRLMSIS 2.1 density for drag and lifetime: point values and orbit-averaged tables.

Model. NRLMSIS 2.1 (Emmert et al., "NRLMSIS 2.1: an empirical model of nitric oxide
incorporated into MSIS", J. Geophys. Res. Space Physics 127, e2022JA030896, 2022; the
thermosphere of NRLMSIS 2.0, Emmert et al., Earth and Space Science 8, e2020EA001321, 2021),
evaluated by the ``pymsis`` package (the model's Fortran code, SWxTREC) from the daily F10.7 of
the previous day, the 81-day centred mean F10.7a and the daily Ap that we pass. They are always
passed: pymsis would otherwise look the indices up in a space-weather file and download it,
and orbitledger never fetches data at run time. Valid from the ground to the exobase (the
model's fit reaches about 1000 km; above, its density follows the diffusive profiles of the
model's upper boundary), for F10.7 of about 60-300 sfu; see ``orbitledger.kernel.flux`` for
the scenarios and their sources.

Orbit-averaged table (``nrlmsis_profile``). For each flux state the density is averaged over
6 local times (6 longitudes at one UT), 6 dates spread over a year (seasons) and, with the time
an orbit of inclination i spends at each latitude (``density.latitude_weights``), over 9
latitudes (-90..90 deg), at 83 heights from 0 to 2500 km (every 10 km to 80 km, 4 km to 140 km,
10 km to 300 km, 25 km to 1000 km, 100 km above); ln(rho) is interpolated between them by cubic
Hermite polynomials (three-point slopes) onto the 1-km grid of a ``DensityProfile``. The table
of a state (27 000 NRLMSIS evaluations) is computed once per process and kept; a profile for
another inclination only re-weights the latitudes. What the average leaves out: a
sun-synchronous orbit sees fixed local times (a dawn-dusk orbit a lower mean density than a
uniform average), the perigee latitude and local time of an eccentric orbit, and storms
shorter than the scenario's nodes.
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike

from .density import DensityProfile, latitude_weights
from .errors import InputError
from .flux import FLUX_LIMITS, FluxHistory

__all__ = ["NRLMSIS_MODEL_NAME", "nrlmsis_density_kg_m3", "nrlmsis_profile"]

NRLMSIS_MODEL_NAME = (
    "NRLMSIS 2.1 (Emmert et al. 2022) through pymsis, averaged over the orbit's latitudes, "
    "local time and season"
)
_H_NODES = np.unique(
    np.concatenate(
        (
            np.arange(0.0, 80.0, 10.0),
            np.arange(80.0, 140.0, 4.0),
            np.arange(140.0, 300.0, 10.0),
            np.arange(300.0, 1000.0, 25.0),
            np.arange(1000.0, 2500.1, 100.0),
        )
    )
)
_LAT_NODES = np.linspace(-90.0, 90.0, 9)
_LONGITUDES = np.arange(6) * 60.0
_DATES = np.datetime64("2027-01-01T00:00:00") + (
    (np.arange(6) + 0.5) * (365.25 / 6) * 86400.0
).astype("timedelta64[s]")
_GRID_KM = np.arange(0.0, 2500.5, 1.0)


def _check_indices(f107: np.ndarray, f107a: np.ndarray, ap: np.ndarray) -> None:
    for name, values in (("f107_sfu", f107), ("f107a_sfu", f107a), ("ap", ap)):
        lo, hi = FLUX_LIMITS[name]
        bad = ~((values >= lo) & (values <= hi))
        if np.any(bad):
            raise InputError(name, float(values[bad][0]), f"must be within {lo:g}..{hi:g}")


def nrlmsis_density_kg_m3(
    dates: ArrayLike,
    lon_deg: ArrayLike,
    lat_deg: ArrayLike,
    h_km: ArrayLike,
    f107_sfu: ArrayLike,
    f107a_sfu: ArrayLike,
    ap: ArrayLike,
) -> np.ndarray:
    """NRLMSIS 2.1 total mass density, kg/m^3, at n points (all inputs of shape (n,), n > 1,
    or all scalars).

    dates: numpy datetime64 (UTC); geodetic longitude and latitude (deg) and height (km);
    F10.7 of the previous day and its 81-day centred mean F10.7a (sfu) and the daily Ap, one
    per point (held in all seven of the model's Ap slots). Nothing is downloaded: the indices
    are always passed (module docstring).
    """
    import pymsis  # the Fortran model; imported only when needed

    f107 = np.atleast_1d(np.asarray(f107_sfu, dtype=float))
    f107a = np.atleast_1d(np.asarray(f107a_sfu, dtype=float))
    aps = np.atleast_1d(np.asarray(ap, dtype=float))
    _check_indices(f107, f107a, aps)
    out = pymsis.calculate(
        np.atleast_1d(dates), np.atleast_1d(lon_deg), np.atleast_1d(lat_deg),
        np.atleast_1d(h_km), f107, f107a, np.repeat(aps[:, None], 7, axis=1),
        version=2.1,
    )  # fmt: skip
    return np.asarray(out[..., 0], dtype=float)


def _compute_tables(states: list[tuple[float, float, float]]) -> list[np.ndarray]:
    """Mean density (kg/m^3) over local time and season for each state, (heights, latitudes)."""
    import pymsis  # the Fortran model; imported only when a table is needed

    n_d = _DATES.size
    dates = np.tile(_DATES, len(states))
    f107 = np.repeat([s[0] for s in states], n_d)
    f107a = np.repeat([s[1] for s in states], n_d)
    aps = np.repeat(np.array([[s[2]] * 7 for s in states]), n_d, axis=0)
    # F10.7, F10.7a and Ap always given: pymsis then reads no space-weather file and
    # downloads nothing.
    out = pymsis.calculate(dates, _LONGITUDES, _LAT_NODES, _H_NODES, f107, f107a, aps, version=2.1)[
        ..., 0
    ]  # total mass density, kg/m^3: (dates, lon, lat, alt)
    mean = out.astype(float).reshape(len(states), n_d, *out.shape[1:]).mean(axis=(1, 2))
    return [np.ascontiguousarray(m.T) for m in mean]


_TABLES: dict[tuple[float, float, float], np.ndarray] = {}
_PROFILES: dict[tuple, DensityProfile] = {}
_CACHE_MAX = 512


def _tables(states: list[tuple[float, float, float]]) -> list[np.ndarray]:
    """The table of each state, computing the missing ones in one pymsis call."""
    keys = [(round(float(f), 6), round(float(fa), 6), round(float(ap), 6)) for f, fa, ap in states]
    missing = [k for k in dict.fromkeys(keys) if k not in _TABLES]
    if missing:
        if len(_TABLES) + len(missing) > _CACHE_MAX:
            _TABLES.clear()
        _TABLES.update(zip(missing, _compute_tables(missing), strict=True))
    return [_TABLES[k] for k in keys]


def _hermite(xn: np.ndarray, yn: np.ndarray, x: np.ndarray) -> np.ndarray:
    """Cubic Hermite interpolation of yn(xn) at x, slopes by the three-point formula."""
    hn = np.diff(xn)
    d = np.diff(yn, axis=0) / hn[:, None]
    m = np.empty_like(yn)
    m[1:-1] = (hn[1:, None] * d[:-1] + hn[:-1, None] * d[1:]) / (hn[:-1] + hn[1:])[:, None]
    m[0], m[-1] = d[0], d[-1]
    k = np.clip(np.searchsorted(xn, x, side="right") - 1, 0, xn.size - 2)
    t = ((x - xn[k]) / hn[k])[:, None]
    h = hn[k][:, None]
    return (
        (2 * t**3 - 3 * t**2 + 1) * yn[k]
        + (t**3 - 2 * t**2 + t) * h * m[k]
        + (-2 * t**3 + 3 * t**2) * yn[k + 1]
        + (t**3 - t**2) * h * m[k + 1]
    )


def _profile(i_deg: float, flux: FluxHistory) -> DensityProfile:
    weights = latitude_weights(i_deg, _LAT_NODES)
    tables = _tables(flux.states())
    log_nodes = np.log(np.stack([t @ weights for t in tables], axis=1))  # (alt, time)
    rows = _hermite(_H_NODES, log_nodes, _GRID_KM).T
    notes = {
        "average": "9 latitudes weighted by the orbit's time at each, 6 local times, 6 dates",
        **flux.notes,
    }
    return DensityProfile(
        NRLMSIS_MODEL_NAME,
        flux.label,
        ("nrlmsis", flux.key, i_deg),
        0.0,
        1.0,
        rows,
        flux.t_years,
        flux.period_years,
        notes,
    )


def nrlmsis_profile(flux: FluxHistory, i_deg: float) -> DensityProfile:
    """The NRLMSIS 2.1 density of ``flux`` averaged over an orbit of inclination ``i_deg``
    (local time, season and latitude; module docstring), as a ``DensityProfile`` whose time
    nodes are the scenario's. Tables are computed once per state and profile, then cached."""
    i = float(i_deg)
    if not (math.isfinite(i) and 0.0 <= i <= 180.0):
        raise InputError("i_deg", i_deg, "must be an inclination within 0..180 deg")
    key = (flux.key, round(i, 3))
    if key not in _PROFILES:
        if len(_PROFILES) >= _CACHE_MAX:
            _PROFILES.clear()
        _PROFILES[key] = _profile(round(i, 3), flux)
    return _PROFILES[key]
