"""The results of a case: what an analyst reads off it, computed by the kernel.

One function serves every face of the product: the editor's results panel, the record's
standard results, ``orbitledger verify`` (which recomputes them from the inputs embedded in a
record and compares) and the trade studies. A result carries its unit, a description and the
tolerance within which a recomputation must agree: analytic results to a part in 1e9,
root-found event times to a second.

Results come in groups. ``FAST_GROUPS`` cost a millisecond or so and are what the editor
recomputes on every keystroke; the others propagate over the analysis window (or over years,
for the lifetime and the budget) and run in the background in the editor.
"""

from __future__ import annotations

from collections.abc import Callable, Iterable, Mapping
from typing import Any

from ..kernel.errors import InputError
from .earth_orientation import earth_orientation_results
from .estimates import check_case_groups
from .imaging import imaging_results
from .orbit_groups import j2_results, orbit_results
from .result import Result
from .window_groups import budget_results, contact_results, eclipse_results, lifetime_results

__all__ = ["ALL_GROUPS", "FAST_GROUPS", "STANDARD_GROUPS", "case_results", "results_as_values"]

_GROUPS: dict[str, Callable[[Any], list[Result]]] = {
    "orbit": orbit_results,
    "j2": j2_results,
    "eclipses": eclipse_results,
    "contacts": contact_results,
    "lifetime": lifetime_results,
    "budget": budget_results,
    "earth_orientation": earth_orientation_results,
    "targets": imaging_results,
}
# Every group is in the editor's results panel, the record's standard results and ``verify``
# (the editor's titles and per-group caches live in ``widgets``, keyed on these names).
ALL_GROUPS = tuple(_GROUPS)
STANDARD_GROUPS = ALL_GROUPS
FAST_GROUPS = ("orbit", "j2")


def case_results(case: Any, groups: Iterable[str] | None = None) -> dict[str, Result]:
    """The named results of ``case`` (an ``orbitledger.case.Case``), in panel order.

    ``groups`` picks result groups (default: all of them, ``STANDARD_GROUPS``); a group that
    does not apply to the case (no stations, no spacecraft, a hyperbolic orbit) gives nothing.
    Raises ``InputError`` for an unknown group name.
    """
    chosen = STANDARD_GROUPS if groups is None else tuple(groups)
    out: dict[str, Result] = {}
    for name in chosen:
        if name not in _GROUPS:
            raise InputError("groups", name, f"unknown result group; known: {', '.join(_GROUPS)}")
    check_case_groups(case, chosen)  # every estimate before any work (analysis.estimates)
    for name in chosen:
        for result in _GROUPS[name](case):
            out[result.name] = result
    return out


def results_as_values(results: Mapping[str, Result]) -> dict[str, float]:
    """``{name: value}``: the plain mapping the editor shows as ``editor.summary``."""
    return {name: r.value for name, r in results.items()}
