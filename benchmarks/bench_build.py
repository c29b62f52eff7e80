"""Build time of a record against plain nbconvert, side by side on the same notebook.

    python benchmarks/bench_build.py [--repeats N] [--notebook STUDY.ipynb]

Measures, in one run, the minimum of N repeats of

- ``jupyter nbconvert --execute --to html`` (the baseline: run + render with the lab template),
- ``orbitledger build --to html`` (run from a clean kernel + record + ledger),
- ``orbitledger build --to html,pdf`` (the same plus printing with Chromium),

each as a fresh process on a fresh copy of the example study (``examples/``), and prints the
ratio build/baseline (target: at most 1.5), the extra time of the PDF (target: at most 5 s)
and the size of the HTML record (target: under 3 MB, one inlined BokehJS).
"""

from __future__ import annotations

import argparse
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
BIN = Path(sys.executable).parent


def _fresh_copy(source: Path, into: Path) -> Path:
    into.mkdir(parents=True)
    for path in source.parent.iterdir():
        if path.is_file() and (path.suffix == ".ipynb" or path.name.endswith(".case.json")):
            shutil.copy2(path, into / path.name)
    return into / source.name


def _time(cmd: list[str], cwd: Path) -> float:
    start = time.perf_counter()
    done = subprocess.run(cmd, cwd=cwd, capture_output=True, text=True, check=False)
    elapsed = time.perf_counter() - start
    if done.returncode != 0:
        raise SystemExit(f"{' '.join(cmd)} failed:\n{done.stderr[-2000:]}")
    return elapsed


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeats", type=int, default=3)
    parser.add_argument(
        "--notebook", type=Path, default=ROOT / "examples" / "kestrel2-orbit-study.ipynb"
    )
    args = parser.parse_args()
    runs: dict[str, list[float]] = {"nbconvert": [], "html": [], "html+pdf": []}
    html_size = 0
    with tempfile.TemporaryDirectory(prefix="orbitledger-bench-") as tmp:
        for n in range(args.repeats):
            # Interleaved, so that a slow moment of the machine hits every variant alike.
            base = _fresh_copy(args.notebook, Path(tmp) / f"nbconvert-{n}")
            runs["nbconvert"].append(
                _time(
                    [str(BIN / "jupyter"), "nbconvert", "--execute", "--to", "html", str(base)],
                    base.parent,
                )
            )
            study = _fresh_copy(args.notebook, Path(tmp) / f"html-{n}")
            runs["html"].append(
                _time([str(BIN / "orbitledger"), "build", str(study), "--to", "html"], study.parent)
            )
            html = next((study.parent / "ledger").rglob("record.html"))
            html_size = html.stat().st_size
            bokehjs_copies = html.read_text(encoding="utf-8").count("/* BEGIN bokeh.min.js */")
            study = _fresh_copy(args.notebook, Path(tmp) / f"pdf-{n}")
            runs["html+pdf"].append(
                _time(
                    [str(BIN / "orbitledger"), "build", str(study), "--to", "html,pdf"],
                    study.parent,
                )
            )
    best = {k: min(v) for k, v in runs.items()}
    ratio = best["html"] / best["nbconvert"]
    pdf_extra = best["html+pdf"] - best["html"]
    print(f"notebook: {args.notebook.name}; min of {args.repeats} repeats, each a fresh process")
    print(f"  jupyter nbconvert --execute --to html   {best['nbconvert']:7.2f} s")
    print(
        f"  orbitledger build --to html             {best['html']:7.2f} s   ratio {ratio:.2f} (target <= 1.5)"
    )
    print(
        f"  orbitledger build --to html,pdf         {best['html+pdf']:7.2f} s   PDF adds {pdf_extra:.2f} s (target <= 5)"
    )
    print(
        f"  HTML record size                        {html_size / 1e6:7.2f} MB  BokehJS copies: {bokehjs_copies} (target < 3 MB, 1)"
    )
    return 0


if __name__ == "__main__":
    sys.exit(main())
