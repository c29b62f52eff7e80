"""Flux scenarios: the solar-flux and geomagnetic inputs (F10.7, F10.7a, Ap) of the density model.

A ``FluxHistory`` holds the inputs over time as nodes, in years from a start (the case epoch).
Three kinds are built here (``orbitledger.kernel.nrlmsis`` turns one into a density profile):

- constant: one state. The named levels are those of ECSS-E-ST-10-04C (ESA, *Space
  engineering: Space environment*, 15 November 2008), clause 8 (neutral atmosphere), which
  tabulates the activity levels to use with NRLMSISE-00 class models: low F10.7 = F10.7a =
  65 sfu, Ap = 0; moderate 140 sfu, Ap = 15; high (long-term) 250 sfu, Ap = 45
  (``FLUX_LEVELS``);
- solar cycle: F10.7 = F10.7a following the shape of a sunspot cycle, f(t) = (t/b)^3 /
  (exp((t/b)^2) - c) with c = 0.71 (Hathaway, Wilson & Reichmann, "The shape of the sunspot
  cycle", Solar Physics 151, 177-190, 1994), b chosen so that the maximum comes 4.0 years after
  the minimum; each cycle overlaps the tails of the two before, and the sum is scaled linearly
  between the scenario's F10.7 at minimum and at maximum (by default the ECSS low and high
  levels). Ap is held constant (by default the ECSS moderate 15). The usual epoch of minimum is
  December 2019, the start of solar cycle 25 (NASA/NOAA Solar Cycle 25 Prediction Panel,
  September 2020), with an 11-year period; 16 nodes per cycle;
- table: dated F10.7, F10.7a, Ap supplied by the analyst (a forecast), as means over quarters
  of a year (91.3 days, about the span of F10.7a's 81-day mean) from the start; after the
  table's end its mean from the start holds.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field
from types import MappingProxyType

import numpy as np

from .errors import InputError

__all__ = [
    "FLUX_LEVELS",
    "FLUX_LEVELS_SOURCE",
    "FLUX_LIMITS",
    "FluxHistory",
    "constant_flux",
    "level_flux",
    "solar_cycle_f107_sfu",
    "solar_cycle_flux",
    "table_flux",
]

FLUX_LEVELS_SOURCE = "ECSS-E-ST-10-04C (2008), clause 8, activity levels for the neutral atmosphere"
# name -> (F10.7, F10.7a, Ap): ECSS-E-ST-10-04C, see the module docstring.
FLUX_LEVELS: Mapping[str, tuple[float, float, float]] = MappingProxyType(
    {"low": (65.0, 65.0, 0.0), "moderate": (140.0, 140.0, 15.0), "high": (250.0, 250.0, 45.0)}
)
# Accepted ranges: F10.7 and F10.7a 50-400 sfu (a margin around the 60-300 sfu over which
# NRLMSIS is fitted, Emmert et al. 2021; common practice), Ap 0-400 (the index's full scale).
FLUX_LIMITS: Mapping[str, tuple[float, float]] = MappingProxyType(
    {"f107_sfu": (50.0, 400.0), "f107a_sfu": (50.0, 400.0), "ap": (0.0, 400.0)}
)
_YEAR_DAYS = 365.24219
_QUARTER_YEARS = 0.25
_CYCLE_NODES = 16
_RISE_YEARS = 4.0
_SHAPE_C = 0.71
# x = t/b at the maximum of x^3 / (exp(x^2) - c): 3 (exp(x^2) - c) = 2 x^2 exp(x^2).
_X_PEAK = 1.0822


@dataclass(frozen=True, eq=False)
class FluxHistory:
    """A flux scenario as nodes: years from the start, F10.7, F10.7a (sfu) and Ap at each.

    period_years: the scenario repeats with this period (a solar cycle), or None (the last
    node holds). label: the scenario in words, for records; notes: what it rests on.
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
        if arrays[0].size > 1 and not np.all(np.diff(arrays[0]) > 0.0):
            raise InputError("flux.t_years", arrays[0].tolist()[:4], "time nodes must increase")
        for name, values in zip(("f107_sfu", "f107a_sfu", "ap"), arrays[1:], strict=True):
            lo, hi = FLUX_LIMITS[name]
            bad = (values < lo) | (values > hi)
            if np.any(bad):
                raise InputError(
                    f"flux.{name}", float(values[bad][0]), f"must be within {lo:g}..{hi:g}"
                )
        for name, a in zip(("t_years", "f107_sfu", "f107a_sfu", "ap"), arrays, strict=True):
            a.setflags(write=False)
            object.__setattr__(self, name, a)
        object.__setattr__(self, "notes", MappingProxyType(dict(self.notes)))

    @property
    def key(self) -> tuple:
        """Hashable identity of the scenario (equal keys: equal densities)."""
        states = tuple(
            zip(
                self.t_years.round(9).tolist(),
                *(a.tolist() for a in (self.f107_sfu, self.f107a_sfu, self.ap)),
                strict=True,
            )  # fmt: skip
        )
        return (states, self.period_years)

    def states(self) -> list[tuple[float, float, float]]:
        """The (F10.7, F10.7a, Ap) of each node."""
        return list(
            zip(self.f107_sfu.tolist(), self.f107a_sfu.tolist(), self.ap.tolist(), strict=True)
        )


