"""Fuzzing the command line with mutated case files (issue 16), bounded for CI.

Random mutations of the starter case (a field set to a random number, a huge integer, text
with control characters, null, a list, or deleted; an unknown field added; an epoch from the
edges of the calendar) are run through ``summary``, ``passes``, ``budget`` and ``lifetime`` in
this process (``cli.main`` with capsys). Each run must end with exit 0 or 2, never a traceback or
another status; on 2, exactly one line on stderr that names the case file and a field that
exists in the case (or in the file as mutated); the case file is never changed; each run ends
within an alarm and under an address-space limit (a hang or a blow-up fails the test).

The starter case's window is shortened to six hours so that a valid mutation runs ``passes``
in well under a second; the example count is bounded (``max_examples``) so the file takes well
under a minute. The properties are the project's error contract (DEVELOPERS.md: one line naming
file and field, exit 2), not a numeric reference; the numeric references are in the other tests.
"""

from __future__ import annotations

import copy
import json
import re
import resource
import signal

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from orbitledger.case.starter import STARTER_DATA
from orbitledger.cli.main import main

VERBS = ("summary", "passes", "budget", "lifetime")
BASE = copy.deepcopy(STARTER_DATA)
BASE["window"] = {"duration_s": 6 * 3600.0, "step_s": 10.0}
RUN_SECONDS = 30
ADDRESS_SPACE_HEADROOM = 2 * 2**30


def _leaves(data, prefix=""):
    if isinstance(data, dict):
        for key, value in data.items():
            path = f"{prefix}.{key}" if prefix else key
            yield path
            yield from _leaves(value, path)
    elif isinstance(data, list):
        for k, value in enumerate(data):
            path = f"{prefix}[{k}]"
            yield path
            yield from _leaves(value, path)


PATHS = sorted(set(_leaves(BASE)))
_PART = re.compile(r"[^.\[\]]+|\[\d+\]")


def _parts(path):
    return [int(p[1:-1]) if p.startswith("[") else p for p in _PART.findall(path)]


def _resolves(data, path):
    node = data
    for part in _parts(path):
        if isinstance(part, int):
            if not isinstance(node, list) or part >= len(node):
                return False
        elif not isinstance(node, dict) or part not in node:
            return False
        node = node[part]
    return True


def _apply(data, path, action, value):
    *head, last = _parts(path)
    node = data
    for part in head:
        node = node[part]
    if action == "delete":
        if isinstance(node, dict):
            del node[last]
        else:
            node.pop(last)
    elif action == "add-unknown" and isinstance(node, dict):
        node["unknown_" + str(last)] = value
    else:
        node[last] = value


numbers = st.one_of(
    st.floats(allow_nan=False, allow_infinity=False),
    st.floats(min_value=-1e-300, max_value=1e-300),
    st.sampled_from([0.0, -0.0, 1e308, -1e308, 5e-324, 1e10, 3.2e9, 1e6, -1.0]),
    st.integers(min_value=-(10**30), max_value=10**30),
    st.integers(min_value=25, max_value=4000).map(lambda n: int("9" * n)),
)
texts = st.text(
    alphabet=st.sampled_from(list("ab1Z .:-_") + ["\n", "\x1b", "\u202e", "\x00", "é"]),
    max_size=12,
)
epochs = st.sampled_from(
    [
        "9999-12-31T23:59:59Z",
        "1959-12-31T23:59:59Z",
        "2200-01-01T00:00:00Z",
        "2016-12-31T23:59:60Z",
        "2027-02-30T00:00:00Z",
        "2027-03-21T10:30:00+05:00",
        "not a date",
    ]
)
values = st.one_of(
    numbers, texts, epochs, st.none(), st.booleans(), st.lists(numbers, max_size=3), st.just({})
)
mutations = st.lists(
    st.tuples(
        st.sampled_from(PATHS), st.sampled_from(["set", "set", "delete", "add-unknown"]), values
    ),
    min_size=1,
    max_size=3,
)


class _Alarm(Exception):
    pass


def _on_alarm(signum, frame):
    raise _Alarm()


def _address_space_bytes():
    with open("/proc/self/status", encoding="ascii") as status:
        for line in status:
            if line.startswith("VmSize:"):
                return int(line.split()[1]) * 1024
    return 0


def _run_bounded(argv):
    """main(argv) under an alarm and an address-space limit (both restored afterwards)."""
    soft, hard = resource.getrlimit(resource.RLIMIT_AS)
    limit = _address_space_bytes() + ADDRESS_SPACE_HEADROOM
    if hard != resource.RLIM_INFINITY:
        limit = min(limit, hard)
    previous = signal.signal(signal.SIGALRM, _on_alarm)
    resource.setrlimit(resource.RLIMIT_AS, (limit, hard))
    signal.alarm(RUN_SECONDS)
    try:
        return main(argv)
    finally:
        signal.alarm(0)
        resource.setrlimit(resource.RLIMIT_AS, (soft, hard))
        signal.signal(signal.SIGALRM, previous)


@pytest.fixture(scope="module")
def workdir(tmp_path_factory):
    return tmp_path_factory.mktemp("fuzz")


@settings(
    max_examples=60,
    deadline=None,
    derandomize=True,  # the same examples on every run: a failure reproduces
    suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow],
)
@given(changes=mutations, verb=st.sampled_from(VERBS))
def test_a_mutated_case_exits_0_or_2_with_one_line_naming_file_and_field(
    workdir, capsys, changes, verb
):
    data = copy.deepcopy(BASE)
    for path, action, value in changes:
        if _resolves(data, path):
            _apply(data, path, action, value)
    path = workdir / "mutated.case.json"
    text = json.dumps(data, allow_nan=True)
    path.write_text(text, encoding="utf-8")
    try:
        status = _run_bounded([verb, str(path)])
    except _Alarm:
        pytest.fail(f"{verb} ran past {RUN_SECONDS} s on {text[:300]}")
    out, err = capsys.readouterr()
    assert path.read_text(encoding="utf-8") == text, "the case file was changed"
    assert status in (0, 2), (status, err[-500:])
    assert "Traceback" not in err, err[-2000:]
    if status == 0:
        return
    assert out == "", out[:500]
    assert err.count("\n") == 1, err
    prefix = f"orbitledger {verb}: {path}"
    assert err.startswith(prefix), err
    rest = err[len(prefix) :]
    if re.match(r"^:\d+:\d+: ", rest):  # malformed JSON at line:column (a NaN, say)
        return
    assert rest.startswith(": "), err
    field = re.split(r" = |: ", rest[2:], maxsplit=1)[0]
    parent = field.rsplit(".", 1)[0] if "." in field else ""
    assert (
        _resolves(data, field)
        or _resolves(BASE, field)
        or (parent and _resolves(data, re.sub(r"\[\d+\]$", "", parent)))
        or (field.startswith("orbit.") and _resolves(data, "orbit"))  # the other orbit forms
    ), f"{field!r} is not a field of the case: {err}"
