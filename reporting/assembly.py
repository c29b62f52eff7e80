"""Record assembly: the record (without revision and history) of one executed study.

``assemble_record`` reads the study registry a run emitted (cases, named results, figures),
checks each case file is unchanged, and puts the record together; ``archived_notebook`` is the
executed notebook as the ledger keeps it. Used by ``build`` and by the nbconvert exporter (a
notebook exported without a ledger); it imports neither, so the reporting modules import one way.
"""

from __future__ import annotations

import copy
import json
import re
import warnings
from pathlib import Path
from typing import Any

from . import record as rec
from .figure_items import item_fingerprint
from .ledger_parts import utc_now
from .run import FIGURE_MIME, BuildError
from .safe_bokeh import UnsafeFigure, safe_item

__all__ = ["archived_notebook", "assemble_record"]

_BOKEHJS_LOAD = "application/vnd.bokehjs_load.v0+json"


def archived_notebook(nb: Any) -> Any:
    """The executed notebook as the ledger keeps it: BokehJS loader outputs left out.

    Each loader output carries a full BokehJS (megabytes); the record's figures are in their
    own outputs (``FIGURE_MIME``) and the HTML record inlines one BokehJS of its own.
    """
    nb = copy.deepcopy(nb)
    for cell in nb.cells:
        if cell.cell_type == "code":
            cell.outputs = [
                o for o in cell.get("outputs", []) if _BOKEHJS_LOAD not in o.get("data", {})
            ]
    return nb


def _cases(manifest: dict[str, Any], folder: Path) -> tuple[list[dict[str, Any]], list[Any]]:
    from orbitledger.case import load_case

    entries, cases = [], []
    for noted in manifest["cases"]:
        path = Path(noted["path"])
        case = load_case(path)
        if case.fingerprint != noted["fingerprint"]:
            raise BuildError(f"case file {path} changed while the study ran; build again")
        try:
            name = path.relative_to(folder).as_posix()
        except ValueError:
            name = path.name
        canonical = case.canonical_json()
        entries.append(
            {
                "name": name,
                "fingerprint": case.fingerprint,
                "canonical": canonical,
                "constants": rec.constants_of(case),
            }
        )
        cases.append(case)
    return entries, cases


def _figures(nb: Any) -> list[dict[str, Any]]:
    out = []
    for cell in nb.cells:
        for output in cell.get("outputs", []):
            fig = output.get("data", {}).get(FIGURE_MIME)
            if fig:
                try:  # the record draws the figure as safe_item leaves it (safe_bokeh)
                    item = safe_item(fig["item"], fig["name"])
                except UnsafeFigure as err:
                    raise BuildError(str(err)) from None
                out.append(
                    {
                        "name": fig["name"],
                        "caption": fig.get("caption", ""),
                        "sha256": item_fingerprint(item),
                    }
                )
    return out


def _first_heading(nb: Any) -> str:
    for c in nb.cells:
        if c.cell_type == "markdown":
            for line in c.source.splitlines():
                if line.startswith("# "):
                    return line[2:].strip()
    return ""


def assemble_record(
    nb_path: Path,
    executed: Any,
    manifest: dict[str, Any],
    *,
    note: str = "",
    accept_failing: str | None = None,
) -> dict[str, Any]:
    """The record (without revision and history) of one executed study.

    ``accept_failing``: the reason to record it although a criterion fails (kept in its
    findings and shown on its cover).
    """
    from .findings import record_findings

    nb_path = Path(nb_path).resolve()
    built_utc = utc_now()
    inputs, cases = _cases(manifest, nb_path.parent)
    datas = [json.loads(c["canonical"]) for c in inputs]
    metas = [d.get("meta", {}) for d in datas]
    own = executed.metadata.get("orbitledger", {})
    first = metas[0] if metas else {}
    record_id = (
        own.get("record_id")
        or first.get("record_id")
        or re.sub(r"[^A-Za-z0-9._-]", "-", nb_path.stem)
    )
    title = own.get("title") or _first_heading(executed) or first.get("title") or nb_path.stem
    author = own.get("author") or first.get("author") or ""
    decision = rec.decision_of(rec.notebook_cells(executed), metas)
    named = manifest["results"]
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        standard = [
            {"case": e["name"], "results": rec.standard_results(c)}
            for e, c in zip(inputs, cases, strict=True)
        ]
    notes = [f"{e['name']}: {w}" for e, c in zip(inputs, cases, strict=True) for w in c.warnings()]
    notes += list(dict.fromkeys(str(w.message) for w in caught))
    cells = rec.notebook_cells(executed)
    return {
        "schema": rec.RECORD_SCHEMA,
        "record_id": record_id,
        "revision": None,
        "title": title,
        "status": "draft",
        "built_utc": built_utc,
        "note": note,
        "prepared": {"name": author, "time_utc": built_utc},
        "signoffs": [],
        "decision": decision,
        "cautions": rec.cautions_for(datas),
        "computation_notes": notes,
        "inputs": inputs,
        "models": [
            {"case": e["name"], "items": rec.models_and_assumptions(d)}
            for e, d in zip(inputs, datas, strict=True)
        ],
        "results": named,
        "standard_results": standard,
        "findings": record_findings(inputs, standard, accept_failing),
        "figures": _figures(executed),
        "environment": rec.environment(nb_path.parent, built_utc),
        "notebook": {"name": nb_path.name, "cells": cells},
        "fingerprints": {
            "inputs": rec.inputs_fingerprint(inputs),
            "results": rec.results_fingerprint(named, standard),
            "notebook": rec.notebook_fingerprint(cells),
        },
        "history": [],
    }
