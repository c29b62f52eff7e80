"""Check a record from the file alone: fingerprints, and every standard result recomputed.

``verify_file(path)`` reads the record JSON embedded in an HTML record (the
``<script type="application/json" id="orbitledger-record">`` element) or attached to a PDF
record (``record.json``), then checks:

- each case: SHA-256 of its embedded canonical JSON equals its fingerprint, and the case model
  of this orbitledger reads it back to the same canonical JSON;
- the inputs, results and notebook fingerprints, recomputed from the embedded data;
- each figure drawn in the HTML against its fingerprint; each PDF attachment against the record;
- every standard result, recomputed from the embedded inputs with
  ``orbitledger.analysis.case_results`` and compared within the tolerance this orbitledger sets
  for it (never one the file states: ``verify_results``).

The signatures (sign-offs, PDF signatures, the detached ``.sig.json`` beside, and with a
trust list who issued each certificate) are checked by ``verify_signatures``.

It never runs notebook code. ``execute=True`` (``--execute``) also re-runs the embedded notebook
in a clean kernel (after a warning) and compares its named results with the record's.
"""

from __future__ import annotations

import hashlib
import html
import json
import math
import re
import tempfile
import warnings
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from orbitledger._version import __version__
from orbitledger.kernel.errors import InputError

from . import record as rec
from .figure_items import item_fingerprint
from .findings import check_findings
from .record_files import read_json_record, read_pdf_record
from .verify_page import table_values

__all__ = ["Check", "VerifyReport", "read_record", "verify_file", "verify_record"]

_RECORD_SCRIPT = re.compile(
    r'<script\b[^>]*\bid="orbitledger-record"[^>]*>(.*?)</script>', re.DOTALL
)
_FIGURE_SCRIPT = re.compile(
    r'<script type="application/json" class="orbitledger-figure"[^>]*data-name="([^"]*)">(.*?)</script>',
    re.DOTALL,
)


# A value the HTML shows in its inputs and results tables, with the record entry it shows.
_SHOWN_VALUE = re.compile(r'<td class="[^"]*" data-check="([^"]*)">([^<]*)</td>')


@dataclass(frozen=True)
class Check:
    what: str
    ok: bool
    detail: str = ""


@dataclass
class VerifyReport:
    path: str
    record_id: str = ""
    revision: Any = None
    checks: list[Check] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)

    @property
    def ok(self) -> bool:
        return all(c.ok for c in self.checks)

    def add(self, what: str, ok: bool, detail: str = "") -> None:
        self.checks.append(Check(what, ok, detail))

    def text(self) -> str:
        lines = [f"{self.path}: record {self.record_id} revision {self.revision}"]
        for c in self.checks:
            mark = "ok  " if c.ok else "DIFF"
            lines.append(f"  {mark} {c.what}" + (f": {c.detail}" if c.detail else ""))
        lines += [f"  note {n}" for n in self.notes]
        failed = sum(not c.ok for c in self.checks)
        lines.append(
            f"{len(self.checks)} checks, all hold"
            if not failed
            else f"{failed} of {len(self.checks)} checks differ"
        )
        return "\n".join(lines) + "\n"


def read_record(path: str | Path) -> tuple[dict[str, Any], dict[str, Any]]:
    """(record, extras) from an HTML or PDF record; extras: figures (HTML) or attachments (PDF)."""
    path = Path(path)
    if not path.is_file():
        raise InputError("RECORD", str(path), "no such file")
    data = path.read_bytes()
    if data[:5] == b"%PDF-":
        return read_pdf_record(path)
    text = data.decode("utf-8", errors="replace")
    if path.suffix == ".json" and text.lstrip().startswith("{"):  # a record's JSON on its own
        return read_json_record(path, text)
    found = _RECORD_SCRIPT.search(text)
    if not found:
        raise InputError("RECORD", str(path), "not an orbitledger record (no embedded record JSON)")
    try:
        record = json.loads(found.group(1))
    except json.JSONDecodeError as err:
        raise InputError(
            "RECORD", str(path), f"the embedded record JSON does not parse: {err}"
        ) from None
    figures = [(name, json.loads(body)) for name, body in _FIGURE_SCRIPT.findall(text)]
    shown = [(html.unescape(k), html.unescape(v)) for k, v in _SHOWN_VALUE.findall(text)]
    return record, {"kind": "html", "figures": figures, "shown": shown, "html": text}


def _as_float(value: Any) -> float:
    return float(value)  # reads back "NaN" / "Infinity" as written by record.json_number


