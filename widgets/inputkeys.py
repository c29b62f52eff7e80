"""What each of the editor's computations depends on, so that an edit recomputes only those.

A result or a figure's kernel work is cached on the physical inputs it reads (the sections of
the case's data it uses), not on the case object: an edit of the title or of a station's mask
gives a new case, but the same key for the trajectory, the budget and the lifetime, so nothing
of theirs is computed again. A key is the canonical JSON of the sections a computation reads
(``orbitledger.case.canonical``); a section not named below counts as an input (a new section
of the case model recomputes everything until it is listed here as unused).

The lists follow what the code of ``orbitledger.analysis`` reads from a case:

- the orbit results (``orbit``, ``j2``): the orbit, the body, the epoch and a TLE source;
- the trajectory over the window (ground track, height and speed, eclipses): everything but
  the stations, the burn plan and the budget;
- station contact: the trajectory's inputs and the stations;
- the lifetime: not the window, the stations or the burn plan;
- the delta-v budget: not the window or the stations (the burn plan is flown from the epoch);
- the Earth orientation values: the epoch, the window and the table named, not the stations,
  the burn plan or the budget;
- none of them reads the imaging sections (``targets``, ``sensor``, ``coverage``): only the
  targets group does, which reads the trajectory's inputs and those, not the stations, the
  burn plan or the budget.
"""

from __future__ import annotations

import threading
from collections import OrderedDict
from collections.abc import Callable
from typing import Any

from orbitledger.analysis import ALL_GROUPS
from orbitledger.case.canonical import canonical_json

__all__ = [
    "CACHE",
    "FIGURE_INPUTS",
    "FIGURE_NEEDS",
    "IGNORED",
    "figure_key",
    "InputCache",
    "inputs_key",
]

# Sections of the case's data that a computation does not read (see the module docstring).
_IMAGING = frozenset({"targets", "sensor", "coverage"})  # read only by the targets group
_NOT_READ_BY_TARGETS = frozenset({"meta", "stations", "burns", "budget"})
_UNREAD: dict[str, frozenset[str]] = {
    "orbit": frozenset({"meta", "stations", "window", "burns", "budget"}) | _IMAGING,
    "j2": frozenset({"meta", "stations", "window", "burns", "budget"}) | _IMAGING,
    "trajectory": frozenset({"meta", "stations", "burns", "budget"}) | _IMAGING,
    "eclipses": frozenset({"meta", "stations", "burns", "budget"}) | _IMAGING,
    "contacts": frozenset({"meta", "burns", "budget"}) | _IMAGING,
    "lifetime": frozenset({"meta", "stations", "window", "burns"}) | _IMAGING,
    "budget": frozenset({"meta", "stations", "window"}) | _IMAGING,
    "one-orbit": frozenset({"meta", "stations", "burns", "budget"}) | _IMAGING,
    # the IERS values used: read at the epoch and over the window
    "earth_orientation": frozenset({"meta", "stations", "burns", "budget"}) | _IMAGING,
    "targets": _NOT_READ_BY_TARGETS,
}


def ignored_sections(
    groups: tuple[str, ...], unread: dict[str, frozenset[str]]
) -> dict[str, frozenset[str]]:
    """The sections each computation may skip: one entry per result group of ``groups``
    (``orbitledger.analysis.ALL_GROUPS``), those listed in ``unread`` with theirs and any other
    with none (it reads the whole case, so it is never served stale), then the computations
    that are not result groups (the trajectory, one orbit)."""
    return {**{g: unread.get(g, frozenset()) for g in groups}, **unread}


IGNORED = ignored_sections(ALL_GROUPS, _UNREAD)

# What each figure's kernel work needs: "orbit" (a conic, analytic: fast), "window" (the
# trajectory over the analysis window: fast for the analytic propagators, seconds for the
# numerical one) or "budget" (the delta-v budget and its disposal search).
FIGURE_NEEDS = {
    "orbit plane": "orbit",
    "inertial view": "orbit",
    "ground track": "window",
    "height and speed": "window",
    "delta-v budget": "budget",
}


