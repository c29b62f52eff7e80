"""What the record templates see: the record, put in rows and labels ready to show.

Layout stays in ``templates/orbitrecord``; this module only shapes data (units read off the
field names, sign-off rows for the cover, the one inlined BokehJS with just the components the
figures need). Every string here is plain text; the templates autoescape it.
"""

from __future__ import annotations

import json
import re
from typing import Any

from markupsafe import Markup

from orbitledger.case.units import unit_of

from .filters import format_value, json_for_script
from .record import canonical_dumps
from .run import FIGURE_MIME

__all__ = [
    "constants_table",
    "format_value",
    "inputs_side_by_side",
    "models_side_by_side",
    "record_context",
    "standard_side_by_side",
    "unit_of",
]


_SECTION_ORDER = (
    "epoch_utc", "body", "orbit", "spacecraft", "stations", "window", "earth_orientation",
    "force_model", "burns", "budget", "source", "meta", "schema",
)  # fmt: skip


def _cell(path: str, value: Any) -> dict[str, Any]:
    from .display import UNSET, display_input

    text = display_input(value)  # verify_page.table_values formats with the same function
    return {
        "text": text,
        "numeric": isinstance(value, int | float) and not isinstance(value, bool),
        "unset": text == UNSET,
    }


def _section_of(path: str) -> str:
    head = re.split(r"[.\[]", path, maxsplit=1)[0]
    return head if "." in path or "[" in path else "case"


def _section_key(name: str) -> tuple[int, str]:
    order = ("case", *_SECTION_ORDER)
    return (order.index(name) if name in order else 99, name)


_CASES_PER_TABLE = 4  # columns of values that still fit an A4 page


def inputs_side_by_side(inputs: list[dict[str, Any]]) -> list[dict[str, Any]]:
    """Every input of every case, one row per field, one column per case (4 cases a table).

    Rows are grouped by case-file section; a row whose values differ between the cases is
    marked, so a trade between candidates reads at a glance.
    """
    from .diff import flatten, same_input

    flat = [flatten(json.loads(case["canonical"])) for case in inputs]
    tables = []
    for start in range(0, len(inputs), _CASES_PER_TABLE):
        chunk = list(range(start, min(start + _CASES_PER_TABLE, len(inputs))))
        paths = list(dict.fromkeys(p for i in chunk for p in flat[i]))
        sections: dict[str, list[dict[str, Any]]] = {}
        for path in paths:
            values = [flat[i].get(path) for i in chunk]
            section = _section_of(path)
            field = path[len(section) :].lstrip(".") if section != "case" else path
            sections.setdefault(section, []).append(
                {
                    "field": field,
                    "path": path,
                    "unit": unit_of(path),
                    "cells": [_cell(path, v) for v in values],
                    "differs": len(chunk) > 1 and not all(same_input(v, values[0]) for v in values),
                }
            )
        tables.append(
            {
                "cases": [inputs[i]["name"] for i in chunk],
                "sections": [
                    {"title": name, "rows": sections[name]}
                    for name in sorted(sections, key=_section_key)
                ],
            }
        )
    return tables


def standard_side_by_side(blocks: list[dict[str, Any]]) -> list[dict[str, Any]]:
    """The standard results of every case, one row per result, one column per case."""
    tables = []
    for start in range(0, len(blocks), _CASES_PER_TABLE):
        chunk = blocks[start : start + _CASES_PER_TABLE]
        by_case = [{r["name"]: r for r in b["results"]} for b in chunk]
        names = list(dict.fromkeys(r["name"] for b in chunk for r in b["results"]))
        rows = []
        for name in names:
            first = next(c[name] for c in by_case if name in c)
            rows.append(
                {
                    "name": name,
                    "unit": first["unit"],
                    "description": first["description"],
                    "group": first["group"],
                    "tolerance": _tolerance(first),
                    "cells": [_result_cell(c.get(name)) for c in by_case],
                }
            )
        tables.append({"cases": [b["case"] for b in chunk], "rows": rows})
    return tables


def _result_cell(row: dict[str, Any] | None) -> dict[str, Any]:
    """A standard result as the page shows it: rounded to what its tolerance supports."""
    from .display import display_result

    if row is None:
        return _cell("", None)
    return {**_cell("", row["value"]), "text": display_result(row)}


def _tolerance(row: dict[str, Any]) -> str:
    text = f"rel {row.get('rel_tol', 0):.0e}"
    if row.get("abs_tol"):
        text += f", abs {row['abs_tol']:.0e}"
    return text


def models_side_by_side(models: list[dict[str, Any]]) -> dict[str, Any]:
    """Models and assumptions, one row per topic; one column when every case agrees."""
    if not models:
        return {"cases": [], "rows": []}
    topics = list(dict.fromkeys(item["topic"] for m in models for item in m["items"]))
    values = [{item["topic"]: item["value"] for item in m["items"]} for m in models]
    same = all(v == values[0] for v in values)
    cases = ["all cases"] if same else [m["case"] for m in models]
    rows = []
    for topic in topics:
        cells = [values[0].get(topic, "—")] if same else [v.get(topic, "—") for v in values]
        rows.append({"topic": topic, "cells": cells, "differs": len(set(cells)) > 1})
    return {"cases": cases, "rows": rows}