def constant_flux(f107_sfu: float, f107a_sfu: float, ap: float, label: str) -> FluxHistory:
    """A scenario that holds one state: F10.7 and F10.7a (sfu), Ap."""
    return FluxHistory(
        np.zeros(1), np.array([f107_sfu]), np.array([f107a_sfu]), np.array([ap]), label
    )


def level_flux(level: str) -> FluxHistory:
    """The ECSS-E-ST-10-04C level "low", "moderate" or "high" (``FLUX_LEVELS``), constant."""
    key = str(level).strip().lower()
    if key not in FLUX_LEVELS:
        raise InputError("flux.level", level, f"must be one of {', '.join(FLUX_LEVELS)}")
    f, fa, ap = FLUX_LEVELS[key]
    history = constant_flux(f, fa, ap, f"{key} activity, F10.7 = F10.7a = {f:g} sfu, Ap = {ap:g}")
    label = f"{history.label} (ECSS-E-ST-10-04C)"
    return FluxHistory(
        history.t_years,
        history.f107_sfu,
        history.f107a_sfu,
        history.ap,
        label,
        notes={"levels": FLUX_LEVELS_SOURCE},
    )


def _cycle_raw(phase_years: np.ndarray, period_years: float) -> np.ndarray:
    b = _RISE_YEARS / _X_PEAK
    total = np.zeros_like(phase_years)
    for k in range(3):  # this cycle and the tails of the two before
        x = (phase_years + k * period_years) / b
        total += x**3 / (np.exp(x * x) - _SHAPE_C)
    return total


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
    if not (math.isfinite(period_years) and period_years > _RISE_YEARS + 1.0):
        raise InputError(
            "period_years", period_years, f"must be longer than {_RISE_YEARS + 1.0:g} years"
        )
    if not (0.0 < f107_min_sfu < f107_max_sfu):
        raise InputError(
            "f107_max_sfu", (f107_min_sfu, f107_max_sfu), "needs 0 < F10.7 at minimum < at maximum"
        )
    grid = _cycle_raw(np.linspace(0.0, period_years, 2001), period_years)
    lo, hi = grid.min(), grid.max()
    phase = np.mod(np.asarray(years_since_minimum, dtype=float), period_years)
    return f107_min_sfu + (f107_max_sfu - f107_min_sfu) * (_cycle_raw(phase, period_years) - lo) / (
        hi - lo
    )


def solar_cycle_flux(
    start_jd: float,
    minimum_jd: float,
    *,
    period_years: float = 11.0,
    f107_min_sfu: float = 65.0,
    f107_max_sfu: float = 250.0,
    ap: float = 15.0,
) -> FluxHistory:
    """A repeating solar cycle seen from ``start_jd`` (UTC Julian date of the start), with a
    minimum at ``minimum_jd``: 16 nodes per cycle (F10.7 = F10.7a, Ap constant)."""
    t = np.linspace(0.0, period_years, _CYCLE_NODES + 1)
    since = (start_jd - minimum_jd) / _YEAR_DAYS + t
    f = solar_cycle_f107_sfu(
        since, period_years=period_years, f107_min_sfu=f107_min_sfu, f107_max_sfu=f107_max_sfu
    )
    f[-1] = f[0]
    text = (
        f"solar cycle, F10.7 = F10.7a from {f107_min_sfu:g} to {f107_max_sfu:g} sfu over "
        f"{period_years:g} years (shape of Hathaway, Wilson & Reichmann 1994, maximum 4 years "
        f"after the minimum), Ap = {ap:g}"
    )
    notes = {"solar cycle": f"{(start_jd - minimum_jd) / _YEAR_DAYS:.2f} years after a minimum"}
    return FluxHistory(
        t, f, f, np.full(t.size, float(ap)), text, period_years=period_years, notes=notes
    )


def table_flux(
    start_jd: float,
    dates_jd: np.ndarray,
    f107_sfu: np.ndarray,
    f107a_sfu: np.ndarray,
    ap: np.ndarray,
    label: str,
) -> FluxHistory:
    """An analyst's table of dated indices as quarterly means from ``start_jd`` (UTC Julian
    dates, increasing); after the table's last date its mean from the start holds. Refused
    when the table starts more than a quarter after the start or ends before it."""
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
    ahead = t >= 0.0
    mean = values[ahead].mean(axis=0) if np.any(ahead) else values.mean(axis=0)
    nodes.append(nodes[-1] + _QUARTER_YEARS)
    rows.append(mean)
    nodes_arr, rows_arr = np.array(nodes), np.array(rows)
    if nodes_arr.size > 1:
        nodes_arr[0] = 0.0  # the first quarter's mean holds from the start
    f_mean, fa_mean, ap_mean = (float(x) for x in mean)
    notes = {
        "after the table": f"its mean F10.7 {f_mean:.1f}, F10.7a {fa_mean:.1f} sfu, "
        f"Ap {ap_mean:.1f} holds"
    }
    return FluxHistory(
        nodes_arr, rows_arr[:, 0], rows_arr[:, 1], rows_arr[:, 2], label, notes=notes
    )
