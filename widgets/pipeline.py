"""The computations of an edit, split into what runs at once and what runs in the background.

Every computation is cached on the physical inputs it reads (``inputkeys``), so an edit
recomputes only what it changed: a title edit recomputes nothing, a station edit only the
contacts and the ground track's stations.

- At once (each a millisecond or so): the orbit results (``orbit``, ``j2``) and the figures
  drawn from a conic; with an analytic propagator (two-body, J2 mean elements, SGP4) also the
  trajectory over the window and its figures, up to ``FAST_WINDOW_EPOCHS`` epochs (a longer
  window's trajectory and figures go to the background).
- In the background, with the progress bar and Cancel: the delta-v budget (its disposal search
  integrates the decay many times) and its chart, the numerical propagation over the window
  and its figures, the eclipses, the station contacts and the lifetime.

A background result whose inputs are cached already (an edit that did not touch them) is shown
at once without starting the job.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

from orbitledger import analysis
from orbitledger.analysis import imaging, window_groups

from .casefigures import budget_report, case_trajectory
from .inputkeys import CACHE

__all__ = [
    "BACKGROUND_GROUPS",
    "background_needs",
    "cached_background_results",
    "fast_results",
    "kernel_ready",
    "slow_group",
]

FAST = tuple(analysis.FAST_GROUPS)
# The budget first: it is what the chart waits for, and (with the fast lifetime kernel) quick.
BACKGROUND_GROUPS = ("budget", *(g for g in analysis.ALL_GROUPS if g not in (*FAST, "budget")))


# Epochs over the window above which even an analytic trajectory, its ground track and their
# figures go to the background: one day at 10 s is 8 641 epochs (about 20 ms of kernel work);
# a 30-day window at 10 s, 259 201 epochs, would hold the form for a second.
FAST_WINDOW_EPOCHS = 20_000


def window_epochs(case: Any) -> int:
    """Sample times of the analysis window: 0, step, ..., duration."""
    return int(case.window.duration_s / case.window.step_s + 1e-9) + 1


def heavy_window(case: Any) -> bool:
    """True when the trajectory over the window is a numerical integration (seconds for a
    day or more) or has more than ``FAST_WINDOW_EPOCHS`` epochs, so its figures wait for the
    background job."""
    return case.force_model.propagator == "numerical" or window_epochs(case) > FAST_WINDOW_EPOCHS


def background_needs(case: Any) -> set[str]:
    """The figure needs (``FIGURE_NEEDS`` values) that this case computes in the background."""
    return {"budget", "window"} if heavy_window(case) else {"budget"}


def fast_results(case: Any) -> dict[str, Any]:
    """The orbit groups' results, each group cached on its inputs."""
    out: dict[str, Any] = {}
    for group in FAST:
        out.update(CACHE.get(case, group, lambda c, g=group: analysis.case_results(c, groups=[g])))
    return out


def _closed(case: Any) -> bool:
    return float(case.elements().e) < 1.0


def _budget_group(case: Any) -> dict[str, Any]:
    sc = case.spacecraft
    if case.budget is None or sc is None or sc.isp_s is None or not _closed(case):
        return {}
    rows = window_groups.budget_results(case, report=budget_report(case))
    return {r.name: r for r in rows}


def _window_group(name: str, module: Any = window_groups) -> Callable[[Any], dict[str, Any]]:
    def compute(case: Any) -> dict[str, Any]:
        traj = case_trajectory(case) if _closed(case) else None
        return {r.name: r for r in getattr(module, name)(case, trajectory=traj)}

    return compute


_COMPUTE: dict[str, Callable[[Any], dict[str, Any]]] = {
    "budget": _budget_group,
    "eclipses": _window_group("eclipse_results"),
    "contacts": _window_group("contact_results"),
    "lifetime": lambda c: analysis.case_results(c, groups=["lifetime"]),
    "targets": _window_group("imaging_results", imaging),
}


def slow_group(case: Any, group: str) -> dict[str, Any]:
    """The results of background group ``group`` (cached on its inputs); raises ValueError
    when it does not apply (shown beside the panel)."""
    compute = _COMPUTE.get(group) or (lambda c: analysis.case_results(c, groups=[group]))
    return CACHE.get(case, group, compute, name=f"results:{group}")


def cached_background_results(case: Any) -> tuple[dict[str, Any], list[str], list[str]]:
    """(results, failures, groups still to compute) from what is cached for ``case``."""
    out: dict[str, Any] = {}
    failed: list[str] = []
    missing: list[str] = []
    for group in BACKGROUND_GROUPS:
        try:
            found, value = CACHE.peek(case, group, name=f"results:{group}")
        except ValueError as exc:
            failed.append(f"{group}: {exc}")
            continue
        if found:
            out.update(value)
        else:
            missing.append(group)
    return out, failed, missing


def kernel_ready(case: Any, need: str) -> bool:
    """True when a figure with ``need`` can be drawn without kernel work beyond a conic."""
    items = {"orbit": (), "window": (("trajectory", "track"), ("trajectory", "window-states"))}
    items["budget"] = (("budget", "budget"),)
    try:
        return all(CACHE.peek(case, what, name=name)[0] for what, name in items[need])
    except ValueError:
        return True  # a cached refusal: the figure says why at once
