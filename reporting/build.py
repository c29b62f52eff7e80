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
import logging
import re
import sys
import tempfile
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

log = logging.getLogger("orbitledger.reporting")

FIGURE_MIME = "application/vnd.orbitledger.figure+json"
MANIFEST_MIME = "application/vnd.orbitledger.manifest+json"
_MANIFEST_TAG = "orbitledger-manifest"
_MANIFEST_SOURCE = (
    "from IPython.display import display as _orbitledger_display\n"
    "import orbitledger.study as _orbitledger_study\n"
    f"_orbitledger_display({{{MANIFEST_MIME!r}: _orbitledger_study.manifest()}}, raw=True)\n"
)
_ANSI = re.compile(r"\x1b\[[0-9;]*[A-Za-z]")


class BuildError(Exception):
    """The study did not run to the end (a failing cell, a missing kernel, a changed case file)."""


@dataclass
class BuildOutcome:
    record_id: str
    revision: int | None
    record: dict[str, Any]
    files: dict[str, Path] = field(default_factory=dict)
    messages: list[str] = field(default_factory=list)


def read_notebook(path: str | Path) -> nbformat.NotebookNode:
    path = Path(path)
    if not path.is_file():
        raise InputError("STUDY.ipynb", str(path), "no such notebook")
    try:
        return nbformat.read(path, as_version=4)
    except Exception as err:  # nbformat raises several kinds for a file that is not a notebook
        raise InputError("STUDY.ipynb", str(path), f"not a readable notebook: {err}") from None


def _first_line(source: str) -> str:
    for line in source.splitlines():
        if line.strip():
            return line.strip()[:80]
    return "(empty cell)"


class _Progress:
    """A per-cell progress bar: tqdm on a terminal (stderr), tqdm's widget in a notebook."""

    def __init__(self, total: int, name: str, enabled: bool) -> None:
        self.bar = None
        if not enabled:
            return
        in_notebook = False
        if "ipykernel" in sys.modules:
            try:
                from IPython import get_ipython

                in_notebook = get_ipython() is not None and hasattr(get_ipython(), "kernel")
            except ImportError:
                in_notebook = False
        if in_notebook:
            from tqdm.notebook import tqdm as tqdm_notebook

            self.bar = tqdm_notebook(total=total, desc=name, unit="cell")
        elif sys.stderr.isatty():
            from tqdm import tqdm

            self.bar = tqdm(total=total, desc=name, unit="cell", file=sys.stderr, leave=False)

    def step(self, text: str) -> None:
        if self.bar is not None:
            self.bar.set_postfix_str(text[:30], refresh=False)
            self.bar.update(1)

    def close(self) -> None:
        if self.bar is not None:
            self.bar.close()


def execute_study(
    nb: nbformat.NotebookNode,
    folder: str | Path,
    *,
    name: str = "study",
    progress: bool = True,
    timeout_s: float = 1800.0,
) -> tuple[nbformat.NotebookNode, dict[str, Any]]:
    """Run ``nb`` in a clean kernel in ``folder``; return (executed notebook, study manifest).

    The notebook is not changed; the executed copy has the outputs and no manifest cell.
    Raises ``BuildError`` naming the failing cell (its number counting from 1, its first line).
    """
    from jupyter_client.kernelspec import NoSuchKernel
    from nbclient import NotebookClient
    from nbclient.exceptions import CellExecutionError, CellTimeoutError, DeadKernelError

    folder = Path(folder).resolve()
    run = copy.deepcopy(nb)
    cell = nbformat.v4.new_code_cell(_MANIFEST_SOURCE, metadata={"tags": [_MANIFEST_TAG]})
    run.cells.append(cell)
    kernel_name = run.metadata.get("kernelspec", {}).get("name", "python3")
    code_cells = [i for i, c in enumerate(run.cells) if c.cell_type == "code"]
    bar = _Progress(len(code_cells), name, progress)
    current: dict[str, int] = {"index": -1}

    def on_start(cell: Any, cell_index: int, **_: Any) -> None:
        current["index"] = cell_index

    def on_done(cell: Any, cell_index: int, **_: Any) -> None:
        bar.step(_first_line(cell.source))

    client = NotebookClient(
        run,
        timeout=int(timeout_s),
        kernel_name=kernel_name,
        resources={"metadata": {"path": str(folder)}},
        on_cell_start=on_start,
        on_cell_executed=on_done,
    )
    # The kernel's own log (not the cells' output, which comes back as outputs) goes to a
    # file: its start-up notices are noise on the terminal; its tail explains a dead kernel.
    kernel_log = tempfile.TemporaryFile(mode="w+", prefix="orbitledger-kernel-")
    try:
        client.execute(stderr=kernel_log)
    except CellExecutionError as err:
        raise BuildError(_cell_failure(run, current["index"], err)) from None
    except CellTimeoutError:
        i = current["index"]
        raise BuildError(
            f"cell {i + 1} ({_first_line(run.cells[i].source)}) ran past {timeout_s:.0f} s"
        ) from None
    except DeadKernelError as err:
        kernel_log.seek(0)
        tail = "\n".join("    " + line for line in kernel_log.read().splitlines()[-6:])
        raise BuildError(
            f"the kernel died during cell {current['index'] + 1}: {err}\n{tail}".rstrip()
        ) from None
    except NoSuchKernel:
        raise BuildError(
            f"the notebook asks for kernel {kernel_name!r}, which is not installed"
        ) from None
    finally:
        bar.close()
        kernel_log.close()
    last = run.cells.pop()
    manifest = next(
        (o["data"][MANIFEST_MIME] for o in last.outputs if MANIFEST_MIME in o.get("data", {})), None
    )
    if manifest is None:
        raise BuildError(
            "the study registry could not be read back (orbitledger not importable in the kernel?)"
        )
    return run, manifest


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


