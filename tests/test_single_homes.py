"""One home per shared helper: a second definition of any of them fails this test.

The source of ``orbitledger/``, ``widgets/`` and ``reporting/`` is read with ``ast`` (nothing
is imported). Each helper family has a pattern for the names its copies used to have and the
one module (and names) allowed to define it; the low-level calls only a writer or a bar makes
(``tempfile.mkstemp``, ``os.replace``, ``tqdm``) and the unit-suffix table itself are also
looked for outside their homes. The homes are listed in DEVELOPERS.md ("One home per helper").
"""

from __future__ import annotations

import ast
import re

import pytest
from test_import_graph import MODULES

# family: (pattern of function names, {module: names allowed there})
HOMES: dict[str, tuple[str, dict[str, set[str]]]] = {
    "atomic file writer": (
        r"atomic|replace_atomically|write_once|safe_write",
        {
            "orbitledger.case.io": {"atomic_write", "atomic_write_text"},
            # write-once artifacts: atomic_write_text(exclusive=True) with the ledger's message
            "orbitledger.reporting.ledger_parts": {"atomic_write_once"},
        },
    ),
    "canonical JSON": (
        r"canonical_(json|dumps|text)|dumps_canonical|^_?canonical$",
        {
            "orbitledger.case.canonical": {"canonical_json"},
            "orbitledger.case.model": {"canonical_json"},  # Case.canonical_json() calls it
        },
    ),
    "sha256 hex digest": (
        r"^_?sha(256)?(_hex|_of|_text|_file)?$|^_?(file|text|bytes)_sha256$",
        {
            "orbitledger.reporting.ledger_parts": {"sha256_hex"},
            "orbitledger.reporting.record_page": {"_sha"},  # of a text: the page's blocks
        },
    ),
    "UTC now": (
        r"utc_?now|now_?utc|^_?now$",
        {"orbitledger.reporting.ledger_parts": {"utc_now"}},
    ),
    "UTC time stamp parser": (
        # reporting.display kept its own ``_parse_utc`` (datetime.fromisoformat) until it
        # took parse_utc_stamp(fractions=True)
        r"parse_utc_stamp|parse_stamp|parse_time_utc|stamp_to_datetime|^_parse_utc$|_iso_utc$",
        {"orbitledger.reporting.ledger_parts": {"parse_utc_stamp"}},
    ),
    "unit suffix of a field name": (
        r"unit_of|unit_for|split_unit|path_unit|unit_suffix",
        {
            "orbitledger.case.units": {"unit_of", "split_unit"},
            "orbitledger.widgets.fields": {"unit_for"},  # unit_of with superscripts
            "orbitledger.cli.case_verbs": {"_split_unit"},  # split_unit, words spaced
        },
    ),
    "progress bar": (
        r"progress_bar|fraction_bar|_progress$|^_?bar$",
        {"orbitledger.progress": {"progress_bar", "fraction_bar"}},
    ),
    "notebook detector": (
        r"in_notebook|is_notebook|in_jupyter|is_jupyter|in_ipython",
        {"orbitledger.progress": {"in_notebook"}},
    ),
}

# Calls that only the home of a family makes.
CALL_HOMES = {
    "tempfile.mkstemp": {"orbitledger.case.io"},
    "os.replace": {"orbitledger.case.io"},
    "os.link": {"orbitledger.case.io"},
    # The record's time stamps (YYYY-MM-DDTHH:MM:SSZ) are read in one place.
    "datetime.strptime": {"orbitledger.reporting.ledger_parts"},
    "dt.datetime.strptime": {"orbitledger.reporting.ledger_parts"},
    # ... and nowhere through datetime's own ISO parser (it takes any zone offset)
    "datetime.fromisoformat": set(),
    "dt.datetime.fromisoformat": set(),
    "_dt.datetime.fromisoformat": set(),
}
TQDM_HOMES = {"orbitledger.progress"}


def _trees() -> dict[str, ast.Module]:
    return {m: ast.parse(p.read_text(encoding="utf-8"), str(p)) for m, p in MODULES.items()}


TREES = _trees()


