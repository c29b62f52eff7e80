"""The command line imports only what a verb uses (speed is measured by
benchmarks/bench_cli_start.py; these tests check the cause, the set of modules imported)."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest

CASE = Path(__file__).resolve().parent.parent / "examples" / "candidate-a.case.json"
HEAVY = {"numpy", "scipy", "pydantic", "erfa", "bokeh", "pandas", "nbconvert", "ipywidgets"}


def _top_level_modules_after(code: str) -> set[str]:
    """The top-level packages in sys.modules after running ``code`` in a fresh interpreter."""
    probe = f"{code}\nimport sys, json\nprint(json.dumps(sorted(sys.modules)))"
    out = subprocess.run(
        [sys.executable, "-c", probe], check=True, capture_output=True, text=True
    ).stdout
    return {name.split(".")[0] for name in json.loads(out.splitlines()[-1])}


@pytest.mark.parametrize("option", ["--version", "--help"])
def test_version_and_help_import_nothing_heavy(option):
    code = (
        "import contextlib, io\n"
        "from orbitledger.cli.main import main\n"
        "with contextlib.redirect_stdout(io.StringIO()):\n"
        "    try:\n"
        f"        main([{option!r}])\n"
        "    except SystemExit:\n"
        "        pass"
    )
    assert not (_top_level_modules_after(code) & HEAVY)


def test_import_orbitledger_imports_nothing_heavy():
    assert not (_top_level_modules_after("import orbitledger") & HEAVY)


def test_summary_imports_no_scipy_figures_or_reporting():
    code = (
        "import contextlib, io\n"
        "from orbitledger.cli.main import main\n"
        "with contextlib.redirect_stdout(io.StringIO()):\n"
        f"    assert main(['summary', {str(CASE)!r}]) == 0"
    )
    imported = _top_level_modules_after(code)
    assert {"numpy", "pydantic", "erfa"} <= imported  # what a summary does use
    assert not (imported & {"scipy", "bokeh", "pandas", "nbconvert", "ipywidgets", "tqdm"})


def test_the_kernel_imports_its_modules_on_first_use():
    code = "import orbitledger.kernel.constants"
    assert "scipy" not in _top_level_modules_after(code)
    code = "from orbitledger.kernel import propagate_cowell, lambert, InputError"
    assert "scipy" in _top_level_modules_after(code)  # the numerical integrator's (solve_ivp)


def test_every_public_kernel_name_resolves():
    import orbitledger.kernel as kernel

    for name in kernel.__all__:
        assert getattr(kernel, name) is not None, name
    assert callable(kernel.lambert)  # the function, not the module of the same name
    assert "lifetime_years" in dir(kernel)
    with pytest.raises(AttributeError):
        kernel.no_such_name  # noqa: B018
