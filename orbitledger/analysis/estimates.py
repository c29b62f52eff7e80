"""Estimates before work: the memory and the work of an analysis, refused above a stated limit.

Before a window is sampled (passes, eclipses, ground track, ephemeris), a numerical trajectory
is integrated or a trade study evaluates its cases (and builds its table of results), the work is estimated from the inputs
alone and refused above the limit with one line giving the estimate, the limit and what to
change (docs/case-file.md, "Work limits"):

``a.case.json: window.step_s = 1.0: over 3650 days would need 187 GiB for the pass search
(limit 512 MiB, ORBITLEDGER_MEMORY_LIMIT); use a larger step or a shorter window``

Two limits, each overridable by an environment variable:

- memory: the bytes of the arrays held at once (``ORBITLEDGER_MEMORY_LIMIT``, default
  512 MiB; written ``2GiB``, ``800MB`` or a number of bytes);
- work: evaluations, one per sampled epoch and station (``ORBITLEDGER_WORK_LIMIT``, default
  1e9). A right-hand side of the numerical integrator is a Python-level call and counts as
  ``RHS_WORK`` evaluations; a case of a trade study as ``CASE_WORK`` plus its own.

The bytes per epoch are peaks traced with ``tracemalloc`` over a one-day window at 1 s for
the starter case (``benchmarks/bench_estimates.py`` prints them), rounded up; the estimate is an
upper bound within a factor of about two, enough to refuse a blow-up before it starts.
"""

from __future__ import annotations

import math
import os
import re
from collections.abc import Iterable
from dataclasses import dataclass
from typing import Any

from ..kernel.errors import InputError
from ..limits import size_text

__all__ = [
    "CASE_WORK",
    "DEFAULT_MEMORY_LIMIT_BYTES",
    "DEFAULT_WORK_LIMIT",
    "MEMORY_LIMIT_ENV",
    "RHS_WORK",
    "WORK_LIMIT_ENV",
    "Estimate",
    "check_case_groups",
    "check_cases",
    "check_estimate",
    "check_window",
    "memory_limit_bytes",
    "numerical_estimate",
    "seasons_estimate",
    "window_estimate",
    "work_limit",
]

MEMORY_LIMIT_ENV = "ORBITLEDGER_MEMORY_LIMIT"
WORK_LIMIT_ENV = "ORBITLEDGER_WORK_LIMIT"
DEFAULT_MEMORY_LIMIT_BYTES = 512 * 2**20
DEFAULT_WORK_LIMIT = 1e9
RHS_WORK = 1_000
"""Evaluations one right-hand side of the numerical integrator counts as (a Python call
against one slot of a numpy array)."""
CASE_WORK = 100_000
"""Evaluations one case of a trade study counts as before its own (building and validating it)."""

# Peak bytes per sampled epoch (tracemalloc, 1 day at 1 s, three stations), rounded up.
_BYTES_PER_EPOCH = {"passes": 400, "groundtrack": 450, "ephemeris": 700, "eclipses": 280}
_BYTES_PER_STATION_EPOCH = 64
_WHAT = {
    "passes": "the pass search",
    "groundtrack": "the ground track",
    "ephemeris": "the ephemeris",
    "eclipses": "the eclipse search",
    "numerical": "the numerical propagation",
    "seasons": "the seasons series",
    "trade": "the trade study's results",
}
# The numerical integrator (DOP853, rtol 1e-10) used 5,387 right-hand sides over one day of
# the 540 km starter orbit (15.2 orbits): about 354 an orbit; 12 a step, about 600 bytes of
# dense output a step.
_RHS_PER_ORBIT = 400
_BYTES_PER_RHS = 50
_ECLIPSE_SAMPLES_PER_ORBIT = 360  # kernel.eclipses.find_eclipses samples at P / 360
_PASS_SAMPLES_PER_ORBIT = 60  # kernel.passes.pass_search_step_s: at most P / 60


@dataclass(frozen=True)
class Estimate:
    """What an analysis would need: ``bytes`` held at once and ``evaluations`` of work.

    ``field`` and ``value`` name the case input to change (``window.step_s``), ``span`` says
    over what (``over 3650 days``), ``advice`` what to do instead.
    """

    analysis: str
    bytes: float
    evaluations: float
    field: str
    value: Any
    span: str
    advice: str

    @property
    def what(self) -> str:
        return _WHAT.get(self.analysis, self.analysis)


