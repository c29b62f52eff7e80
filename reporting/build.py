"""The headless build: run a study notebook from a clean kernel, collect what it used, record it.

``build(notebook)`` runs the notebook with nbclient in a fresh kernel whose working folder is
the notebook's folder (no hidden state from a live session), with a progress bar per cell on a
terminal or in the notebook it was started from. A final cell, added for the run and dropped
from the record, emits the study registry (``orbitledger.study.manifest()``): the case files
opened, the named results, the figures. A failing cell stops the build with a message naming
the cell (number, first line) and its error, and nothing is written to the ledger.
"""

from __future__ import annotations

import copy
import json
import re
import warnings
from dataclasses import dataclass, field
from datetime import datetime, timezone
from pathlib import Path
from typing import Any

import nbformat

from orbitledger.kernel.errors import InputError

from . import record as rec
from .diff import diff_records, summary_lines
from .figure_items import item_fingerprint
from .run import FIGURE_MIME, MANIFEST_MIME, BuildError, execute_study, read_notebook
from .safe_bokeh import UnsafeFigure, safe_item

__all__ = [
    "FIGURE_MIME",
    "MANIFEST_MIME",
    "BuildError",
    "BuildOutcome",
    "assemble_record",
    "build",
    "execute_study",
    "record_run",
    "read_notebook",
]


@dataclass
class BuildOutcome:
    record_id: str
    revision: int | None
    record: dict[str, Any]
    files: dict[str, Path] = field(default_factory=dict)
    messages: list[str] = field(default_factory=list)


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
    built_utc = datetime.now(timezone.utc).strftime("%Y-%m-%dT%H:%M:%SZ")
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


def _history(ledger: Any, record: dict[str, Any], revision: int) -> list[dict[str, Any]]:
    """The revision history of ``record``: read under the ledger's lock (the build holds it).

    The previous revision's own history is taken over when it lists every earlier revision
    (one record read, not all of them); otherwise it is rebuilt from every earlier record.
    The sign-offs of every earlier revision are read afresh (they may have come after).
    """
    from .signoff import signoff_summaries

    def entry(r: dict[str, Any], rev: int, previous: dict[str, Any] | None) -> dict[str, Any]:
        changes = summary_lines(diff_records(previous, r)) if previous else ["first revision"]
        return {
            "revision": rev,
            "built_utc": r["built_utc"],
            "author": r["prepared"]["name"],
            "note": r["note"],
            "changes": changes,
            "signoffs": [],
        }

    earlier = [r.revision for r in ledger.revisions(record["record_id"]) if r.revision < revision]
    if not earlier:
        return [entry(record, revision, None)]
    return [
        {**e, "signoffs": signoff_summaries(ledger, record["record_id"], e["revision"])}
        if e["revision"] != revision
        else e
        for e in _entries(ledger, record, revision, earlier, entry)
    ]


def _entries(ledger: Any, record: dict[str, Any], revision: int, earlier: list[int], entry: Any):
    """History entries without sign-offs (see ``_history``)."""
    previous = ledger.record(record["record_id"], earlier[-1])
    kept = previous.get("history") or []
    if [h.get("revision") for h in kept] == earlier:
        return [*kept, entry(record, revision, previous)]
    records = [ledger.record(record["record_id"], n) for n in earlier[:-1]] + [previous, record]
    numbers = [*earlier, revision]
    return [
        entry(r, n, records[i - 1] if i else None)
        for i, (r, n) in enumerate(zip(records, numbers, strict=True))
    ]


def _prepared_by(record: dict[str, Any], signer: Any) -> list[str]:
    """Name the signer as the record's preparer (in place); messages for the user."""
    stated = record["prepared"].get("name", "")
    record["prepared"]["name"] = signer.name
    if stated and stated != signer.name:
        return [
            f"the notebook names the author {stated!r}; the record is prepared and signed by "
            f"{signer.name!r} (from the certificate)"
        ]
    return []


def _sign_prepared(record: dict[str, Any], signer: Any, notebook_bytes: bytes) -> None:
    """Open the record's chain of sign-offs with ``signer``'s signature as prepared."""
    from .ledger import sha256_hex, utc_now
    from .signatures import signed_entry

    hashes = {"notebook.ipynb": sha256_hex(notebook_bytes)}
    record["signoffs"] = [signed_entry(record, "prepared", signer, utc_now(), hashes)]