def definitions(pattern: str) -> set[tuple[str, str]]:
    """(module, name) of every function or method whose name matches ``pattern``."""
    found = set()
    for module, tree in TREES.items():
        for node in ast.walk(tree):
            if isinstance(node, ast.FunctionDef | ast.AsyncFunctionDef):
                if re.search(pattern, node.name):
                    found.add((module, node.name))
    return found


@pytest.mark.parametrize("family", sorted(HOMES))
def test_each_helper_is_defined_in_its_one_home(family):
    pattern, homes = HOMES[family]
    allowed = {(m, n) for m, names in homes.items() for n in names}
    found = definitions(pattern)
    assert found - allowed == set(), f"a second {family}: import it from {sorted(homes)}"
    assert allowed <= found, f"the home of the {family} moved: update HOMES and DEVELOPERS.md"


def test_writers_and_bars_are_made_only_in_their_homes():
    calls = {}
    tqdm = set()
    for module, tree in TREES.items():
        for node in ast.walk(tree):
            if isinstance(node, ast.Call) and isinstance(node.func, ast.Attribute):
                name = ast.unparse(node.func)
                if name in CALL_HOMES:
                    calls.setdefault(name, set()).add(module)
            if isinstance(node, ast.ImportFrom | ast.Import):
                names = [node.module or ""] if isinstance(node, ast.ImportFrom) else []
                names += [a.name for a in getattr(node, "names", [])]
                if any(n == "tqdm" or n.startswith("tqdm.") for n in names):
                    tqdm.add(module)
    assert {k: v - CALL_HOMES[k] for k, v in calls.items() if v - CALL_HOMES[k]} == {}
    assert calls["os.replace"] == {"orbitledger.case.io"}  # the scan sees the home itself
    assert tqdm == TQDM_HOMES


def test_the_unit_suffix_table_is_written_once():
    # A tuple of (suffix, unit) pairs such as ("_km_s", "km/s") is the table itself.
    tables = set()
    for module, tree in TREES.items():
        for node in ast.walk(tree):
            if isinstance(node, ast.Tuple) and len(node.elts) >= 4:
                pairs = [
                    e
                    for e in node.elts
                    if isinstance(e, ast.Tuple)
                    and len(e.elts) == 2
                    and all(
                        isinstance(x, ast.Constant) and isinstance(x.value, str) for x in e.elts
                    )
                    and e.elts[0].value.startswith("_")
                ]
                if any(p.elts[0].value == "_km_s" for p in pairs):
                    tables.add(module)
    assert tables == {"orbitledger.case.units"}


def test_the_one_unit_table_reads_every_face_alike():
    # The suffix convention of docs/case-file.md; years as "yr" like the analysis results.
    from orbitledger.reporting.templating import unit_of as record_unit
    from orbitledger.widgets.fields import unit_for

    from orbitledger.case.units import split_unit, unit_of

    assert unit_of("orbit.altitude_km") == "km" and unit_of("stations[0].lat_deg") == "deg"
    assert unit_of("body.mu_km3_s2") == "km^3/s^2" and unit_for("mu_km3_s2") == "km\u00b3/s\u00b2"
    assert unit_of("budget.mission_years") == record_unit("budget.mission_years") == "yr"
    assert unit_for("mission_years") == "yr" and unit_of("orbit.e") == ""
    assert split_unit("raan_rate_deg_day") == ("raan_rate", "deg/day")
    assert split_unit("v_km_s") == ("v", "km/s") and split_unit("_s") == ("_s", "")


def test_the_one_canonical_json_folds_negative_zero_for_records_too():
    # One spelling of zero in every fingerprint (RFC 8785 section 3.2.2.3 writes -0 as 0).
    from orbitledger.reporting.record import canonical_dumps, fingerprint_of

    from orbitledger.case.canonical import canonical_json

    assert canonical_dumps({"b": -0.0, "a": [1, (2, 3)]}) == '{"a":[1,[2,3]],"b":0.0}'
    assert canonical_dumps is canonical_json
    assert fingerprint_of({"x": -0.0}) == fingerprint_of({"x": 0.0})


