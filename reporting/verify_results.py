"""verify: what the record derives from its inputs, derived again; tolerances from the software.

``check_derived(report, record, cases)`` adds, for a record whose cases read back
(``verify._check_inputs``):

- every standard result of every case is in the record (a deleted row is named), and the
  tolerance the record states for it is the one this orbitledger uses (``verify`` compares
  with the software's tolerance, never with the file's: a tolerance of 1 written into the file
  buys nothing);
- the decision and rationale are those of the embedded notebook's cells tagged
  ``decision`` / ``rationale`` (else the first case's meta), so they are covered by the
  notebook and inputs fingerprints;
- the cautions, the models and assumptions and the constants with their sources, derived again
  from the embedded inputs.

A record built by another orbitledger may state other tolerances, models or cautions; the
line then says which version built it.
"""

from __future__ import annotations

import json
import warnings
from typing import Any

from orbitledger._version import __version__

from . import record as rec

__all__ = ["check_derived", "software_tolerances"]


def software_tolerances(model: Any) -> dict[str, tuple[float, float]]:
    """{result name: (rel_tol, abs_tol)} as this orbitledger computes the case ``model``."""
    from orbitledger.analysis import case_results

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # verify's recomputation reports the warnings
        fresh = case_results(model)
    return {name: (float(r.rel_tol), float(r.abs_tol)) for name, r in fresh.items()}


def _version_note(record: dict[str, Any]) -> str:
    built = str(record.get("environment", {}).get("orbitledger", "?"))
    return (
        ""
        if built == __version__
        else f" (record built by orbitledger {built}, this is {__version__})"
    )


def _check_standard_rows(report: Any, record: dict[str, Any], cases: list[tuple[str, Any]]) -> None:
    by_case = {b.get("case"): b.get("results", []) for b in record.get("standard_results", [])}
    for name, model in cases:
        tolerances = software_tolerances(model)
        stated = {r.get("name"): r for r in by_case.get(name, [])}
        missing = [n for n in tolerances if n not in stated]
        report.add(
            f"standard results of {name}: all {len(tolerances)} present",
            not missing,
            ""
            if not missing
            else f"missing from the record: {', '.join(missing[:6])}" + _version_note(record),
        )
        wrong = []
        for result, (rel, abs_) in tolerances.items():
            row = stated.get(result)
            if row is None:
                continue
            try:
                same = float(row.get("rel_tol")) == rel and float(row.get("abs_tol")) == abs_
            except (TypeError, ValueError):
                same = False
            if not same:
                wrong.append(
                    f"{result}: the record states rel {row.get('rel_tol')}, abs {row.get('abs_tol')}; "
                    f"orbitledger uses rel {rel:g}, abs {abs_:g}"
                )
        report.add(
            f"standard results of {name}: tolerances as the software sets them",
            not wrong,
            "; ".join(wrong[:3]) + (_version_note(record) if wrong else ""),
        )


def _same(a: Any, b: Any) -> bool:
    return json.dumps(a, sort_keys=True) == json.dumps(b, sort_keys=True)


def check_derived(report: Any, record: dict[str, Any], cases: list[tuple[str, Any]]) -> None:
    """Every check of the module docstring (``cases``: (name, case model) that read back)."""
    _check_standard_rows(report, record, cases)
    inputs = record.get("inputs", [])
    try:
        datas = [json.loads(c["canonical"]) for c in inputs]
    except (KeyError, TypeError, ValueError):
        return  # a broken case is reported by the inputs checks
    metas = [d.get("meta", {}) or {} for d in datas]
    cells = record.get("notebook", {}).get("cells", [])
    stated = record.get("decision", {})
    derived = rec.decision_of(cells, metas)
    differs = [k for k in ("decision", "rationale", "alternatives") if stated.get(k) != derived[k]]
    report.add(
        "decision and rationale: those of the notebook's tagged cells or the case meta",
        not differs,
        ""
        if not differs
        else f"the record's {', '.join(differs)} differs from its source ({derived['source']})",
    )
    note = _version_note(record)
    ok = _same(record.get("cautions"), rec.cautions_for(datas))
    report.add(
        "cautions: derived again from the inputs",
        ok,
        "" if ok else "the record's cautions differ" + note,
    )
    models = [
        {"case": c["name"], "items": rec.models_and_assumptions(d)}
        for c, d in zip(inputs, datas, strict=True)
    ]
    ok = _same(record.get("models"), models)
    report.add(
        "models and assumptions: derived again from the inputs",
        ok,
        "" if ok else "the record's models and assumptions differ" + note,
    )
    by_name = dict(cases)
    wrong = [
        c["name"]
        for c in inputs
        if c["name"] in by_name
        and not _same(c.get("constants"), rec.constants_of(by_name[c["name"]]))
    ]
    report.add(
        "constants and their sources: those of the case model",
        not wrong,
        "" if not wrong else f"differ for {', '.join(wrong)}" + note,
    )
