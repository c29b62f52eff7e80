"""The metrics of a trade study: what is evaluated for each case, and how.

A metric is a named result of a case, with its unit in its name (``period_s``,
``contact_min_per_day``, ``longest_eclipse_s``, ``lifetime_years``). The names and units are
those of ``orbitledger.analysis.case_results``, the one function that computes a case's
results, so that a sweep and the single-case views agree. Metrics come in groups:

- vectorised across cases, with no Python loop per case: ``orbit`` (the two-body summary),
  ``j2`` (secular rates, sun-synchronous inclination and offset) and ``repeat_track`` (the
  repeat-ground-track mismatch, see :func:`repeat_track_metrics`). The kernel functions take
  arrays of elements; the elements of every case are built at once from the varied inputs.
- per case, through ``case_results(case, [group])``: ``eclipses``, ``contacts`` (passes and
  contact minutes per day), ``lifetime``, ``budget`` (the delta-v budget) and ``targets``
  (target revisit and region coverage, see ``analysis.imaging``). These propagate
  over the analysis window (or over years), so they are the ones worth a cluster.

Where a varied input changes the orbit in a way the vectorised path does not model (a body
constant, a Cartesian state), the orbit and J2 metrics are computed per case instead; the
values are the same, only slower.

A group that does not apply to a case (no stations, no spacecraft, a hyperbolic orbit, no
sun-synchronous inclination at that size) gives NaN in its columns for that case.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..kernel.elements import Elements
from ..kernel.errors import InputError
from .case_elements import vector_elements, vectorisable

__all__ = [
    "CASE_GROUPS",
    "METRIC_GROUPS",
    "VECTOR_GROUPS",
    "MetricSelection",
    "repeat_track_metrics",
    "resolve_metrics",
    "vector_elements",
    "vector_metrics",
    "vectorisable",
]

VECTOR_GROUPS = ("orbit", "j2", "repeat_track")
CASE_GROUPS = ("eclipses", "contacts", "lifetime", "budget", "targets")
METRIC_GROUPS = VECTOR_GROUPS + CASE_GROUPS

# Orbit-group result name -> the kernel quantity it is (elements field or orbit_summary key).
_ELEMENT_NAMES = {"semi_major_axis_km": "a_km", "eccentricity": "e", "inclination_deg": "i_deg"}
# J2-group result name -> key of kernel.j2_secular_rates.
_RATE_NAMES = {
    "raan_rate_deg_per_day": "raan_deg_per_day",
    "argp_rate_deg_per_day": "argp_deg_per_day",
    "mean_anomaly_rate_deg_per_day": "mean_anomaly_deg_per_day",
}
_SSO_NAMES = ("sun_synchronous_inclination_deg", "sun_synchronous_offset_deg")
REPEAT_COLUMNS = {"repeat_track_mismatch_km": "km", "repeat_track_sma_offset_km": "km"}

# Rough number of columns per group, for the memory estimate only.
GROUP_WIDTH = {
    "orbit": 21,
    "j2": 5,
    "repeat_track": 2,
    "eclipses": 6,
    "contacts": 5,
    "lifetime": 2,
    "budget": 4,
    "targets": 80,
}


@dataclass(frozen=True)
class MetricSelection:
    """The resolved metrics: groups to evaluate, the columns to keep, their units.

    ``columns`` is the order of the metric columns of the result; ``units`` maps each to
    its unit (as ``Result.unit``); ``repeat`` is the repeat cycle (revolutions, days) of the
    ``repeat_track`` group, or None.
    """

    groups: tuple[str, ...]
    columns: tuple[str, ...]
    units: Mapping[str, str]
    repeat: tuple[int, int] | None = None

    @property
    def vector_groups(self) -> tuple[str, ...]:
        return tuple(g for g in self.groups if g in VECTOR_GROUPS)

    @property
    def case_groups(self) -> tuple[str, ...]:
        return tuple(g for g in self.groups if g in CASE_GROUPS)


def _probe_case(base: Any, groups: Sequence[str]) -> Any:
    """The base case with a window of one and a half orbits: enough to learn the names of
    the window groups' results (per-orbit eclipse fractions need one whole orbit)."""
    if not set(groups) & {"eclipses", "contacts"}:
        return base
    elements = base.elements()
    if float(elements.e) < 1.0:
        period_s = (
            2.0 * math.pi * math.sqrt(float(elements.a_km) ** 3 / base.body_constants().mu_km3_s2)
        )
        duration_s = 1.5 * period_s
    else:
        duration_s = 3600.0
    step_s = min(base.window.step_s, duration_s)
    return base.with_changes({"window.duration_s": duration_s, "window.step_s": step_s})


