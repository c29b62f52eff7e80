"""How fast the command line starts: whole processes, against a bare Python.

Baseline: ``python -c pass`` (the interpreter's own start). Candidates, each a fresh process of
the same interpreter: ``orbitledger --version``, ``orbitledger --help`` and ``orbitledger
summary CASE`` on the example's candidate A (read, validate, two-body summary, print). Targets
(issue 13): ``--version`` at most 8 x and ``summary CASE`` at most 25 x the bare start. Each is
the fastest of interleaved runs (see ``_timing.py``). Also listed: the modules ``--version``
imports beyond a bare start, so a regression names its cause.

Run: .venv/bin/python benchmarks/bench_cli_start.py
"""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))

from _timing import min_times_s, report_ratios  # noqa: E402

ROOT = Path(__file__).resolve().parent.parent
CASE = ROOT / "examples" / "candidate-a.case.json"
COMMAND = [sys.executable, "-m", "orbitledger"]


def _run(arguments: list[str]) -> None:
    subprocess.run(arguments, check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)


def _imported_by(code: str) -> set[str]:
    out = subprocess.run(
        [sys.executable, "-c", f"{code}\nimport sys, json; print(json.dumps(sorted(sys.modules)))"],
        check=True,
        capture_output=True,
        text=True,
    ).stdout
    return set(json.loads(out.splitlines()[-1]))


def main() -> int:
    best = min_times_s(
        {
            "python -c pass": lambda: _run([sys.executable, "-c", "pass"]),
            "orbitledger --version": lambda: _run([*COMMAND, "--version"]),
            "orbitledger --help": lambda: _run([*COMMAND, "--help"]),
            "orbitledger summary CASE": lambda: _run([*COMMAND, "summary", str(CASE)]),
        },
        repeats=9,
    )
    ok = report_ratios(
        best,
        "python -c pass",
        {"orbitledger --version": 8.0, "orbitledger summary CASE": 25.0},
    )
    bare = _imported_by("pass")
    version = _imported_by("import orbitledger.cli.main as m; m.build_parser()")
    extra = sorted(name for name in version - bare if "." not in name)
    print(f"top-level packages --version imports beyond a bare start: {', '.join(extra)}")
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