_SIZE = re.compile(r"^\s*([0-9]*\.?[0-9]+(?:[eE][-+]?[0-9]+)?)\s*([KMGT]i?B|B|bytes)?\s*$", re.I)
_SCALE = {"": 1, "b": 1, "bytes": 1, "kb": 1e3, "mb": 1e6, "gb": 1e9, "tb": 1e12}
_SCALE |= {"kib": 2**10, "mib": 2**20, "gib": 2**30, "tib": 2**40}


def memory_limit_bytes() -> float:
    """The memory limit: ``ORBITLEDGER_MEMORY_LIMIT`` (``2GiB``, ``800MB``, bytes) or 512 MiB."""
    text = os.environ.get(MEMORY_LIMIT_ENV, "").strip()
    if not text:
        return float(DEFAULT_MEMORY_LIMIT_BYTES)
    match = _SIZE.match(text)
    value = float(match.group(1)) * _SCALE[(match.group(2) or "").lower()] if match else 0.0
    if not (math.isfinite(value) and value > 0.0):
        raise InputError(
            MEMORY_LIMIT_ENV, text, "must be a size such as 512MiB, 2GiB or a number of bytes"
        )
    return value


def work_limit() -> float:
    """The work limit in evaluations: ``ORBITLEDGER_WORK_LIMIT`` (a number) or 1e9."""
    text = os.environ.get(WORK_LIMIT_ENV, "").strip()
    if not text:
        return DEFAULT_WORK_LIMIT
    try:
        value = float(text)
    except ValueError:
        value = 0.0
    if not (math.isfinite(value) and value > 0.0):
        raise InputError(WORK_LIMIT_ENV, text, "must be a positive number of evaluations")
    return value


def _count(n: float) -> str:
    return f"{n:,.0f}" if n < 1e7 else f"{n:.3g}"


def check_estimate(
    estimate: Estimate, *, memory_limit: float | None = None, limit_name: str = MEMORY_LIMIT_ENV
) -> None:
    """Raise ``InputError`` naming the estimate's field when it is over either limit.

    ``memory_limit`` (bytes), when given, stands for ``ORBITLEDGER_MEMORY_LIMIT`` and is named
    ``limit_name`` in the message (a caller's own argument, such as ``max_memory_bytes``).
    """
    memory = memory_limit_bytes() if memory_limit is None else float(memory_limit)
    work = work_limit()
    if estimate.bytes > memory:
        need = f"{size_text(estimate.bytes)} for {estimate.what}"
        limit = f"limit {size_text(memory)}, {limit_name}"
    elif estimate.evaluations > work:
        need = f"about {_count(estimate.evaluations)} evaluations for {estimate.what}"
        limit = f"limit {_count(work)}, {WORK_LIMIT_ENV}"
    else:
        return
    raise InputError(
        estimate.field,
        estimate.value,
        f"{estimate.span} would need {need} ({limit}); {estimate.advice}",
    )


def _period_s(case: Any) -> float | None:
    """The two-body period of the case's orbit, or None for an open one."""
    elements = case.elements()
    a, e = float(elements.a_km), float(elements.e)
    if not (a > 0.0 and 0.0 <= e < 1.0):
        return None
    return 2.0 * math.pi * math.sqrt(a**3 / case.body_constants().mu_km3_s2)


def _days(duration_s: float) -> str:
    return f"over {duration_s / 86_400.0:.4g} days"


def _numerical(case: Any, duration_s: float, period_s: float) -> Estimate:
    # Integrated from the epoch to the window's end (propagation.trajectory).
    start = 0.0
    if case.window.start_utc is not None:
        from ..case.utc import utc_seconds_between

        start = max(0.0, utc_seconds_between(case.epoch_utc, case.window.start_utc))
    rhs = _RHS_PER_ORBIT * (start + duration_s) / period_s
    if start > duration_s:  # most of the integration is the way from the epoch to the start
        field, value = "window.start_utc", case.window.start_utc
        advice = 'start the window nearer the epoch or use force_model.propagator "j2-mean"'
    else:
        field, value = "window.duration_s", duration_s
        advice = 'use a shorter window or force_model.propagator "j2-mean"'
    return Estimate(
        "numerical",
        rhs * _BYTES_PER_RHS,
        rhs * RHS_WORK,
        field,
        value,
        _days(start + duration_s) + " from the epoch" if start else _days(duration_s),
        advice,
    )


def numerical_estimate(case: Any, duration_s: float | None = None) -> Estimate:
    """The numerical propagation of the case over its window (or ``duration_s`` from its start)."""
    duration = float(case.window.duration_s if duration_s is None else duration_s)
    return _numerical(case, duration, _period_s(case) or duration)


