"""Small study notebooks for the record tests: one case, one figure, one named result.

``write_study`` writes a notebook (and the example case it opens) into a folder.
``simulated_run`` gives what a clean run of it returns (executed notebook, study manifest)
without starting a kernel: the outputs are made with the same functions the kernel would call
(``orbitledger.figures.show.figure_bundle``, ``orbitledger.study``), so most tests stay fast.
Only the build tests start real kernels.
"""

from __future__ import annotations

import copy
import json
import shutil
from pathlib import Path
from typing import Any

import nbformat

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"
CASE_NAME = "candidate-a.case.json"

FIGURE_CODE = (
    "from bokeh.plotting import figure\n"
    "from orbitledger.figures import show\n"
    "fig = figure(width=560, height=280, title='altitude')\n"
    "fig.line([0, 1, 2, 3], [540, 541, 539, 540], line_width=3)\n"
    "show(fig, 'altitude', 'Altitude over the first orbits')"
)


def write_study(
    folder: Path,
    *,
    title: str = "Kestrel-2 record test study",
    narrative: str = "The baseline orbit, candidate A, and one named result.",
    result_value: float = 42.5,
    extra_cells: list[Any] | None = None,
    metadata: dict[str, Any] | None = None,
) -> Path:
    """Write ``study.ipynb`` and ``candidate-a.case.json`` into ``folder``; returns the notebook."""
    folder.mkdir(parents=True, exist_ok=True)
    if not (folder / CASE_NAME).exists():
        shutil.copy(EXAMPLES / CASE_NAME, folder / CASE_NAME)
    nb = nbformat.v4.new_notebook()
    nb.metadata["kernelspec"] = {
        "name": "python3",
        "display_name": "Python 3",
        "language": "python",
    }
    nb.metadata["orbitledger"] = {"title": title, **(metadata or {})}
    nb.cells = [
        nbformat.v4.new_markdown_cell(f"# {title}\n\n{narrative}"),
        nbformat.v4.new_markdown_cell("We fly candidate A.", metadata={"tags": ["decision"]}),
        nbformat.v4.new_code_cell(
            f"import orbitledger\ncase = orbitledger.open_case({CASE_NAME!r})"
        ),
        nbformat.v4.new_code_cell(FIGURE_CODE),
        nbformat.v4.new_code_cell(
            f"orbitledger.result('test_length_km', {result_value!r}, 'km', 'a test value')\nprint('done')"
        ),
        *(extra_cells or []),
    ]
    path = folder / "study.ipynb"
    nbformat.write(nb, path)
    return path


def simulated_run(
    nb_path: Path, *, results: list[dict[str, Any]] | None = None
) -> tuple[Any, dict[str, Any]]:
    """(executed notebook, manifest) as a clean run of a ``write_study`` notebook returns them."""
    from bokeh.plotting import figure

    from orbitledger.case import load_case
    from orbitledger.figures.show import figure_bundle

    nb = nbformat.read(nb_path, as_version=4)
    executed = copy.deepcopy(nb)
    case_path = (nb_path.parent / CASE_NAME).resolve()
    case = load_case(case_path)
    fig = figure(width=560, height=280, title="altitude")
    fig.line([0, 1, 2, 3], [540, 541, 539, 540], line_width=3)
    # As the kernel writes it: the bundle goes through JSON (nbformat), keys sorted.
    bundle = json.loads(
        json.dumps(figure_bundle(fig, "altitude", "Altitude over the first orbits"), sort_keys=True)
    )
    named = results or [
        {"name": "test_length_km", "value": 42.5, "unit": "km", "description": "a test value"}
    ]
    code = [c for c in executed.cells if c.cell_type == "code"]
    for n, cell in enumerate(code, start=1):
        cell.execution_count = n
    code[1].outputs = [nbformat.v4.new_output("display_data", data=bundle)]
    code[2].outputs = [
        nbformat.v4.new_output(
            "display_data",
            data={
                "text/plain": f"{r['name']} = {r['value']}",
                "application/vnd.orbitledger.result+json": r,
            },
        )
        for r in named
    ] + [nbformat.v4.new_output("stream", name="stdout", text="done\n")]
    manifest = {
        "cases": [{"path": str(case_path), "fingerprint": case.fingerprint}],
        "results": named,
        "figures": [{"name": "altitude", "caption": "Altitude over the first orbits"}],
    }
    return executed, manifest
