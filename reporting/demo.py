"""``orbitledger demo``: build the example study into a fresh ledger, HTML and PDF.

The example is ``examples/kestrel2-orbit-study.ipynb`` with its case files (the invented
Kestrel-2 satellite of the Fenwick Orbital Lab). It is copied to ``OUT/study/`` and built into
``OUT/ledger/``; the example folder itself is never written to.
"""

from __future__ import annotations

import shutil
from importlib import resources
from pathlib import Path

from orbitledger.kernel.errors import InputError

from .build import BuildOutcome, build

__all__ = ["EXAMPLE_NOTEBOOK", "example_folder", "run_demo"]

EXAMPLE_NOTEBOOK = "kestrel2-orbit-study.ipynb"


def example_folder() -> Path:
    """The folder holding the example study: the repository's ``examples/``, installed as the
    package ``orbitledger.examples`` (an editable install and a wheel alike)."""
    candidate = Path(str(resources.files("orbitledger.examples")))
    if (candidate / EXAMPLE_NOTEBOOK).is_file():
        return candidate
    raise InputError(
        "demo", EXAMPLE_NOTEBOOK, "the example study is not installed with this orbitledger"
    )


def run_demo(out: str | Path, *, to: tuple[str, ...] = ("html", "pdf")) -> BuildOutcome:
    """Copy the example study to ``out/study``, build it into ``out/ledger``; refuse a used ``out``."""
    out = Path(out).absolute()
    if out.exists() and (not out.is_dir() or any(out.iterdir())):
        raise InputError(
            "--out", str(out), "exists and is not empty; choose a new folder for a fresh ledger"
        )
    source = example_folder()
    study = out / "study"
    study.mkdir(parents=True)
    for path in source.iterdir():
        if path.is_file() and (path.suffix == ".ipynb" or path.name.endswith(".case.json")):
            shutil.copy2(path, study / path.name)
    return build(
        study / EXAMPLE_NOTEBOOK, to=to, ledger_dir=out / "ledger", note="orbitledger demo"
    )
