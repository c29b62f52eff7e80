"""The record's findings: every criterion of every case, pass or fail, judged at build time.

``record_findings`` judges each case's criteria (``orbitledger.trade.findings``) against its
standard results and returns the record's ``findings`` section::

    {"cases": [{"case": NAME, "findings": [...]}], "total": N, "failing": K,
     "accepted_failing": REASON or ""}

A build with ``strict=True`` refuses (``FailingCriteria``, nothing written) when a criterion
fails, unless a reason is given to accept it (``--accept-failing "reason"``); the reason is
kept in the record and shown on its cover beside the failures. ``check_findings`` judges the
criteria again from the record alone, for ``orbitledger verify``.
"""

from __future__ import annotations

import json
from typing import Any

from orbitledger.kernel.errors import InputError

from .run import BuildError

__all__ = [
    "FailingCriteria",
    "check_findings",
    "findings_view",
    "record_findings",
    "refuse_failing",
]


# Criteria on these results touch disposal compliance or re-entry (RULES: say the cautions).
_SAFETY_METRICS = ("lifetime", "disposal", "reentry", "perigee")
SAFETY_CAUTION = (
    "A lifetime or disposal criterion met here is preliminary analysis with the stated models, "
    "not a compliance finding: compliance with a disposal rule is for the licensing authority "
    "to judge, with its accepted tools and authoritative data."
)


class FailingCriteria(BuildError):
    """``build --strict``: a criterion fails and no reason to accept it was given."""


def record_findings(
    inputs: list[dict[str, Any]],
    standard: list[dict[str, Any]],
    accepted_failing: str | None = None,
) -> dict[str, Any]:
    """The findings section of a record from its inputs and standard results (see above)."""
    from orbitledger.trade.findings import case_findings

    by_case = {block["case"]: block["results"] for block in standard}
    cases = []
    for case in inputs:
        data = json.loads(case["canonical"])
        found = case_findings(data, by_case.get(case["name"], []))
        cases.append({"case": case["name"], "findings": found})
    total = sum(len(c["findings"]) for c in cases)
    failing = sum(1 for c in cases for f in c["findings"] if not f["passed"])
    reason = " ".join((accepted_failing or "").split())
    if accepted_failing is not None and not reason:
        raise InputError("--accept-failing", accepted_failing, "give the reason in words")
    return {"cases": cases, "total": total, "failing": failing, "accepted_failing": reason}


def failure_lines(findings: dict[str, Any]) -> list[str]:
    """One line per failing criterion: "candidate-b.case.json: sun_synchronous_offset_deg ..."."""
    return [
        f"{c['case']}: {f['reason']}"
        for c in findings.get("cases", [])
        for f in c["findings"]
        if not f["passed"]
    ]


def refuse_failing(findings: dict[str, Any]) -> None:
    """``--strict``: raise FailingCriteria when a criterion fails and none was accepted."""
    if findings["failing"] and not findings["accepted_failing"]:
        lines = failure_lines(findings)
        shown = "; ".join(lines[:3]) + ("; ..." if len(lines) > 3 else "")
        raise FailingCriteria(
            f"--strict: {findings['failing']} of {findings['total']} criteria fail ({shown}); "
            'give --accept-failing "reason" to record it with the failures on its cover'
        )


def findings_view(record: dict[str, Any]) -> dict[str, Any]:
    """What the templates show: every row, and the failures for the cover."""
    found = record.get("findings") or {"cases": [], "total": 0, "failing": 0}
    rows = [
        {"case": c["case"], **f, "where": "case file" if f["source"] == "case" else f["source"]}
        for c in found["cases"]
        for f in c["findings"]
    ]
    safety = any(k in r["metric"] for r in rows for k in _SAFETY_METRICS)
    return {
        "rows": rows,
        "safety": SAFETY_CAUTION if safety else "",
        "total": found.get("total", len(rows)),
        "failing": [r for r in rows if not r["passed"]],
        "accepted": found.get("accepted_failing", ""),
        "present": "findings" in record,
    }


def check_findings(report: Any, record: dict[str, Any]) -> None:
    """Verify: the findings shown are the ones the record's own inputs and results give."""
    if "findings" not in record:
        return  # a record built before findings existed
    shown = record["findings"]
    try:
        again = record_findings(
            record.get("inputs", []),
            record.get("standard_results", []),
            shown.get("accepted_failing") or None,
        )
    except (InputError, ValueError, KeyError) as err:
        report.add("findings: criteria judged again", False, f"cannot be judged again: {err}")
        return
    same = again == shown
    detail = (
        f"{shown['total']} criteria, {shown['failing']} failing"
        if same
        else "the findings differ from what the record's inputs and results give"
    )
    report.add("findings: criteria judged again", same, detail)
