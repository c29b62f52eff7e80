"""A case's mission-long environment: beta angle, eclipse seasons, the node's local time.

Translates the case into ``kernel.seasons.mission_seasons``: its orbit as J2 mean elements
(the mean semi-major axis from the osculating one, as the ``j2-mean`` propagator takes it),
its window start, the mission's length (``budget.mission_years``, else one year, or the
``years`` asked) and its Earth orientation. Used by ``orbitledger seasons`` and the figures.
"""

from __future__ import annotations

import dataclasses
import math
from typing import Any

import numpy as np

from ..kernel.design import ltan_drift_h_per_day
from ..kernel.errors import InputError
from ..kernel.j2 import mean_semi_major_axis_km
from ..kernel.seasons import SeasonSeries, eclipse_seasons, mission_seasons
from .inputs import case_earth_orientation

__all__ = ["case_mission_years", "case_seasons", "seasons_summary"]

_YEAR_DAYS = 365.25


def case_mission_years(case: Any) -> float:
    """The mission's length in years: ``budget.mission_years``, else 1."""
    return float(case.budget.mission_years) if case.budget is not None else 1.0


def case_seasons(
    case: Any,
    *,
    years: float | None = None,
    step_days: float = 1.0,
    model: str = "conical",
) -> SeasonSeries:
    """The day-by-day beta angle, shadow and node local time of the case over its mission."""
    body = case.body_constants()
    if body.name.lower() != "earth":
        raise InputError("body.name", body.name, "eclipse seasons and LTAN are for the Earth")
    elements = case.elements()
    if not float(np.asarray(elements.e)) < 1.0:
        raise InputError("orbit.e", float(np.asarray(elements.e)), "seasons need a closed orbit")
    span = case_mission_years(case) if years is None else years
    if not (math.isfinite(span) and 0.0 < span <= 100.0):
        raise InputError("--years", span, "must be more than 0 and at most 100 years")
    if not (math.isfinite(step_days) and 0.01 <= step_days <= 30.0):
        raise InputError("--step-days", step_days, "must be in [0.01, 30] days")
    from .estimates import check_estimate, seasons_estimate

    check_estimate(seasons_estimate(span * _YEAR_DAYS, step_days))  # before any work
    mean = dataclasses.replace(elements, a_km=mean_semi_major_axis_km(elements, body))
    return mission_seasons(
        mean,
        case.epoch_utc,
        span * _YEAR_DAYS,
        start_utc=case.window_start_utc,
        step_days=step_days,
        body=body,
        eop=case_earth_orientation(case),
        model=model,
    )


def seasons_summary(case: Any, series: SeasonSeries) -> dict[str, Any]:
    """JSON-ready statistics of a season series: beta range, shadow, seasons, LTAN drift."""
    seasons = eclipse_seasons(series)
    days = series.offset_s / 86_400.0
    body = case.body_constants()
    elements = case.elements()
    mean = dataclasses.replace(elements, a_km=mean_semi_major_axis_km(elements, body))
    drift_formula = float(ltan_drift_h_per_day(mean, body)) * _YEAR_DAYS
    lit = series.shadow_fraction <= 0.0
    return {
        "days": int(series.offset_s.size),
        "span_days": float(days[-1]) if days.size else 0.0,
        "beta_min_deg": float(np.min(series.beta_deg)),
        "beta_max_deg": float(np.max(series.beta_deg)),
        "max_shadow_s": float(np.max(series.max_shadow_s)),
        "max_shadow_fraction": float(np.max(series.shadow_fraction)),
        "mean_shadow_fraction": float(np.mean(series.shadow_fraction)),
        "days_with_shadow": series.eclipse_days,
        "days_without_shadow": int(np.count_nonzero(lit)),
        "eclipse_seasons": seasons,
        "ltan_h_start": float(series.ltan_h[0]),
        "ltan_h_end": float(series.ltan_h[-1]),
        "ltdn_h_start": float(series.ltdn_h[0]),
        "ltan_drift_h_per_year": series.ltan_drift_h_per_year(),
        "ltan_drift_h_per_year_j2_formula": drift_formula,
        "nodal_period_s": series.period_s,
        "mean_semi_major_axis_km": float(np.asarray(mean.a_km)),
    }