def build(
    nb_path: str | Path,
    *,
    to: tuple[str, ...] = ("html",),
    ledger_dir: str | Path | None = None,
    note: str = "",
    progress: bool = True,
    strict: bool = False,
    accept_failing: str | None = None,
    signer: Any = None,
) -> BuildOutcome:
    """Build the record of ``nb_path`` into the ledger (default ``ledger/`` beside the notebook).

    ``strict=True`` refuses to write a record in which a criterion fails
    (``findings.FailingCriteria``, nothing written) unless ``accept_failing`` gives the reason
    to record it anyway; the reason is kept in the record and shown on its cover.

    ``signer`` (``keys.load_signer``) signs the record as prepared (see ``record_run``).
    """

    unknown = set(to) - {"html", "pdf"}
    if unknown or not to:
        raise InputError("--to", ",".join(to), "choose html, pdf or html,pdf")
    nb_path = Path(nb_path).resolve()
    printer = None
    if "pdf" in to:  # start Chromium now: its launch overlaps the study's run
        from .render_pdf import PdfPrinter

        printer = PdfPrinter()
    try:
        executed, manifest = execute_study(
            read_notebook(nb_path), nb_path.parent, name=nb_path.name, progress=progress
        )
        return record_run(
            nb_path,
            executed,
            manifest,
            to=to,
            ledger_dir=ledger_dir,
            note=note,
            printer=printer,
            strict=strict,
            accept_failing=accept_failing,
            signer=signer,
        )
    finally:
        if printer is not None:
            printer.cancel()  # no-op once it printed


def record_run(
    nb_path: str | Path,
    executed: Any,
    manifest: dict[str, Any],
    *,
    to: tuple[str, ...] = ("html",),
    ledger_dir: str | Path | None = None,
    note: str = "",
    printer: Any = None,
    strict: bool = False,
    accept_failing: str | None = None,
    signer: Any = None,
) -> BuildOutcome:
    """Assemble, render and commit the record of an executed study (the second half of build).

    ``printer`` is a ``render_pdf.PdfPrinter`` started earlier, if any (else one is started).
    ``strict`` and ``accept_failing``: see :func:`build`.
    ``signer`` (a ``keys.Signer``) signs the record as prepared: the preparer's name comes from
    its certificate, a signed sign-off opens the record's chain, and the PDF gets its first
    PAdES signature.
    """
    from .findings import refuse_failing
    from .ledger import open_ledger
    from .render_html import render_html

    nb_path = Path(nb_path).resolve()
    record = assemble_record(nb_path, executed, manifest, note=note, accept_failing=accept_failing)
    if strict:
        refuse_failing(record["findings"])
    messages = _prepared_by(record, signer) if signer is not None else []
    ledger = open_ledger(ledger_dir if ledger_dir is not None else nb_path.parent / "ledger")
    # The ledger's lock is held from here to the commit: revision, chain link and history
    # are read while no other build of this record id can commit.
    reservation = ledger.reserve(
        record["record_id"], title=record["title"], author=record["prepared"]["name"], note=note
    )
    outcome = BuildOutcome(record["record_id"], reservation.revision, record, messages=messages)
    if accept_failing is not None and not record["findings"]["failing"]:
        outcome.messages.append("--accept-failing given, but every criterion holds")
    try:
        record["revision"] = reservation.revision
        record["previous_record_sha256"] = reservation.writer.previous_record_sha256
        record["history"] = _history(ledger, record, reservation.revision)
        notebook_bytes = nbformat.writes(archived_notebook(executed)).encode("utf-8")
        if signer is not None:
            _sign_prepared(record, signer, notebook_bytes)
        html = render_html(executed, record)
        record_bytes = rec.canonical_dumps(record).encode("utf-8")
        outcome.files["html"] = ledger.write_artifact(
            reservation, "record.html", html.encode("utf-8")
        )
        outcome.files["json"] = ledger.write_artifact(reservation, "record.json", record_bytes)
        outcome.files["notebook"] = ledger.write_artifact(
            reservation, "notebook.ipynb", notebook_bytes
        )
        if signer is not None:
            from .signatures import detached_file

            outcome.files["signatures"] = ledger.write_artifact(
                reservation, "record.sig.json", detached_file(record)
            )
        if "pdf" in to:
            from .render_pdf import BrowserMissing, PdfPrinter

            try:
                pdf = (printer or PdfPrinter()).print(html, record, notebook_bytes)
            except BrowserMissing as err:
                outcome.messages.append(str(err))
            else:
                if signer is not None:
                    from .sign_pdf import sign_pdf

                    pdf = sign_pdf(pdf, signer, "prepared", record["signoffs"][0]["time_utc"])
                outcome.files["pdf"] = ledger.write_artifact(reservation, "record.pdf", pdf)
        if "html" not in to:
            outcome.messages.append(
                "the HTML record is kept in the ledger as well: verify and sign work from it"
            )
        ledger.commit(reservation, record)
    except BaseException:
        ledger.abandon(reservation)
        raise
    return outcome