def _group_columns(base: Any, groups: Sequence[str]) -> dict[str, tuple[str, str]]:
    """{column: (group, unit)} of ``groups``, names and units as case_results gives them."""
    from ..analysis import case_results

    out: dict[str, tuple[str, str]] = {}
    analysis_groups = [g for g in groups if g != "repeat_track"]
    if analysis_groups:
        probe = _probe_case(base, analysis_groups)
        for name, result in case_results(probe, analysis_groups).items():
            out[name] = (result.group, result.unit)
    if "j2" in groups:  # present even when the base case has no sun-synchronous solution
        for name in _SSO_NAMES:
            out.setdefault(name, ("j2", "deg"))
    if "repeat_track" in groups:
        out.update({name: ("repeat_track", unit) for name, unit in REPEAT_COLUMNS.items()})
    return out


def resolve_metrics(
    base: Any, metrics: Sequence[str] | str, repeat: Sequence[int] | None = None
) -> MetricSelection:
    """Metric names or group names (``"orbit"``, ``"contacts"``...) -> a MetricSelection.

    ``metrics`` may be a comma-separated string. A column name selects that column (and
    evaluates its group); a group name selects every column the group gives. Unknown names
    are refused with the known ones listed. ``repeat`` = (revolutions, days) is needed by
    the ``repeat_track`` group.
    """
    names = [m.strip() for m in metrics.split(",")] if isinstance(metrics, str) else list(metrics)
    names = [n for n in names if n]
    if not names:
        raise InputError("metrics", metrics, f"name at least one of {', '.join(METRIC_GROUPS)}")
    repeat_cycle = _check_repeat(repeat) if repeat is not None else None
    requested_groups = [n for n in names if n in METRIC_GROUPS]
    singles = [n for n in names if n not in METRIC_GROUPS]
    known: dict[str, tuple[str, str]] = {}
    if singles:
        known = _group_columns(base, METRIC_GROUPS)
        for name in singles:
            if name not in known:
                raise InputError(
                    "metrics",
                    name,
                    f"unknown metric; groups: {', '.join(METRIC_GROUPS)}; "
                    f"metrics: {', '.join(known)}",
                )
    groups = tuple(dict.fromkeys(requested_groups + [known[n][0] for n in singles]))
    if "repeat_track" in groups and repeat_cycle is None:
        raise InputError(
            "repeat",
            None,
            "the repeat_track metrics need the repeat cycle: revolutions and days, e.g. 15:1",
        )
    columns_of = _group_columns(base, groups) if not known else known
    columns: list[str] = []
    for name in names:
        if name in METRIC_GROUPS:
            columns += [c for c, (g, _u) in columns_of.items() if g == name]
        else:
            columns.append(name)
    columns = list(dict.fromkeys(columns))
    units = {c: columns_of[c][1] for c in columns}
    return MetricSelection(groups, tuple(columns), units, repeat_cycle)


def _check_repeat(repeat: Sequence[int]) -> tuple[int, int]:
    try:
        k, m = (float(x) for x in repeat)
    except (TypeError, ValueError):
        raise InputError("repeat", repeat, "give (revolutions, days), e.g. (15, 1)") from None
    for value in (k, m):
        if not (math.isfinite(value) and value >= 1 and value == round(value)):
            raise InputError("repeat", repeat, "revolutions and days must be whole numbers >= 1")
    return int(k), int(m)


# --- the vectorised groups -------------------------------------------------------------------


def _orbit_columns(elements: Any, body: Any, names: Sequence[str]) -> dict[str, np.ndarray]:
    from ..kernel.summary import orbit_summary

    summary = orbit_summary(elements, body=body)
    # On closed orbits only the open-orbit quantities are non-finite (and those are not
    # columns of a closed base case): the finiteness pass is needed only with open orbits.
    closed = bool(np.all(np.asarray(elements.e) < 1.0))
    out: dict[str, np.ndarray] = {}
    for name in names:
        if name in _ELEMENT_NAMES:
            out[name] = np.asarray(getattr(elements, _ELEMENT_NAMES[name]), dtype=float)
        elif name in summary:
            column = np.asarray(summary[name], dtype=float)
            if not closed and not np.isfinite(column).all():  # omitted by case_results
                column = np.where(np.isfinite(column), column, np.nan)
            out[name] = column
    return out


def _closed_stand_in(elements: Any, body: Any) -> tuple[Any, np.ndarray, np.ndarray, Any]:
    """(closed mask or True, a, e, i_deg) with open orbits replaced by a stand-in circle
    (they have no secular J2 drift; their values are blanked afterwards)."""
    a = np.asarray(elements.a_km, dtype=float)
    e = np.asarray(elements.e, dtype=float)
    closed = e < 1.0
    if np.all(closed):
        return True, a, e, np.asarray(elements.i_deg, dtype=float)
    a = np.where(closed, a, body.radius_km + 1000.0)
    return closed, a, np.where(closed, e, 0.0), np.asarray(elements.i_deg, dtype=float)


