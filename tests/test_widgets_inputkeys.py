"""The editor's cache keys cover every result group of the analysis (a group missing from the
table once broke the editor): ``widgets.inputkeys.IGNORED`` is derived from ``ALL_GROUPS``.

Outside reference: the case file's own sections (docs/case-file.md, the JSON Schema's
top-level properties) are what a key may leave out; the starter case carries them all.
"""

from __future__ import annotations

from orbitledger.widgets.inputkeys import IGNORED, ignored_sections, inputs_key

from orbitledger.analysis import ALL_GROUPS
from orbitledger.case import case_json_schema, starter_case


def test_every_result_group_has_a_key():
    assert set(ALL_GROUPS) <= set(IGNORED)
    case = starter_case()
    for group in ALL_GROUPS:
        assert inputs_key(case, group).startswith(group + ":")


def test_a_group_not_in_the_table_reads_the_whole_case():
    derived = ignored_sections(("orbit", "a_new_group"), {"orbit": frozenset({"meta"})})
    assert derived["a_new_group"] == frozenset()  # never served from a stale key
    assert derived["orbit"] == frozenset({"meta"})
    case = starter_case()
    edited = case.with_changes({"meta.title": "another title"})
    assert inputs_key(case, "orbit") == inputs_key(edited, "orbit")  # the title is not read


def test_only_real_sections_are_left_out():
    sections = set(case_json_schema()["properties"])
    assert set().union(*IGNORED.values()) <= sections