def _check_inputs(report: VerifyReport, record: dict[str, Any]) -> list[tuple[str, Any]]:
    from orbitledger.analysis import ALL_GROUPS
    from orbitledger.analysis.estimates import check_case_groups
    from orbitledger.case import parse_case

    cases = []
    for case in record.get("inputs", []):
        name = case["name"]
        digest = hashlib.sha256(case["canonical"].encode("utf-8")).hexdigest()
        report.add(
            f"input {name}: fingerprint",
            digest == case["fingerprint"],
            ""
            if digest == case["fingerprint"]
            else f"canonical JSON hashes to {digest[:16]}..., record says {case['fingerprint'][:16]}...",
        )
        try:
            model = parse_case(case["canonical"], file=name)
        except InputError as err:
            report.add(
                f"input {name}: valid case",
                False,
                f"this orbitledger {__version__} refuses it: {err}",
            )
            continue
        same = model.canonical_json() == case["canonical"]
        report.add(
            f"input {name}: reads back to the same canonical JSON",
            same,
            ""
            if same
            else f"orbitledger {__version__} writes this case differently (record built with {_built_with(record)})",
        )
        try:  # the CLI's limits, before anything is recomputed (analysis.estimates)
            check_case_groups(model, ALL_GROUPS)
        except InputError as err:
            report.add(f"input {name}: within the work limits", False, f"{err}; not recomputed")
            continue
        cases.append((name, model))
    return cases


def _built_with(record: dict[str, Any]) -> str:
    return str(record.get("environment", {}).get("orbitledger", "?"))


def _check_fingerprints(report: VerifyReport, record: dict[str, Any]) -> None:
    fp = record.get("fingerprints", {})
    recomputed = {
        "inputs": rec.inputs_fingerprint(record.get("inputs", [])),
        "results": rec.results_fingerprint(
            record.get("results", []), record.get("standard_results", [])
        ),
        "notebook": rec.notebook_fingerprint(record.get("notebook", {}).get("cells", [])),
    }
    for key, value in recomputed.items():
        ok = fp.get(key) == value
        detail = "" if ok else f"recomputed {value[:16]}..., record says {str(fp.get(key))[:16]}..."
        if not ok and key == "results":
            detail += " (a named or standard result was altered)"
        if not ok and key == "notebook":
            detail += " (the embedded notebook was altered)"
        report.add(f"{key} fingerprint", ok, detail)


def _check_standard(
    report: VerifyReport, record: dict[str, Any], cases: list[tuple[str, Any]]
) -> None:
    from orbitledger.analysis import case_results

    newer = _built_with(record) != __version__
    by_case = {b["case"]: b["results"] for b in record.get("standard_results", [])}
    for name, model in cases:
        stated = by_case.get(name, [])
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            fresh = case_results(model)
        for w in caught:
            if str(w.message) not in report.notes:
                report.notes.append(str(w.message))
        differs = []
        for row in stated:
            now = fresh.get(row["name"])
            if now is None:
                differs.append(f"{row['name']}: no longer computed by orbitledger {__version__}")
                continue
            a, b = _as_float(row["value"]), float(now.value)
            same = (math.isnan(a) and math.isnan(b)) or math.isclose(
                a, b, rel_tol=float(now.rel_tol), abs_tol=float(now.abs_tol)
            )  # the software's tolerance, never the file's
            if not same:
                note = (
                    f" (orbitledger {__version__} computes differently from {_built_with(record)}, which built the record)"
                    if newer
                    else ""
                )
                differs.append(
                    f"{row['name']}: record {a:.12g} {row['unit']}, recomputed {b:.12g}{note}"
                )
        if differs:
            for line in differs:
                report.add(f"standard result of {name}", False, line)
        else:
            report.add(
                f"standard results of {name}: {len(stated)} recomputed",
                True,
                "all within the stated tolerances",
            )


def _check_extras(report: VerifyReport, record: dict[str, Any], extras: dict[str, Any]) -> None:
    if extras["kind"] == "json":
        return  # nothing drawn or attached beside the JSON itself
    if extras["kind"] == "html":
        stated = record.get("figures", [])
        drawn = extras["figures"]
        ok = len(stated) == len(drawn)
        report.add(
            "figures: count",
            ok,
            "" if ok else f"record lists {len(stated)}, the HTML draws {len(drawn)}",
        )
        for f, (name, item) in zip(stated, drawn, strict=False):
            same = item_fingerprint(item) == f["sha256"] and name == f["name"]
            report.add(
                f"figure {f['name']}: fingerprint",
                same,
                "" if same else "the drawn figure was altered",
            )
        expected = table_values(record)
        shown = extras["shown"]
        wrong = [(k, v) for k, v in shown if expected.get(k, "—") != v]  # "—": not in that case
        detail = "; ".join(
            f"{k.split('|', 1)[1].replace('|', ': ')} shows {v!r}, the record says {expected.get(k, '—')!r}"
            for k, v in wrong[:5]
        )
        if not shown and expected:
            detail = "the HTML tables show none of the record's values"
        ok = not wrong and bool(shown) == bool(expected)
        report.add(f"tables: {len(shown)} values shown as in the record", ok, detail)
        return
    att = extras["attachments"]
    nb_bytes = att.get("notebook.ipynb")
    if nb_bytes is None:
        report.add("attachment notebook.ipynb", False, "missing")
    else:
        import nbformat

        cells = rec.notebook_cells(nbformat.reads(nb_bytes.decode("utf-8"), as_version=4))
        same = rec.notebook_fingerprint(cells) == record.get("fingerprints", {}).get("notebook")
        report.add(
            "attachment notebook.ipynb: fingerprint",
            same,
            "" if same else "the attached notebook differs from the record",
        )
    for case in record.get("inputs", []):
        key = "case-" + case["name"].replace("/", "_")
        blob = att.get(key)
        same = blob is not None and hashlib.sha256(blob).hexdigest() == case["fingerprint"]
        report.add(f"attachment {key}: fingerprint", same, "" if same else "missing or altered")