# What each figure's drawn data depends on: the inputs of its kernel work, and the parts of
# the case it draws as they are (the stations, the case's title in the legend).
FIGURE_INPUTS: dict[str, tuple[str, ...]] = {
    "orbit plane": ("orbit",),
    "inertial view": ("one-orbit",),
    "ground track": ("trajectory", "stations"),
    "height and speed": ("trajectory",),
    "delta-v budget": ("budget", "title"),
}

_data_lock = threading.Lock()
_data: OrderedDict[int, tuple[Any, dict]] = OrderedDict()


def _case_entry(case: Any) -> tuple[Any, dict, dict]:
    """(case, ``case.to_data()``, memo of keys), once per case object (the last few kept; the
    case is kept with its data, so that its id is not reused meanwhile)."""
    with _data_lock:
        hit = _data.get(id(case))
        if hit is not None and hit[0] is case:
            return hit
    entry = (case, case.to_data(), {})
    with _data_lock:
        _data[id(case)] = entry
        while len(_data) > 8:
            _data.popitem(last=False)
    return entry


def _case_data(case: Any) -> dict:
    return _case_entry(case)[1]


def inputs_key(case: Any, what: str) -> str:
    """The key of computation ``what`` (a name of :data:`IGNORED`) for ``case``: the
    canonical JSON of each section of the case it reads, in the order of their names. Each
    section's text is made once per case and each key once per case and item (an edit asks
    for some twenty keys)."""
    _case, data, memo = _case_entry(case)
    key = memo.get(what)
    if key is None:
        sections = memo.get(None)
        if sections is None:
            sections = memo[None] = {k: canonical_json(v) for k, v in data.items()}
        ignored = IGNORED[what]
        parts = [f"{k}={text}" for k, text in sorted(sections.items()) if k not in ignored]
        key = what + ":" + "\x1e".join(parts)
        memo[what] = key
    return key


def figure_key(name: str, case: Any) -> str | None:
    """The key of the data figure ``name`` draws for ``case``: equal keys, equal drawing (so
    the figure is not updated); None for a figure not listed in :data:`FIGURE_INPUTS`."""
    parts = FIGURE_INPUTS.get(name)
    if parts is None:
        return None
    data = _case_data(case)
    keys = []
    for part in parts:
        if part == "stations":
            keys.append(canonical_json(data.get("stations")))
        elif part == "title":
            keys.append(canonical_json((data.get("meta") or {}).get("title")))
        else:
            keys.append(inputs_key(case, part))
    return "\n".join(keys)


class InputCache:
    """``get(case, what, compute)``: ``compute(case)`` once per inputs key of ``what``; the
    last ``size`` keys of each item are kept. ``name`` tells apart several items with the same
    inputs (the trajectory and the ground track drawn from it). A ``ValueError`` (a result that
    does not apply to the case) is kept like a value and raised again. Safe to use from the
    background thread too."""

    def __init__(self, size: int = 4) -> None:
        self.size = size
        self._lock = threading.Lock()
        self._values: dict[str, OrderedDict[str, tuple[bool, Any]]] = {}
        self.computed: dict[str, int] = {}  # computations done, by item (tests, benchmarks)

    def peek(self, case: Any, what: str, *, name: str | None = None) -> tuple[bool, Any]:
        """(True, value) when the item is cached for ``case``'s inputs, else (False, None);
        a cached refusal is raised."""
        key = inputs_key(case, what)
        with self._lock:
            slot = self._values.get(name or what)
            if slot is None or key not in slot:
                return False, None
            slot.move_to_end(key)
            ok, value = slot[key]
        if not ok:
            raise value
        return True, value

    def get(
        self, case: Any, what: str, compute: Callable[[Any], Any], *, name: str | None = None
    ) -> Any:
        found, value = self.peek(case, what, name=name)
        if found:
            return value
        try:
            outcome = (True, compute(case))
        except ValueError as exc:
            outcome = (False, exc)
        item = name or what
        key = inputs_key(case, what)
        with self._lock:
            slot = self._values.setdefault(item, OrderedDict())
            slot[key] = outcome
            while len(slot) > self.size:
                slot.popitem(last=False)
            self.computed[item] = self.computed.get(item, 0) + 1
        if not outcome[0]:
            raise outcome[1]
        return outcome[1]

    def clear(self) -> None:
        with self._lock:
            self._values.clear()
            self.computed.clear()


#: The cache the editor's figures and results share (one per kernel).
CACHE = InputCache()
