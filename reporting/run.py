"""Run a study notebook from a clean kernel and read back its study registry.

``execute_study(nb, folder)`` runs the notebook with nbclient in a fresh kernel whose working
folder is ``folder`` (no hidden state from a live session), with a progress bar per cell on a
terminal (tqdm on stderr) or in the notebook it was started from (tqdm's widget). A final
cell, added for the run and dropped afterwards, emits the study registry
(``orbitledger.study.manifest()``) as a MIME bundle. A failing cell raises ``BuildError``
naming the cell (its number counting from 1, its first line) and its error.
"""

from __future__ import annotations

import copy
import logging
import os
import re
import tempfile
from pathlib import Path
from typing import Any

import nbformat

from orbitledger.kernel.errors import InputError

__all__ = ["FIGURE_MIME", "MANIFEST_MIME", "BuildError", "execute_study", "read_notebook"]

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
        from orbitledger.progress import progress_bar

        # None: a bar only where someone watches (a notebook, a terminal's stderr).
        self.bar = progress_bar(total, name, None if enabled else False, unit="cell")

    def step(self, text: str) -> None:
        if hasattr(self.bar, "set_postfix_str"):
            self.bar.set_postfix_str(text[:30], refresh=False)
        self.bar.update(1)

    def close(self) -> None:
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
    # ORBITLEDGER_BUILD tells the study's widgets that no one watches them: their snapshots
    # for the record hold every result (widgets/snapshot.py).
    env = {**os.environ, "ORBITLEDGER_BUILD": "1"}
    try:
        client.execute(stderr=kernel_log, env=env)
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


def _cell_failure(nb: Any, index: int, err: Any) -> str:
    where = f"cell {index + 1} ({_first_line(nb.cells[index].source)})" if index >= 0 else "a cell"
    tb = [_ANSI.sub("", line) for line in getattr(err, "traceback", "").splitlines()]
    tail = "\n".join("    " + line for line in tb[-6:] if line.strip())
    return f"{where} failed: {err.ename}: {err.evalue}\n{tail}".rstrip()
