"""The example study's text says what its numbers say, and reads cleanly.

The decision of examples/kestrel2-orbit-study.ipynb picks candidate A as "the one candidate
that meets every criterion" and says B misses the sun-synchronous band and the 25-year decay,
C is not sun-synchronous: the findings of the three case files must agree. Its markdown joins
lines with a space (CommonMark, "soft line breaks"), so a word hyphenated at a line end would
print as "change- detection".
"""

from __future__ import annotations

import re
from pathlib import Path

import nbformat

from orbitledger.analysis import case_results
from orbitledger.case import load_case
from orbitledger.trade import case_findings

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"


def test_no_word_is_hyphenated_across_a_line_of_the_narrative():
    nb = nbformat.read(EXAMPLES / "kestrel2-orbit-study.ipynb", as_version=4)
    for k, cell in enumerate(nb.cells):
        if cell.cell_type != "markdown":
            continue
        lines = cell.source.splitlines()
        for a, b in zip(lines, lines[1:], strict=False):
            assert not (re.search(r"[A-Za-z]-$", a) and re.match(r"[a-z]", b)), (
                f"cell {k + 1}: {a[-20:]!r} / {b[:20]!r} prints as a stray hyphen"
            )


def test_the_findings_of_the_candidates_are_what_the_decision_says():
    failing = {}
    for name in ("a", "b", "c"):
        case = load_case(EXAMPLES / f"candidate-{name}.case.json")
        found = case_findings(case.to_data(), case_results(case))
        assert len(found) == 5  # the study's five criteria, the margin among them
        failing[name] = sorted(f["criterion"] for f in found if not f["passed"])
    assert failing["a"] == []
    assert failing["b"] == ["lifetime_years <= 25", "sun_synchronous_offset_deg <= 0.02"]
    assert failing["c"] == ["sun_synchronous_offset_deg >= -0.02"]
