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

from .build import FIGURE_MIME
from .record import canonical_dumps

__all__ = ["format_value", "record_context", "unit_of"]


# Unit suffixes of case-file field names (docs/case-file.md), longest first.
_UNITS = (
    ("_km3_s2", "km^3/s^2"),
    ("_km2_s2", "km^2/s^2"),
    ("_km2_s", "km^2/s"),
    ("_rad_s", "rad/s"),
    ("_km_s", "km/s"),
    ("_km", "km"),
    ("_deg", "deg"),
    ("_arcsec", "arcsec"),
    ("_kg", "kg"),
    ("_m2", "m^2"),
    ("_utc", "UTC"),
    ("_percent", "%"),
    ("_years", "years"),
    ("_s", "s"),
)


def unit_of(path: str) -> str:
    """The unit a case-file field carries in its name (``orbit.altitude_km`` -> ``km``)."""
    leaf = re.sub(r"\[\d+\]$", "", path.rsplit(".", 1)[-1])
    for suffix, unit in _UNITS:
        if leaf.endswith(suffix):
            return unit
    return ""


def format_value(value: Any) -> str:
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, float):
        return f"{value:.10g}"
    if value is None:
        return "null"
    if isinstance(value, list | dict):
        return json.dumps(value, ensure_ascii=False)
    return str(value)


_SECTION_ORDER = (
    "meta", "epoch_utc", "body", "orbit", "spacecraft", "stations", "window",
    "earth_orientation", "force_model", "burns", "budget", "source", "schema",
)  # fmt: skip


def _cell(path: str, value: Any) -> dict[str, Any]:
    return {
        "text": "—" if value is None else format_value(value),
        "unit": unit_of(path),
        "numeric": isinstance(value, int | float) and not isinstance(value, bool),
        "unset": value is None,
    }


def case_sections(data: dict[str, Any]) -> list[dict[str, Any]]:
    """A case's inputs as small tables: key/value per section, one row per station or burn."""
    from .diff import flatten

    keys = sorted(data, key=lambda k: (_SECTION_ORDER.index(k) if k in _SECTION_ORDER else 99, k))
    general: list[dict[str, Any]] = []
    sections = []
    for key in keys:
        value = data[key]
        if isinstance(value, dict):
            rows = [{"field": p, **_cell(p, v)} for p, v in flatten(value).items()]
            sections.append({"title": key, "kind": "kv", "rows": rows})
        elif isinstance(value, list) and value and all(isinstance(v, dict) for v in value):
            flat = [flatten(v) for v in value]
            columns = list(dict.fromkeys(c for row in flat for c in row))
            sections.append(
                {
                    "title": key,
                    "kind": "table",
                    "columns": [{"name": c, "unit": unit_of(c)} for c in columns],
                    "rows": [[_cell(c, row.get(c)) for c in columns] for row in flat],
                }
            )
        elif isinstance(value, list):
            sections.append(
                {
                    "title": key,
                    "kind": "kv",
                    "rows": [{"field": "(list)", **_cell(key, value or "none")}],
                }
            )
        else:
            general.append({"field": key, **_cell(key, value)})
    if general:
        sections.insert(0, {"title": "case", "kind": "kv", "rows": general})
    return sections


def _signoff_rows(record: dict[str, Any]) -> list[dict[str, str]]:
    rows = [
        {
            "role": "Prepared",
            "name": record["prepared"].get("name") or "(not stated)",
            "time": record["prepared"].get("time_utc", ""),
            "hash": "",
        }
    ]
    given = {s["role"]: s for s in record.get("signoffs", [])}
    for role in ("checked", "approved"):
        s = given.get(role)
        rows.append(
            {
                "role": role.capitalize(),
                "name": s["name"] if s else "",
                "time": s["time_utc"] if s else "",
                "hash": s.get("artifact_sha256", "") if s else "",
            }
        )
    return rows


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
    from .exporter import json_for_script

    rev = record.get("revision")
    inputs = []
    for case in record.get("inputs", []):
        data = json.loads(case["canonical"])
        inputs.append(
            {
                "name": case["name"],
                "title": data.get("meta", {}).get("title", ""),
                "fingerprint": case["fingerprint"],
                "sections": case_sections(data),
                "constants": case.get("constants", []),
            }
        )
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
        "inputs": inputs,
        "bokeh_js": _bokeh_js(nb),
        "code_cells": code_cells,
        "narrative_skip": narrative_skip,
        "format_value": format_value,
        "env_rows": _env_rows(record.get("environment", {})),
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