def test_the_one_time_stamp_parser_takes_only_what_utc_now_writes():
    # ISO 8601 / RFC 3339 UTC ("Z") to the second, as the ledger and the signatures write it.
    from datetime import datetime, timezone

    from orbitledger.reporting.ledger_parts import parse_utc_stamp, utc_now

    assert parse_utc_stamp("2026-03-01T12:30:05Z") == datetime(
        2026, 3, 1, 12, 30, 5, tzinfo=timezone.utc
    )
    now = utc_now()
    assert parse_utc_stamp(now).strftime("%Y-%m-%dT%H:%M:%SZ") == now
    for other in ("2026-03-01T12:30:05+01:00", "2026-03-01 12:30:05", None, "2026-03-01T12:30:05"):
        with pytest.raises(ValueError):
            parse_utc_stamp(other)
        with pytest.raises(ValueError):
            parse_utc_stamp(other, fractions=True)
    # Instants with a fraction (the kernel's utc_iso, records' results) only when asked for;
    # the zone is Z either way (RFC 3339 section 5.6 time-secfrac; offsets stay refused).
    with pytest.raises(ValueError):
        parse_utc_stamp("2026-03-01T12:30:05.25Z")
    assert parse_utc_stamp("2026-03-01T12:30:05.25Z", fractions=True) == datetime(
        2026, 3, 1, 12, 30, 5, 250_000, tzinfo=timezone.utc
    )
    assert parse_utc_stamp("2026-03-01T12:30:05.1234567Z", fractions=True).microsecond == 123456
    assert parse_utc_stamp(now, fractions=True) == parse_utc_stamp(now)
    for other in ("2026-03-01T12:30:05.25+01:00", "2026-03-01T12:30:05.Z", "2026-03-01T12:30:05.2x5Z",
                  "2026-03-01T12:30:05.\u0665Z", "2026-03-01T12:30:05.25"):  # fmt: skip
        with pytest.raises(ValueError):
            parse_utc_stamp(other, fractions=True)


PASS_MODULES = ("orbitledger.kernel.passes", "orbitledger.kernel.sites")


def test_a_pass_record_is_built_in_one_place():
    # kernel.passes.build_passes makes every Pass (station passes and terrain-masked sites);
    # kernel.passes.culminations refines the maximum elevation of both.
    makers = set()
    for module, tree in TREES.items():
        for node in ast.walk(tree):
            if isinstance(node, ast.FunctionDef):
                for call in ast.walk(node):
                    name = ast.unparse(call.func) if isinstance(call, ast.Call) else ""
                    if name == "Pass" or (name == "refine_maxima" and module in PASS_MODULES):
                        makers.add((module, node.name, name))
    assert makers == {
        ("orbitledger.kernel.passes", "build_passes", "Pass"),
        ("orbitledger.kernel.passes", "culminations", "refine_maxima"),
    }


def test_one_iso_8601_grammar_for_epochs():
    # Three grammars once disagreed on zone offsets (a case refused +01:00, the kernel shifted
    # it, the records' display read it with datetime.fromisoformat). The grammar is
    # kernel.timescales.ISO_DATE_TIME; the case's text goes through it and then refuses
    # offsets. Any other regular expression spelling a date YYYY-MM-DD is a second grammar.
    date_regex = re.compile(r"\\d\{4\}\)?-\(?(\?P<\w+>)?\\d\{2\}")
    found = set()
    for module, tree in TREES.items():
        for node in ast.walk(tree):
            if isinstance(node, ast.Constant) and isinstance(node.value, str):
                if date_regex.search(node.value):
                    found.add(module)
    assert found == {"orbitledger.kernel.timescales"}


def test_the_case_and_the_kernel_read_an_epoch_alike():
    from orbitledger.case.utc import normalise_utc, utc_to_jd
    from orbitledger.kernel.timescales import parse_utc

    # The same instant, as a case writes it and as the kernel reads it (ERFA eraDtf2d, the
    # quasi-JD of UTC); a zone offset the kernel shifts is refused by the case.
    for text in ("2027-03-21T10:30:00Z", "2027-03-21t10:30:00.25z", "2016-12-31T23:59:60Z"):
        kernel = tuple(float(x) for x in parse_utc(text))
        assert utc_to_jd(normalise_utc(text)) == pytest.approx(kernel, abs=1e-12)
    assert tuple(map(float, parse_utc("2027-03-21T11:30:00+01:00"))) == tuple(
        map(float, parse_utc("2027-03-21T10:30:00Z"))
    )
    with pytest.raises(ValueError, match="zone offset"):
        normalise_utc("2027-03-21T11:30:00+01:00")