def _cell_failure(nb: Any, index: int, err: Any) -> str:
    where = f"cell {index + 1} ({_first_line(nb.cells[index].source)})" if index >= 0 else "a cell"
    tb = [_ANSI.sub("", line) for line in getattr(err, "traceback", "").splitlines()]
    tail = "\n".join("    " + line for line in tb[-6:] if line.strip())
    return f"{where} failed: {err.ename}: {err.evalue}\n{tail}".rstrip()


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
                out.append(
                    {
                        "name": fig["name"],
                        "caption": fig.get("caption", ""),
                        "sha256": item_fingerprint(fig["item"]),
                    }
                )
    return out


def _tagged_markdown(nb: Any, tag: str) -> str:
    parts = [
        c.source
        for c in nb.cells
        if c.cell_type == "markdown" and tag in c.metadata.get("tags", [])
    ]
    return "\n\n".join(parts)


def _first_heading(nb: Any) -> str:
    for c in nb.cells:
        if c.cell_type == "markdown":
            for line in c.source.splitlines():
                if line.startswith("# "):
                    return line[2:].strip()
    return ""


def assemble_record(
    nb_path: Path, executed: Any, manifest: dict[str, Any], *, note: str = ""
) -> dict[str, Any]:
    """The record (without revision and history) of one executed study."""
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
    decision_md = _tagged_markdown(executed, "decision")
    decision = {
        "decision": decision_md or first.get("decision", ""),
        "rationale": _tagged_markdown(executed, "rationale") or first.get("rationale", ""),
        "alternatives": [a for m in metas for a in m.get("alternatives", [])],
        "source": "notebook cells tagged decision/rationale" if decision_md else "case meta",
    }
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
    earlier = [r for r in ledger.revisions(record["record_id"]) if r.revision < revision]
    records = [ledger.record(record["record_id"], r.revision) for r in earlier] + [record]
    history = []
    for i, r in enumerate(records):
        changes = ["first revision"] if i == 0 else summary_lines(diff_records(records[i - 1], r))
        rev = revision if r is record else r["revision"]
        history.append(
            {
                "revision": rev,
                "built_utc": r["built_utc"],
                "author": r["prepared"]["name"],
                "note": r["note"],
                "changes": changes,
            }
        )
    return history


def build(
    nb_path: str | Path,
    *,
    to: tuple[str, ...] = ("html",),
    ledger_dir: str | Path | None = None,
    note: str = "",
    progress: bool = True,
) -> BuildOutcome:
    """Build the record of ``nb_path`` into the ledger (default ``ledger/`` beside the notebook)."""

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
            nb_path, executed, manifest, to=to, ledger_dir=ledger_dir, note=note, printer=printer
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
) -> BuildOutcome:
    """Assemble, render and commit the record of an executed study (the second half of build).

    ``printer`` is a ``render_pdf.PdfPrinter`` started earlier, if any (else one is started).
    """
    from .ledger import Ledger
    from .render_html import render_html

    nb_path = Path(nb_path).resolve()
    record = assemble_record(nb_path, executed, manifest, note=note)
    ledger = Ledger(ledger_dir if ledger_dir is not None else nb_path.parent / "ledger")
    reservation = ledger.reserve(
        record["record_id"], title=record["title"], author=record["prepared"]["name"], note=note
    )
    outcome = BuildOutcome(record["record_id"], reservation.revision, record)
    try:
        record["revision"] = reservation.revision
        record["history"] = _history(ledger, record, reservation.revision)
        html = render_html(executed, record)
        notebook_bytes = nbformat.writes(archived_notebook(executed)).encode("utf-8")
        record_bytes = rec.canonical_dumps(record).encode("utf-8")
        outcome.files["html"] = ledger.write_artifact(
            reservation, "record.html", html.encode("utf-8")
        )
        outcome.files["json"] = ledger.write_artifact(reservation, "record.json", record_bytes)
        outcome.files["notebook"] = ledger.write_artifact(
            reservation, "notebook.ipynb", notebook_bytes
        )
        if "pdf" in to:
            from .render_pdf import BrowserMissing, PdfPrinter

            try:
                pdf = (printer or PdfPrinter()).print(html, record, notebook_bytes)
            except BrowserMissing as err:
                outcome.messages.append(str(err))
            else:
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
