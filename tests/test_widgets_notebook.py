"""The example study notebook runs from a clean kernel (nbclient), as ``orbitledger build`` will.

Checks what it names for the record against outside references: the period of candidate A
from Kepler's third law, T = 2 pi sqrt(a^3 / mu) (Vallado, Fundamentals of Astrodynamics and
Applications, 4th ed., Eq. 2-29) with the WGS-84 equatorial radius and GM (NIMA TR8350.2,
3rd ed., Table 3.1); and that the decision cell is tagged for the record.
"""

from __future__ import annotations

import json
import math
import shutil
from pathlib import Path

import nbformat
import pytest
from nbclient import NotebookClient

EXAMPLES = Path(__file__).resolve().parents[1] / "examples"
NOTEBOOK = "kestrel2-orbit-study.ipynb"
RESULT_MIME = "application/vnd.orbitledger.result+json"


@pytest.mark.slow
def test_example_study_runs_clean(tmp_path: Path) -> None:
    for path in EXAMPLES.iterdir():
        shutil.copy(path, tmp_path / path.name)
    before = {p.name: p.read_bytes() for p in tmp_path.glob("*.case.json")}
    nb = nbformat.read(tmp_path / NOTEBOOK, as_version=4)
    assert nb.metadata["kernelspec"]["name"] == "python3"  # no kernel dialog (design.md)
    NotebookClient(
        nb, timeout=300, kernel_name="python3", resources={"metadata": {"path": str(tmp_path)}}
    ).execute()
    outputs = [o for cell in nb.cells if cell.cell_type == "code" for o in cell.outputs]
    assert not [o for o in outputs if o.output_type == "error"]
    assert any("application/vnd.jupyter.widget-view+json" in o.get("data", {}) for o in outputs)
    named = {}
    for o in outputs:
        data = o.get("data", {})
        if RESULT_MIME in data:
            record = data[RESULT_MIME]
            record = json.loads(record) if isinstance(record, str) else record
            named[record["name"]] = record
    a_km = 6378.137 + 540.0  # altitude_km is a - R_eq (docs/case-file.md)
    period_min = 2 * math.pi * math.sqrt(a_km**3 / 398600.4418) / 60.0  # Vallado Eq. 2-29
    assert abs(named["candidate_a_period_min"]["value"] - period_min) * 60.0 < 1e-6  # s
    assert named["candidate_a_period_min"]["unit"] == "min"
    assert {"candidate_b_periapsis_alt_km", "candidate_c_sso_offset_deg"} <= set(named)
    decision = [c for c in nb.cells if "decision" in c.metadata.get("tags", [])]
    assert len(decision) == 1 and "Alternatives considered" in decision[0].source
    # Running the study saves nothing: the case files are as they were.
    assert {p.name: p.read_bytes() for p in tmp_path.glob("*.case.json")} == before
