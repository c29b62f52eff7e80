"""NRLMSIS 2.1 density for drag and lifetime: solar-flux scenarios and orbit-averaged tables.

Model. NRLMSIS 2.1 (Emmert et al., "NRLMSIS 2.1: an empirical model of nitric oxide
incorporated into MSIS", J. Geophys. Res. Space Physics 127, e2022JA030896, 2022; the
thermosphere of NRLMSIS 2.0, Emmert et al., Earth and Space Science 8, e2020EA001321, 2021),
evaluated by the ``pymsis`` package from the daily F10.7 of the previous day, the 81-day
centred mean F10.7a and the daily Ap that we pass. They are always passed: pymsis would
otherwise look the indices up in a space-weather file and download it, and orbitledger never
fetches data at run time.

Flux scenarios (``FluxHistory``): the inputs over time, as nodes in years from a start epoch.

- constant: one state. The named levels are those of ECSS-E-ST-10-04C (ESA, *Space
  engineering: Space environment*, 2008), clause 8 (neutral atmospheres), which tabulates low,
  moderate and high (long-term) activity as F10.7 = F10.7a = 65, 140 and 250 sfu with
  Ap = 0, 15 and 45 (``FLUX_LEVELS``);
- solar cycle: F10.7 = F10.7a following the shape of a sunspot cycle, f(t) = (t/b)^3 /
  (exp((t/b)^2) - c) with c = 0.71 (Hathaway, Wilson & Reichmann, "The shape of the sunspot
  cycle", Solar Physics 151, 177-190, 1994), b chosen so that the maximum comes 4.0 years
  after the minimum; each cycle overlaps the tail of the one before, and the sum is scaled
  linearly between the scenario's F10.7 at minimum and at maximum (by default the ECSS low
  and high levels). Ap is held constant (ECSS moderate, 15). The default minimum is that of
  December 2019, the start of solar cycle 25 (NASA/NOAA Solar Cycle 25 Prediction Panel,
  September 2020), with an 11-year period. 16 nodes per cycle;
- table: dated F10.7, F10.7a, Ap supplied by the analyst (a forecast), averaged over
  quarters (91.3 days, the span of F10.7a's 81-day mean) from the start; after the table's
  end its mean over the same span holds.

Orbit-averaged table. For each state, the density is averaged over 6 local times (6
longitudes at one UT), 6 dates spread over a year (seasons) and, with the time an orbit of
inclination i spends at each latitude (``density.latitude_weights``), over 9 latitudes
(-90..90 deg), at heights every 10 km from 0 to 80 km, 4 km to 140 km, 10 km to 300 km, 25 km
to 1000 km and 100 km to 2500 km (83 heights); ln(rho) is interpolated between them by cubic
Hermite polynomials (three-point slopes) onto the 1-km grid of a ``DensityProfile``. Measured
against a dense average (37 latitudes, 24 local times, 24 dates) the table is within 1 %
(0.3 % typical); the interpolation in height within 0.25 % from 80 to 200 km and 0.05 %
above. The table of a state (27 000 NRLMSIS evaluations, 35-100 ms) is computed once per
process and kept. What the average leaves out: a
sun-synchronous orbit sees fixed local times (a dawn-dusk orbit a lower mean density than a
uniform average), perigee latitude and local time of an eccentric orbit, and storms shorter
than the table's nodes.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field
from types import MappingProxyType

import numpy as np

from .density import DensityProfile, latitude_weights
from .errors import InputError

__all__ = [
    "FLUX_LEVELS",
    "FLUX_LEVELS_SOURCE",
    "FluxHistory",
    "NRLMSIS_MODEL_NAME",
    "constant_flux",
    "level_flux",
    "nrlmsis_profile",
    "solar_cycle_f107_sfu",
    "solar_cycle_flux",
    "table_flux",
]

NRLMSIS_MODEL_NAME = (
    "NRLMSIS 2.1 (Emmert et al. 2022) through pymsis, averaged over the orbit's latitudes, "
    "local time and season"
)
FLUX_LEVELS_SOURCE = "ECSS-E-ST-10-04C (2008), clause 8, activity levels for the neutral atmosphere"
# name -> (F10.7, F10.7a, Ap): ECSS-E-ST-10-04C, see the module docstring.
FLUX_LEVELS: Mapping[str, tuple[float, float, float]] = MappingProxyType(
    {"low": (65.0, 65.0, 0.0), "moderate": (140.0, 140.0, 15.0), "high": (250.0, 250.0, 45.0)}
)
_YEAR_DAYS = 365.24219
_QUARTER_YEARS = 0.25
_CYCLE_NODES = 16
_RISE_YEARS = 4.0
_SHAPE_C = 0.71
# x = t/b at the maximum of x^3 / (exp(x^2) - c): 3 (exp(x^2) - c) = 2 x^2 exp(x^2).
_X_PEAK = 1.0822
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


@dataclass(frozen=True, eq=False)
class FluxHistory:
    """A flux scenario as nodes: years from the start, F10.7, F10.7a (sfu) and Ap at each.

    period_years: the scenario repeats with this period (a solar cycle), or None (the last
    node holds). label: the scenario in words, for records.
    """

    t_years: np.ndarray
    f107_sfu: np.ndarray
    f107a_sfu: np.ndarray
    ap: np.ndarray
    label: str
    period_years: float | None = None
    notes: Mapping[str, str] = field(default_factory=lambda: MappingProxyType({}))

    def __post_init__(self) -> None:
        arrays = [np.atleast_1d(np.asarray(x, float)) for x in
                  (self.t_years, self.f107_sfu, self.f107a_sfu, self.ap)]  # fmt: skip
        if len({a.size for a in arrays}) != 1 or not all(np.all(np.isfinite(a)) for a in arrays):
            raise InputError("flux", self.label, "needs finite nodes of equal length")
        for name, values, lo, hi in (
            ("f107_sfu", arrays[1], 0.0, 1000.0),
            ("f107a_sfu", arrays[2], 0.0, 1000.0),
            ("ap", arrays[3], 0.0, 400.0),
        ):
            if np.any(values < lo) or np.any(values > hi):
                raise InputError(f"flux.{name}", values.tolist()[:4], f"must be within {lo:g}..{hi:g}")
        for name, a in zip(("t_years", "f107_sfu", "f107a_sfu", "ap"), arrays, strict=True):
            a.setflags(write=False)
            object.__setattr__(self, name, a)
        object.__setattr__(self, "notes", MappingProxyType(dict(self.notes)))

    @property
    def key(self) -> tuple:
        """Hashable identity of the scenario (equal keys: equal densities)."""
        states = tuple(
            zip(self.t_years.round(9), self.f107_sfu, self.f107a_sfu, self.ap, strict=True)
        )
        return (states, self.period_years)

    def states(self) -> list[tuple[float, float, float]]:
        """The (F10.7, F10.7a, Ap) of each node."""
        return list(zip(self.f107_sfu.tolist(), self.f107a_sfu.tolist(), self.ap.tolist(), strict=True))


def constant_flux(f107_sfu: float, f107a_sfu: float, ap: float, label: str) -> FluxHistory:
    """A scenario that holds one state: F10.7 and F10.7a (sfu), Ap."""
    return FluxHistory(np.zeros(1), [f107_sfu], [f107a_sfu], [ap], label)


def level_flux(level: str) -> FluxHistory:
    """The ECSS-E-ST-10-04C level "low", "moderate" or "high" (``FLUX_LEVELS``), constant."""
    key = str(level).strip().lower()
    if key not in FLUX_LEVELS:
        raise InputError("flux.level", level, f"must be one of {', '.join(FLUX_LEVELS)}")
    f, fa, ap = FLUX_LEVELS[key]
    return constant_flux(
        f, fa, ap, f"{key} activity (F10.7 = F10.7a = {f:g} sfu, Ap = {ap:g}; {FLUX_LEVELS_SOURCE})"
    )


def solar_cycle_f107_sfu(
    years_since_minimum: np.ndarray | float,
    *,
    period_years: float = 11.0,
    f107_min_sfu: float = 65.0,
    f107_max_sfu: float = 250.0,
) -> np.ndarray:
    """F10.7 (sfu) over a repeating solar cycle, ``years_since_minimum`` after a minimum.

    The Hathaway, Wilson & Reichmann (1994) cycle shape with its maximum 4.0 years after the
    minimum (module docstring), the tails of the two cycles before added, scaled so that the
    cycle's lowest value is ``f107_min_sfu`` and its highest ``f107_max_sfu``.
    """
    if not (math.isfinite(period_years) and period_years > _RISE_YEARS):
        raise InputError("period_years", period_years, f"must be longer than {_RISE_YEARS:g} years")
    if not (0.0 < f107_min_sfu < f107_max_sfu):
        raise InputError(
            "f107_max_sfu", (f107_min_sfu, f107_max_sfu), "needs 0 < F10.7 at minimum < at maximum"
        )
    b = _RISE_YEARS / _X_PEAK

    def raw(phase_years: np.ndarray) -> np.ndarray:
        total = np.zeros_like(phase_years)
        for k in range(3):  # this cycle and the tails of the two before
            x = (phase_years + k * period_years) / b
            total += x**3 / (np.exp(x * x) - _SHAPE_C)
        return total

    grid = np.linspace(0.0, period_years, 2001)
    lo, hi = raw(grid).min(), raw(grid).max()
    phase = np.mod(np.asarray(years_since_minimum, dtype=float), period_years)
    return f107_min_sfu + (f107_max_sfu - f107_min_sfu) * (raw(phase) - lo) / (hi - lo)


def solar_cycle_flux(
    start_jd: float,
    minimum_jd: float,
    *,
    period_years: float = 11.0,
    f107_min_sfu: float = 65.0,
    f107_max_sfu: float = 250.0,
    ap: float = 15.0,
    label: str | None = None,
) -> FluxHistory:
    """A repeating solar cycle seen from ``start_jd`` (Julian date of the start, UTC), with
    a minimum at ``minimum_jd``: 16 nodes per cycle (F10.7 = F10.7a, Ap constant)."""
    t = np.linspace(0.0, period_years, _CYCLE_NODES + 1)
    since = (start_jd - minimum_jd) / _YEAR_DAYS + t
    f = solar_cycle_f107_sfu(
        since, period_years=period_years, f107_min_sfu=f107_min_sfu, f107_max_sfu=f107_max_sfu
    )
    f[-1] = f[0]
    text = label or (
        f"solar cycle: F10.7 {f107_min_sfu:g}-{f107_max_sfu:g} sfu over {period_years:g} years "
        f"(Hathaway et al. 1994 shape), Ap {ap:g}"
    )
    return FluxHistory(t, f, f, np.full(t.size, float(ap)), text, period_years=period_years)


def table_flux(
    start_jd: float,
    dates_jd: np.ndarray,
    f107_sfu: np.ndarray,
    f107a_sfu: np.ndarray,
    ap: np.ndarray,
    label: str,
) -> FluxHistory:
    """An analyst's table of dated indices as quarterly means from ``start_jd`` (UTC Julian
    dates); after the table's last date, its mean from the start holds. Refused when the
    table starts more than a quarter after the start or ends before it."""
    d = np.asarray(dates_jd, dtype=float)
    values = np.stack([np.asarray(x, dtype=float) for x in (f107_sfu, f107a_sfu, ap)], axis=1)
    if d.size == 0 or d[0] > start_jd + _QUARTER_YEARS * _YEAR_DAYS:
        raise InputError("flux.table", label, "must cover the case epoch (it starts later)")
    if d[-1] < start_jd:
        raise InputError("flux.table", label, "ends before the case epoch")
    t = (d - start_jd) / _YEAR_DAYS
    keep = t >= -_QUARTER_YEARS
    t, values = t[keep], values[keep]
    quarters = np.floor(np.maximum(t, 0.0) / _QUARTER_YEARS).astype(int)
    nodes, rows = [], []
    for q in np.unique(quarters):
        rows.append(values[quarters == q].mean(axis=0))
        nodes.append((q + 0.5) * _QUARTER_YEARS)
    mean = values[t >= 0.0].mean(axis=0) if np.any(t >= 0.0) else values.mean(axis=0)
    nodes.append(nodes[-1] + _QUARTER_YEARS)
    rows.append(mean)
    nodes_arr, rows_arr = np.array(nodes), np.array(rows)
    nodes_arr[0] = 0.0 if nodes_arr.size > 1 and nodes_arr[0] > 0.0 else nodes_arr[0]
    return FluxHistory(
        nodes_arr, rows_arr[:, 0], rows_arr[:, 1], rows_arr[:, 2], label,
        notes={"after the table": "its mean F10.7 %.1f, F10.7a %.1f, Ap %.1f" % tuple(mean)},
    )  # fmt: skip


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
    out = pymsis.calculate(
        dates, _LONGITUDES, _LAT_NODES, _H_NODES, f107, f107a, aps, version=2.1
    )[..., 0]  # total mass density, kg/m^3: (dates, lon, lat, alt)
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
        "flux_scenario": flux.label,
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
