"""The headless build: run a study notebook from a clean kernel, collect what it used, record it.

``build(notebook)`` runs the notebook with nbclient in a fresh kernel whose working folder is
the notebook's folder (no hidden state from a live session), with a progress bar per cell on a
terminal or in the notebook it was started from. A final cell, added for the run and dropped
from the record, emits the study registry (``orbitledger.study.manifest()``): the case files
opened, the named results, the figures. A failing cell stops the build with a message naming
the cell (number, first line) and its error, and nothing is written to the ledger.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import nbformat

from orbitledger.kernel.errors import InputError

from . import record as rec
from .assembly import archived_notebook, assemble_record
from .diff import diff_records, summary_lines
from .run import FIGURE_MIME, MANIFEST_MIME, BuildError, execute_study, read_notebook

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