def constants_table(inputs: list[dict[str, Any]]) -> list[dict[str, Any]]:
    """The constants with their sources, once per distinct set, naming the cases using it."""
    groups: list[dict[str, Any]] = []
    for case in inputs:
        rows = case.get("constants", [])
        for group in groups:
            if group["rows"] == rows:
                group["cases"].append(case["name"])
                break
        else:
            groups.append({"cases": [case["name"]], "rows": rows})
    return [g for g in groups if g["rows"]]


def signoff_row(role: str, s: dict[str, Any] | None) -> dict[str, str]:
    """One sign-off as the cover and the history show it: name, organisation, time,
    certificate SHA-256 and whether it is signed (a typed name is "unsigned")."""
    if not s:
        return {"role": role.capitalize(), "name": "", "org": "", "time": "", "cert": "", "state": ""}
    state = {True: "signed", False: "unsigned"}.get(s.get("signed"), "unknown")
    return {
        "role": role.capitalize(),
        "name": s.get("name") or "(not stated)",
        "org": s.get("org", ""),
        "time": s.get("time_utc", ""),
        "cert": s.get("cert_sha256", ""),
        "state": state,
    }


def _signoff_rows(record: dict[str, Any]) -> list[dict[str, str]]:
    given = {s["role"]: s for s in record.get("signoffs", [])}
    prepared = given.get("prepared") or {**record["prepared"], "signed": False}
    return [signoff_row("prepared", prepared)] + [
        signoff_row(role, given.get(role)) for role in ("checked", "approved")
    ]


def _history_signoffs(record: dict[str, Any]) -> dict[Any, list[dict[str, str]]]:
    """Revision -> its sign-offs: this revision's own chain, earlier ones as the history has them."""
    out = {h["revision"]: [signoff_row(s["role"], s) for s in h.get("signoffs", [])]
           for h in record.get("history", [])}  # fmt: skip
    out[record.get("revision")] = [signoff_row(s["role"], s) for s in record.get("signoffs", [])]
    return out


def _bokeh_js(nb: Any) -> Markup:
    """One inlined BokehJS (bokeh.resources, inline mode) with the components the figures use."""
    items = [
        json.dumps(o["data"][FIGURE_MIME]["item"])
        for c in nb.cells
        for o in c.get("outputs", [])
        if FIGURE_MIME in o.get("data", {})
    ]
    if not items:
        return Markup("")
    from bokeh.models import widgets
    from bokeh.resources import Resources

    text = "".join(items)
    components = ["bokeh"]
    if '"output_backend":"webgl"' in text.replace(" ", ""):
        components.append("bokeh-gl")
    names = set(re.findall(r'"name":\s*"([A-Za-z]+)"', text))
    if names & {"DataTable", "TableColumn"}:
        components += ["bokeh-widgets", "bokeh-tables"]
    elif names & set(widgets.__all__):
        components.append("bokeh-widgets")
    js = "\n".join(Resources(mode="inline", components=components).js_raw)
    return Markup(js.replace("</script", "<\\/script"))


def record_context(record: dict[str, Any], nb: Any) -> dict[str, Any]:
    """The template's view of ``record`` (and of the prepared notebook ``nb``)."""
    from .display import display_result
    from .findings import findings_view
    from .record_page import POLICY, SCRIPT_SOURCES

    rev = record.get("revision")
    inputs = [
        {
            "name": case["name"],
            "title": json.loads(case["canonical"]).get("meta", {}).get("title", ""),
            "fingerprint": case["fingerprint"],
        }
        for case in record.get("inputs", [])
    ]
    code_cells = [
        (i + 1, c.source)
        for i, c in enumerate(nb.cells)
        if c.cell_type == "code" and c.source.strip()
    ]
    narrative_skip = {"decision", "rationale"}
    return {
        "record": record,
        "record_json": json_for_script(canonical_dumps(record)),
        "revision_label": str(rev) if rev is not None else "unrecorded",
        "footer_label": f"{record['record_id']} rev {rev if rev is not None else 'unrecorded'}",
        "signoffs": _signoff_rows(record),
        "history_signoffs": _history_signoffs(record),
        "inputs": inputs,
        "input_tables": inputs_side_by_side(record.get("inputs", [])),
        "constant_groups": constants_table(record.get("inputs", [])),
        "models_table": models_side_by_side(record.get("models", [])),
        "standard_tables": standard_side_by_side(record.get("standard_results", [])),
        "bokeh_js": _bokeh_js(nb),
        "code_cells": code_cells,
        "narrative_skip": narrative_skip,
        "format_value": format_value,
        "show_result": lambda row: display_result(row, record.get("built_utc")),
        "content_security_policy": Markup(POLICY.format(scripts=SCRIPT_SOURCES)),
        "env_rows": _env_rows(record.get("environment", {})),
        "findings": findings_view(record),
    }


def _env_rows(env: dict[str, Any]) -> list[tuple[str, str]]:
    rows = [
        ("orbitledger", env.get("orbitledger", "")),
        ("Python", f"{env.get('python', '')} ({env.get('python_implementation', '')})"),
        ("Platform", env.get("platform", "")),
    ]
    for name, version in sorted(env.get("packages", {}).items()):
        rows.append((name, version))
    commit = env.get("git_commit")
    if commit is None:
        rows.append(("Study folder git commit", "not a git repository"))
    else:
        dirty = "uncommitted changes in the study folder" if env.get("git_dirty") else "clean"
        rows.append(("Study folder git commit", f"{commit} ({dirty})"))
    rows.append(("Built (UTC)", env.get("built_utc", "")))
    return rows