def _blank_open(closed: Any, column: np.ndarray) -> np.ndarray:
    return column if closed is True else np.where(closed, column, np.nan)


def _j2_columns(elements: Any, body: Any, names: Sequence[str]) -> dict[str, np.ndarray]:
    from ..kernel.j2 import (
        SUN_MEAN_RATE_RAD_S,
        j2_secular_rates,
        j2_secular_rates_rad_s,
        sun_synchronous_inclination_deg,
    )

    closed, a, e, i_deg = _closed_stand_in(elements, body)
    out: dict[str, np.ndarray] = {}
    if set(names) & set(_RATE_NAMES):
        rates = j2_secular_rates(Elements(a, e, i_deg, 0.0, 0.0, 0.0), body=body)
        for name, key in _RATE_NAMES.items():
            if name in names:
                out[name] = _blank_open(closed, np.asarray(rates[key], dtype=float))
    if set(names) & set(_SSO_NAMES):
        try:
            i_sso = _blank_open(
                closed, np.asarray(sun_synchronous_inclination_deg(a, e, body=body))
            )
        except InputError:
            # Some cases have no sun-synchronous inclination: it exists where the node, at
            # i = 0, turns at least as fast as the Sun (the kernel's own rate says where).
            raan_at_0, _argp, _m = j2_secular_rates_rad_s(a, e, 0.0, body)
            exists = (closed & (np.abs(raan_at_0) >= SUN_MEAN_RATE_RAD_S)) & (body.j2 > 0.0)
            i_sso = np.full(np.broadcast_shapes(a.shape, e.shape), np.nan)
            if np.any(exists):
                a_x, e_x = np.broadcast_arrays(a, e)
                i_sso[exists] = sun_synchronous_inclination_deg(a_x[exists], e_x[exists], body=body)
        if "sun_synchronous_inclination_deg" in names:
            out["sun_synchronous_inclination_deg"] = i_sso
        if "sun_synchronous_offset_deg" in names:
            out["sun_synchronous_offset_deg"] = i_deg - i_sso
    return out


def repeat_track_metrics(
    elements: Any, body: Any, revolutions: int, days: int
) -> dict[str, np.ndarray]:
    """How far an orbit is from repeating its ground track after k revolutions in m days.

    Given mean elements (arrays broadcast; e < 1), the body (mu, R, J2, rotation rate) and
    the cycle (k = ``revolutions``, m = ``days``). Returned, km:

    - ``repeat_track_mismatch_km``: the east-west shift, along the equator, of the ascending
      node crossing after k nodal periods: R (2 pi m - k T_n (omega_E - dRAAN/dt)), with the
      nodal period T_n = 2 pi / (dM/dt + dargp/dt); positive east. Zero on an exact repeat
      (the repeat condition k (omega_E - dRAAN/dt) = m (dM/dt + dargp/dt), Vallado 4th ed.,
      Sec. 11.4.2; Wertz et al., New SMAD (2011), Sec. 10.4).
    - ``repeat_track_sma_offset_km``: a minus the repeat-ground-track semi-major axis at the
      same i and e (``kernel.repeat_ground_track_sma_km``).
    """
    from ..kernel.design import repeat_ground_track_sma_km
    from ..kernel.j2 import j2_secular_rates_rad_s

    closed, a_c, e_c, i_deg = _closed_stand_in(elements, body)
    raan_rate, argp_rate, m_rate = j2_secular_rates_rad_s(a_c, e_c, np.radians(i_deg), body)
    nodal_period_s = 2.0 * np.pi / (m_rate + argp_rate)
    turned = revolutions * nodal_period_s * (body.rotation_rate_rad_s - raan_rate)
    shift = body.radius_km * (2.0 * np.pi * days - turned)
    a_repeat = repeat_ground_track_sma_km(revolutions, days, i_deg, e_c, body=body)
    return {
        "repeat_track_mismatch_km": _blank_open(closed, shift),
        "repeat_track_sma_offset_km": _blank_open(closed, a_c - a_repeat),
    }


def vector_metrics(
    elements: Any, body: Any, selection: MetricSelection, groups: Sequence[str], count: int
) -> dict[str, np.ndarray]:
    """The columns of the vectorised ``groups`` for elements of ``count`` cases (arrays)."""
    wanted = [c for c in selection.columns if c not in REPEAT_COLUMNS]
    out: dict[str, np.ndarray] = {}
    if "orbit" in groups:
        out.update(_orbit_columns(elements, body, wanted))
    if "j2" in groups:
        out.update(_j2_columns(elements, body, wanted))
    if "repeat_track" in groups and selection.repeat is not None:
        found = repeat_track_metrics(elements, body, *selection.repeat)
        out.update({k: v for k, v in found.items() if k in selection.columns})
    for name, column in out.items():  # an input that does not vary gives a constant column
        if np.shape(column) != (count,):
            out[name] = np.full(count, float(np.asarray(column)))
    return out
