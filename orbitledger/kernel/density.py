"""Tabulated density profiles: ln(density) on a uniform height grid, optionally over time.

A ``DensityProfile`` is what the lifetime, disposal and drag computations read the atmosphere
through: the natural log of the density (kg/m^3) at heights h0, h0 + dh, ... (km above the
ellipsoid), one row per time node (years from the profile's start). Between height nodes the
log-density is interpolated linearly, that is, the density is exponential within each cell
(the form of every exponential atmosphere, e.g. Vallado 4th ed., Eq. 8-33); above the top
node the last cell's scale height continues; below the first node its value holds. Between
time nodes ln(rho) is interpolated linearly; beyond the last node the profile either repeats
(``period_years``, a solar cycle) or holds its last row (the mean of a flux table).

Two sources build profiles: ``exponential_profile`` (the piecewise-exponential model of
``orbitledger.kernel.atmosphere`` at a solar-activity level, tabulated every 1 km, which
reproduces that model to below 1e-6 relative: its band edges fall on the nodes, and its
solar-activity factor is quadratic in h) and, for a time-varying density, a table of rows
over time built by the caller (no second model is on this branch yet). Looking a height up costs a few array
operations, so the lifetime kernel can evaluate thousands of heights per step.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field
from functools import lru_cache
from types import MappingProxyType

import numpy as np
from numpy.typing import ArrayLike

from .atmosphere import DENSITY_MODEL_NAME, SolarActivityLevel, density_kg_m3, solar_activity_level
from .errors import InputError

__all__ = ["DensityProfile", "exponential_profile", "latitude_weights"]

_TOP_KM = 2500.0  # the tables reach here; above, the last cell's scale height continues


@dataclass(frozen=True, eq=False)
class DensityProfile:
    """ln(rho) (rho in kg/m^3) on a uniform height grid, one row per time node.

    model: the density model's full name (for records); scenario: the solar and geomagnetic
    inputs in words; key: a hashable identity (equal keys, equal tables) for caches;
    h0_km, dh_km: the height grid; log_rho: shape (n_t, n_h); t_years: the n_t time nodes,
    years from the start (one node: a profile that does not change with time);
    period_years: the profile repeats with this period beyond its last node, or None (the
    last row holds). notes: what the table rests on.
    """

    model: str
    scenario: str
    key: tuple
    h0_km: float
    dh_km: float
    log_rho: np.ndarray
    t_years: np.ndarray = field(default_factory=lambda: np.zeros(1))
    period_years: float | None = None
    notes: Mapping[str, str] = field(default_factory=lambda: MappingProxyType({}))

    def __post_init__(self) -> None:
        table = np.atleast_2d(np.asarray(self.log_rho, dtype=float))
        t = np.atleast_1d(np.asarray(self.t_years, dtype=float))
        if table.shape[0] != t.size or table.shape[1] < 2 or not np.all(np.isfinite(table)):
            raise InputError("log_rho", table.shape, "needs finite rows, one per time node")
        if t.size > 1 and not np.all(np.diff(t) > 0.0):
            raise InputError("t_years", t, "time nodes must increase")
        slope = np.diff(table, axis=1)
        for a in (table, t, slope):
            a.setflags(write=False)
        object.__setattr__(self, "log_rho", table)
        object.__setattr__(self, "_slope", slope)
        object.__setattr__(self, "_row0", table[0])
        object.__setattr__(self, "_slope0", slope[0])
        object.__setattr__(self, "t_years", t)
        object.__setattr__(self, "notes", MappingProxyType(dict(self.notes)))

    @property
    def time_varying(self) -> bool:
        """True when the density changes with time (a solar cycle, a flux table)."""
        return self.t_years.size > 1

    def _rows(self, t_years: ArrayLike) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Row indices i, i + 1 and weight w of the time interpolation at ``t_years``."""
        t = np.asarray(t_years, dtype=float)
        nodes = self.t_years
        if self.period_years is not None and nodes.size > 1:
            t = nodes[0] + np.mod(t - nodes[0], self.period_years)
        i = np.clip(np.searchsorted(nodes, t, side="right") - 1, 0, nodes.size - 2)
        w = np.clip((t - nodes[i]) / (nodes[i + 1] - nodes[i]), 0.0, 1.0)
        return i, i + 1, w

    def log_density(self, h_km: ArrayLike, t_years: ArrayLike = 0.0) -> np.ndarray:
        """ln(rho / (kg/m^3)) at heights ``h_km`` (and times ``t_years``; they broadcast)."""
        x = np.asarray(h_km, dtype=float)
        if self.h0_km != 0.0:
            x = x - self.h0_km
        if self.dh_km != 1.0:
            x = x / self.dh_km
        x = np.maximum(x, 0.0)
        j = x.astype(np.intp)
        j = np.minimum(j, self.log_rho.shape[1] - 2)
        f = x - j
        if not self.time_varying:
            row: np.ndarray = self._row0  # type: ignore[attr-defined]
            return row.take(j) + f * self._slope0.take(j)  # type: ignore[attr-defined]
        slope: np.ndarray = self._slope  # type: ignore[attr-defined]
        i0, i1, w = self._rows(t_years)
        lo = self.log_rho[i0, j] + f * slope[i0, j]
        hi = self.log_rho[i1, j] + f * slope[i1, j]
        return lo + w * (hi - lo)

    def density_kg_m3(self, h_km: ArrayLike, t_years: ArrayLike = 0.0) -> np.ndarray:
        """Density, kg/m^3, at heights ``h_km`` (km above the ellipsoid) and ``t_years``."""
        return np.exp(self.log_density(h_km, t_years))

    def at_time(self, t_years: float) -> DensityProfile:
        """The profile at one time, as a profile that does not change with time."""
        if not self.time_varying:
            return self
        i0, i1, w = self._rows(float(t_years))
        row = self.log_rho[i0] + w * (self.log_rho[i1] - self.log_rho[i0])
        return DensityProfile(
            self.model,
            f"{self.scenario}, at {t_years:g} years",
            self.key + ("at", float(t_years)),
            self.h0_km,
            self.dh_km,
            row,
            notes=self.notes,
        )

    def mean_over(self, start_years: float, end_years: float) -> DensityProfile:
        """The time mean of the density from ``start_years`` to ``end_years`` (monthly
        samples), as a profile that does not change with time (e.g. over a mission)."""
        if not self.time_varying:
            return self
        n = max(2, int(math.ceil((end_years - start_years) * 12.0)) + 1)
        t = np.linspace(start_years, end_years, n)
        i0, i1, w = self._rows(t)
        rows = self.log_rho[i0] + w[:, None] * (self.log_rho[i1] - self.log_rho[i0])
        mean = np.log(np.mean(np.exp(rows), axis=0))
        return DensityProfile(
            self.model,
            f"{self.scenario}, mean over {start_years:g}-{end_years:g} years",
            self.key + ("mean", float(start_years), float(end_years)),
            self.h0_km,
            self.dh_km,
            mean,
            notes=self.notes,
        )


