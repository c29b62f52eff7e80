"""Edit -> updated results and figure data in the case editor, one-day window at 10 s steps.

Target (issue 3): median at most 50 ms per edit, for the two-body and the J2 mean-element
propagators. Each edit changes the eccentricity (alternating values, so every edit changes the
orbit), and goes the whole way: validation, atomic save of the case file, results panel, the
figures' kernel work (ephemeris and ground track over 8 641 epochs), the figure data and the
document patches to the widgets. Without a front end the widget messages are built and
serialised but not sent, so "widget traffic" is the cost on the kernel's side.

Run: /work/venv/bin/python benchmarks/bench_editor.py [--edits N]
"""

from __future__ import annotations

import argparse
import json
import shutil
import statistics
import tempfile
import time
from pathlib import Path

from orbitledger.widgets import CaseEditor

import orbitledger

EXAMPLE = Path(__file__).resolve().parents[1] / "examples" / "candidate-a.case.json"


def _traffic_of_one_edit(editor: CaseEditor) -> tuple[int, int]:
    """Messages and bytes (JSON text plus binary buffers) the figures send for one more edit."""
    count = [0, 0]
    shown = [fig for fig in editor._figures if fig.view is not None]  # not those still waiting
    for fig in shown:
        view = fig.view

        def send(content, buffers=None, view=view) -> None:
            count[0] += 1
            count[1] += len(json.dumps(content)) + sum(len(b) for b in buffers or [])

        view.send = send
    editor.apply({"orbit.e": 0.0042})
    for fig in shown:
        del fig.view.send  # back to the widget's own method
    return count[0], count[1]


def bench(propagator: str, edits: int) -> dict[str, float]:
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "candidate-a.case.json"
        shutil.copy(EXAMPLE, path)
        # The window results (eclipses, contacts, lifetime) run after each edit in a background
        # thread; they are not part of "edit -> results panel and figures", and here they would
        # only compete for the CPU with the path being timed.
        editor = CaseEditor(orbitledger.open_case(path), window_results=False)
        if editor.case.force_model.propagator != propagator:
            editor.apply({"force_model.propagator": propagator})
        total, parts = [], {"kernel_s": [], "figure_data_s": [], "widget_s": [], "save_s": []}
        per_figure: dict[str, list[float]] = {f.name: [] for f in editor._figures}
        for k in range(edits):
            e = 0.001 + 0.0005 * (k % 7)
            t0 = time.perf_counter()
            editor.apply({"orbit.e": e})
            total.append(time.perf_counter() - t0)
            for fig in editor._figures:
                per_figure[fig.name].append(fig.timings["build_s"] + fig.timings["sync_s"])
            for key in ("kernel_s", "figure_data_s", "widget_s"):
                parts[key].append(editor.timings[key])
            parts["save_s"].append(
                total[-1]
                - editor.timings["kernel_s"]
                - editor.timings["figure_data_s"]
                - editor.timings["widget_s"]
            )
        sent = _traffic_of_one_edit(editor)
        out = {
            "median_s": statistics.median(total),
            "sent_bytes": sent[1],
            "sent_messages": sent[0],
        }
        out.update({key: statistics.median(values) for key, values in parts.items()})
        out.update({f"figure {k}": statistics.median(v) for k, v in per_figure.items()})
        return out


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--edits", type=int, default=40)
    args = parser.parse_args()
    print(
        "edit -> results + figure data, 1-day window at 10 s (8 641 epochs); median of "
        f"{args.edits} edits"
    )
    for propagator in ("two-body", "j2-mean"):
        try:
            r = bench(propagator, args.edits)
        except (ValueError, KeyError) as exc:
            print(f"  {propagator:9s}: not available ({exc})")
            continue
        ms = {k: 1000.0 * v for k, v in r.items()}
        print(
            f"  {propagator:9s}: {ms['median_s']:6.1f} ms  (target 50 ms: "
            f"{ms['median_s'] / 50.0:.2f} of it)"
        )
        print(
            f"             kernel {ms['kernel_s']:5.1f} ms | figure data {ms['figure_data_s']:5.1f}"
            f" ms | widget traffic {ms['widget_s']:5.1f} ms | validate + save "
            f"{ms['save_s']:5.1f} ms"
        )
        print(
            f"             sent per edit: {r['sent_messages']:.0f} messages, "
            f"{r['sent_bytes'] / 1024:.0f} KiB (column data as binary buffers)"
        )
        figures = ", ".join(f"{k[7:]} {v:.1f}" for k, v in ms.items() if k.startswith("figure "))
        print(f"             per figure, data + sync (ms): {figures}")


if __name__ == "__main__":
    main()