def seasons_estimate(span_days: float, step_days: float, samples_per_orbit: int = 720) -> Estimate:
    """The seasons series: one orbit every ``step_days`` over ``span_days``, each sampled at
    ``samples_per_orbit`` points (``kernel.seasons``, in chunks, so its memory is bounded)."""
    orbits = span_days / step_days + 1.0
    return Estimate(
        "seasons",
        0.0,
        orbits * samples_per_orbit,
        "--step-days",
        step_days,
        f"over {span_days / 365.25:.4g} years",
        "use a larger --step-days or fewer --years",
    )


def window_estimate(
    case: Any, analysis: str, *, step_s: float | None = None, step_field: str = "window.step_s"
) -> Estimate:
    """The estimate of ``analysis`` (``passes``, ``eclipses``, ``groundtrack``, ``ephemeris``,
    ``numerical``) over the case's analysis window (sampled every ``step_s`` when given, an
    option named ``step_field``, instead of ``window.step_s``)."""
    duration = float(case.window.duration_s)
    step = float(case.window.step_s if step_s is None else step_s)
    period = _period_s(case)
    span = _days(duration)
    if analysis == "numerical":
        return numerical_estimate(case)
    if analysis == "eclipses":
        samples = duration / (period / _ECLIPSE_SAMPLES_PER_ORBIT) if period else 0.0
        return Estimate(
            analysis,
            samples * _BYTES_PER_EPOCH[analysis],
            samples,
            "window.duration_s",
            duration,
            span,
            "use a shorter window (the seasons verb covers months and years)",
        )
    stations = len(case.stations) if analysis == "passes" else 0
    if analysis == "passes" and period:
        step = min(step, period / _PASS_SAMPLES_PER_ORBIT)
    epochs = duration / step + 2.0
    per_epoch = _BYTES_PER_EPOCH[analysis] + _BYTES_PER_STATION_EPOCH * stations
    field, value, advice = (
        step_field,
        case.window.step_s if step_s is None else step_s,
        "use a larger step or a shorter window",
    )
    if (
        stations > 1
        and epochs * (_BYTES_PER_EPOCH[analysis] + _BYTES_PER_STATION_EPOCH)
        <= memory_limit_bytes()
        < epochs * per_epoch
    ):
        field, value = "stations", f"{stations:,} stations"
        advice = "use fewer stations, a larger step or a shorter window"
    return Estimate(
        analysis, epochs * per_epoch, epochs * max(1, stations), field, value, span, advice
    )


def check_window(case: Any, analysis: str) -> None:
    """Refuse ``analysis`` of the case over its window when it is over a limit (and the
    numerical propagation under it, when the case asks for one)."""
    if analysis != "numerical" and case.force_model.propagator == "numerical":
        check_window(case, "numerical")
    check_estimate(window_estimate(case, analysis))


# Result groups (analysis.results) -> the window analyses they run.
_GROUP_ANALYSES = {"eclipses": ("eclipses",), "contacts": ("passes",)}


def _group_estimates(case: Any, groups: Iterable[str]) -> list[Estimate]:
    analyses = {a for g in groups for a in _GROUP_ANALYSES.get(g, ())}
    if not analyses or _period_s(case) is None:
        return []
    if "passes" in analyses and not case.stations:
        analyses.discard("passes")
    if analyses and case.force_model.propagator == "numerical":
        analyses.add("numerical")
    return [window_estimate(case, a) for a in sorted(analyses)]


def check_case_groups(case: Any, groups: Iterable[str]) -> None:
    """Refuse the result ``groups`` of a case (``analysis.case_results``) over a limit."""
    for estimate in _group_estimates(case, groups):
        check_estimate(estimate)


def check_cases(case: Any, groups: Iterable[str], cases: int, *, field: str = "vary") -> None:
    """Refuse a trade study of ``cases`` cases like ``case`` over the work limit (each case
    alone is checked as ``check_case_groups`` does; the cases run one after another)."""
    estimates = _group_estimates(case, list(groups))
    for estimate in estimates:
        check_estimate(estimate)
    per_case = CASE_WORK + sum(e.evaluations for e in estimates)
    total = cases * per_case
    limit = work_limit()
    if total > limit:
        raise InputError(
            field,
            f"{cases:,} cases",
            f"would need about {_count(total)} evaluations ({_count(per_case)} a case; limit "
            f"{_count(limit)}, {WORK_LIMIT_ENV}); coarsen the grid, use fewer samples or a "
            "shorter window",
        )
