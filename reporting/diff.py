"""What changed between two records: inputs path by path, results name by name.

The same comparison serves ``orbitledger diff`` (side by side, changes marked) and the
automatic summary in each revision-history entry of a record.
"""

from __future__ import annotations

import json
from dataclasses import dataclass
from typing import Any

__all__ = [
    "BY_NAME",
    "Change",
    "diff_records",
    "flatten",
    "format_side_by_side",
    "same_input",
    "summary_lines",
]


@dataclass(frozen=True)
class Change:
    """One difference: ``where`` is ``inputs`` / ``results`` / ``standard``; old/new None if absent."""

    where: str
    item: str
    path: str
    old: Any
    new: Any
    unit: str = ""

    @property
    def kind(self) -> str:
        if self.old is None:
            return "added"
        if self.new is None:
            return "removed"
        return "changed"


# Lists whose order means nothing: their items are matched by name across cases and
# revisions (``budget.allowances['collision avoidance'].dv_km_s``), so that one case's
# "launch dispersion correction" is never set against another's "collision avoidance".
BY_NAME = frozenset({"budget.allowances", "stations"})


def _item_keys(value: list[Any], prefix: str) -> list[str]:
    names = [v.get("name") if isinstance(v, dict) else None for v in value]
    named = all(isinstance(n, str) and n and "'" not in n for n in names)
    if prefix in BY_NAME and named and len(set(names)) == len(names):
        return [f"{prefix}['{n}']" for n in names]
    return [f"{prefix}[{i}]" for i in range(len(value))]


def flatten(value: Any, prefix: str = "") -> dict[str, Any]:
    """``{"orbit.altitude_km": 540.0, "stations['Kiruna'].lat_deg": ...}`` from nested JSON
    data; items of the lists in ``BY_NAME`` keyed by their name (in their order), others by
    position."""
    out: dict[str, Any] = {}
    if isinstance(value, dict):
        for key in sorted(value):
            out.update(flatten(value[key], f"{prefix}.{key}" if prefix else str(key)))
    elif isinstance(value, list) and value and any(isinstance(v, dict | list) for v in value):
        for key, item in zip(_item_keys(value, prefix), value, strict=True):
            out.update(flatten(item, key))
    else:
        out[prefix] = value
    return out


def same_input(a: Any, b: Any) -> bool:
    """Two values of one input path are the same as the inputs table shows them ([] as unset)."""
    from .display import UNSET, display_input

    def kind(v: Any) -> str:
        number = isinstance(v, int | float) and not isinstance(v, bool)
        return "number" if number else type(v).__name__

    shown = display_input(a)
    return shown == display_input(b) and (shown == UNSET or kind(a) == kind(b))


def _case_fields(record: dict[str, Any]) -> dict[str, dict[str, Any]]:
    return {c["name"]: flatten(json.loads(c["canonical"])) for c in record.get("inputs", [])}


def _named(record: dict[str, Any]) -> dict[str, dict[str, Any]]:
    return {r["name"]: r for r in record.get("results", [])}


def _standard(record: dict[str, Any]) -> dict[str, dict[str, Any]]:
    out = {}
    for block in record.get("standard_results", []):
        for r in block["results"]:
            out[f"{block['case']}: {r['name']}"] = r
    return out


def diff_records(old: dict[str, Any], new: dict[str, Any]) -> list[Change]:
    """Every difference in inputs, named results and standard results from ``old`` to ``new``."""
    changes: list[Change] = []
    old_cases, new_cases = _case_fields(old), _case_fields(new)
    for case in sorted(set(old_cases) | set(new_cases)):
        a, b = old_cases.get(case, {}), new_cases.get(case, {})
        for path in sorted(set(a) | set(b)):
            if not same_input(a.get(path), b.get(path)):
                changes.append(Change("inputs", case, path, a.get(path), b.get(path)))
    for where, get in (("results", _named), ("standard", _standard)):
        a, b = get(old), get(new)
        for name in list(dict.fromkeys([*b, *a])):  # record order: the panel's order
            va = a[name]["value"] if name in a else None
            vb = b[name]["value"] if name in b else None
            if va != vb:
                unit = (b.get(name) or a.get(name) or {}).get("unit", "")
                changes.append(Change(where, name, "", va, vb, unit))
    return changes


def _show(value: Any) -> str:
    if value is None:
        return "-"
    if isinstance(value, float):
        return f"{value:.10g}"
    return json.dumps(value, ensure_ascii=False) if not isinstance(value, str) else value


def _line(c: Change) -> str:
    label = f"{c.item}: {c.path}" if c.path else f"result {c.item}"
    unit = f" {c.unit}" if c.unit else ""
    return f"{label} {c.kind}: {_show(c.old)} -> {_show(c.new)}{unit}"


def summary_lines(changes: list[Change], limit: int = 6) -> list[str]:
    """A few plain lines saying what changed (for a revision-history entry).

    Every changed input and named result (up to ``limit`` of each), then one line per case
    for its standard results: how many changed, and the first few in the record's order.
    """
    if not changes:
        return ["no change in inputs or results"]
    lines: list[str] = []
    for where, noun in (("inputs", "input"), ("results", "named result")):
        rows = [c for c in changes if c.where == where]
        lines += [_line(c) for c in rows[:limit]]
        if len(rows) > limit:
            lines.append(f"... and {len(rows) - limit} more {noun} changes")
    by_case: dict[str, list[Change]] = {}
    for c in changes:
        if c.where == "standard":
            case, _, name = c.item.partition(": ")
            by_case.setdefault(case, []).append(Change(c.where, name, "", c.old, c.new, c.unit))
    for case, rows in by_case.items():
        shown = "; ".join(_line(c).removeprefix("result ") for c in rows[:3])
        more = f"; ... ({len(rows) - 3} more)" if len(rows) > 3 else ""
        lines.append(f"standard results of {case}: {len(rows)} changed: {shown}{more}")
    return lines


def format_side_by_side(changes: list[Change], rev_a: int, rev_b: int) -> str:
    """The text of ``orbitledger diff``: one table per kind, a marker on every changed row."""
    if not changes:
        return f"revisions {rev_a} and {rev_b}: identical inputs and results\n"
    out = []
    titles = {"inputs": "Inputs", "results": "Named results", "standard": "Standard results"}
    for where in ("inputs", "results", "standard"):
        rows = [c for c in changes if c.where == where]
        if not rows:
            continue
        left = [f"{c.item}: {c.path}" if c.path else c.item for c in rows]
        width = max(len(s) for s in left + [titles[where]])
        out.append(
            f"{titles[where]:<{width}}  {'rev ' + str(rev_a):>22}  {'rev ' + str(rev_b):>22}"
        )
        for label, c in zip(left, rows, strict=True):
            mark = {"added": "+", "removed": "-", "changed": "*"}[c.kind]
            unit = f" {c.unit}" if c.unit else ""
            out.append(f"{label:<{width}}  {_show(c.old):>22}  {_show(c.new):>22}{unit}  {mark}")
        out.append("")
    out.append("* changed   + added   - removed")
    return "\n".join(out) + "\n"