def latitude_weights(i_deg: float, lat_nodes_deg: np.ndarray, samples: int = 720) -> np.ndarray:
    """Weights of ``lat_nodes_deg`` (increasing, spanning -90..90) for the time an orbit of
    inclination ``i_deg`` spends at each latitude, for linear interpolation in latitude.

    A circular orbit's geocentric latitude is asin(sin i sin u), the argument of latitude u
    moving uniformly (two-body; common practice for orbit-averaged quantities); the weights
    are the mean of the hat functions of the nodes over ``samples`` values of u. They sum to 1.
    """
    u = (np.arange(samples) + 0.5) * (2.0 * math.pi / samples)
    inclination = math.radians(min(float(i_deg), 180.0 - float(i_deg)))
    lat = np.degrees(np.arcsin(math.sin(inclination) * np.sin(u)))
    nodes = np.asarray(lat_nodes_deg, dtype=float)
    k = np.clip(np.searchsorted(nodes, lat, side="right") - 1, 0, nodes.size - 2)
    f = (lat - nodes[k]) / (nodes[k + 1] - nodes[k])
    weights = np.zeros(nodes.size)
    np.add.at(weights, k, 1.0 - f)
    np.add.at(weights, k + 1, f)
    return weights / samples


@lru_cache(maxsize=32)
def _exponential_profile(level: SolarActivityLevel) -> DensityProfile:
    h = np.arange(0.0, _TOP_KM + 0.5, 1.0)
    return DensityProfile(
        DENSITY_MODEL_NAME,
        f"{level.name} solar activity: {level.meaning}, held constant",
        ("exponential", level.name, level.f107_sfu, level.ap),
        0.0,
        1.0,
        np.log(density_kg_m3(h, level)),
        notes={"table": "Vallado 4th ed. Table 8-4 tabulated every 1 km, 0-2500 km"},
    )


def exponential_profile(solar_activity: str | SolarActivityLevel = "moderate") -> DensityProfile:
    """The exponential atmosphere (``orbitledger.kernel.atmosphere``) at a solar-activity level
    ("low", "moderate", "high" or a ``SolarActivityLevel``) as a profile: ln(rho) every 1 km
    from 0 to 2500 km (above, the 1000-km band's 268 km scale height continues, as in the
    model). Cached per level."""
    return _exponential_profile(solar_activity_level(solar_activity))