def verify_record(record: dict[str, Any], extras: dict[str, Any], path: str = "") -> VerifyReport:
    """Every check on an already-read record (see the module docstring)."""
    report = VerifyReport(path, record.get("record_id", "?"), record.get("revision"))
    schema_ok = record.get("schema") == rec.RECORD_SCHEMA
    report.add(
        "record schema", schema_ok, "" if schema_ok else f"unknown schema {record.get('schema')!r}"
    )
    if not schema_ok:
        return report
    from .verify_page import check_page
    from .verify_pdf import check_pdf
    from .verify_results import check_derived

    cases = _check_inputs(report, record)
    _check_fingerprints(report, record)
    _check_extras(report, record, extras)
    if extras["kind"] == "html":
        check_page(report, record, extras["html"])
    elif extras["kind"] == "pdf":
        check_pdf(report, record, extras["data"], extras["attachments"])
    _check_standard(report, record, cases)
    check_derived(report, record, cases)
    check_findings(report, record)
    return report


def verify_file(
    path: str | Path, *, execute: bool = False, trust: str | Path | None = None
) -> VerifyReport:
    """Every check on the record at ``path``; ``trust``: a trust list for its signatures."""
    from .verify_signatures import check_signatures, load_trust

    if trust is not None:
        load_trust(trust)  # a bad trust list is bad input (exit 2), before any check runs
    record, extras = read_record(path)
    report = verify_record(record, extras, str(path))
    if report.checks and report.checks[0].ok:  # the record schema is known
        check_signatures(report, path, record, extras, trust)
    if execute:
        _check_by_running(report, record)
    return report


def _check_by_running(report: VerifyReport, record: dict[str, Any]) -> None:
    """Re-run the embedded notebook with the embedded case files in a clean kernel."""
    import nbformat

    from .build import BuildError, execute_study

    nb = nbformat.v4.new_notebook()
    nb.metadata["kernelspec"] = {
        "name": "python3",
        "display_name": "Python 3",
        "language": "python",
    }
    for cell in record["notebook"]["cells"]:
        make = (
            nbformat.v4.new_code_cell
            if cell["cell_type"] == "code"
            else nbformat.v4.new_markdown_cell
        )
        nb.cells.append(make(cell["source"], metadata={"tags": cell.get("tags", [])}))
    with tempfile.TemporaryDirectory(prefix="orbitledger-verify-") as tmp:
        folder = Path(tmp)
        for case in record.get("inputs", []):
            target = (folder / case["name"]).resolve()
            if folder.resolve() not in target.parents:
                report.add(
                    f"--execute: case {case['name']}",
                    False,
                    "path outside the study folder; not written",
                )
                continue
            target.parent.mkdir(parents=True, exist_ok=True)
            target.write_text(case["canonical"], encoding="utf-8")
        try:
            _, manifest = execute_study(nb, folder, name=record["notebook"]["name"], progress=True)
        except BuildError as err:
            report.add("--execute: the embedded notebook runs", False, str(err))
            return
    stated = {r["name"]: r for r in record.get("results", [])}
    fresh = {r["name"]: r for r in manifest["results"]}
    for name, row in stated.items():
        now = fresh.get(name)
        if now is None:
            report.add(f"--execute: result {name}", False, "not produced by the re-run")
            continue
        a, b = row["value"], now["value"]
        same = a == b or (
            isinstance(a, int | float)
            and isinstance(b, int | float)
            and math.isclose(a, b, rel_tol=1e-9, abs_tol=1e-12)
        )
        report.add(
            f"--execute: result {name}",
            same,
            "" if same else f"record {a}, re-run {b} {row['unit']}",
        )
