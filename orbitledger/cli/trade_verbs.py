"""Command-line verbs for trade studies: ``sweep`` and ``disperse``.

``orbitledger sweep CASE --vary PATH=START:STOP:STEP [--vary ...] [--metrics M,...]
[--criteria EXPR ...] [--repeat K:M] [--scheduler ADDRESS] --out FILE.csv|FILE.parquet``

``orbitledger disperse CASE --samples N --disperse PATH=normal:SIGMA|uniform:LOW:HIGH
[--disperse ...] --seed S [same options]``

Every input is checked (paths, grids, metrics, criteria, the output path, the memory the
result would need, the scheduler) before any work, and the output is written atomically
only when the study has run, so a refused input leaves an earlier file untouched. A
progress bar shows on stderr when stderr is a terminal.
"""

from __future__ import annotations

import argparse
import time
from typing import Any

__all__ = ["register", "run_disperse", "run_sweep"]


def _common(verb: argparse.ArgumentParser) -> None:
    verb.add_argument("case", metavar="CASE", help="the base case file (*.case.json)")
    verb.add_argument(
        "--metrics",
        default="orbit,j2",
        metavar="M,...",
        help="metric groups (orbit, j2, repeat_track, eclipses, contacts, lifetime, budget) "
        "or metric names, comma-separated (default orbit,j2)",
    )
    verb.add_argument(
        "--criteria",
        action="append",
        default=[],
        metavar="EXPR",
        help="a threshold such as 'contact_min_per_day>=20' (repeatable): adds "
        "meets_criteria and reasons columns and prints the best candidates",
    )
    verb.add_argument(
        "--repeat", metavar="K:M", help="repeat cycle for repeat_track: K revolutions in M days"
    )
    verb.add_argument(
        "--scheduler",
        metavar="ADDRESS",
        help="run the per-case metrics on this Dask scheduler (tcp://host:8786)",
    )
    verb.add_argument("--chunk-size", type=int, metavar="N", help="cases per Dask task")
    verb.add_argument(
        "--connect-timeout",
        type=float,
        default=10.0,
        metavar="S",
        help="seconds to wait for the scheduler (default 10)",
    )
    verb.add_argument(
        "--out", required=True, metavar="FILE", help="the results table: FILE.csv or FILE.parquet"
    )
    verb.add_argument("--top", type=int, default=5, metavar="N", help="candidates printed (5)")


def register(subparsers: argparse._SubParsersAction) -> None:
    sweep = subparsers.add_parser(
        "sweep",
        help="evaluate metrics over a grid of case inputs",
        description=(
            "Sweep numeric inputs of CASE (JSON paths as in the case file) over grids "
            "START:STOP:STEP (STOP included when on the grid) or lists v1,v2,...: every "
            "combination is a case. Preliminary analysis with the stated models."
        ),
    )
    sweep.add_argument(
        "--vary",
        action="append",
        required=True,
        metavar="PATH=START:STOP:STEP",
        help="an input and its values (repeatable)",
    )
    _common(sweep)
    sweep.set_defaults(run=run_sweep)

    disperse = subparsers.add_parser(
        "disperse",
        help="Monte Carlo dispersion of case inputs",
        description=(
            "Draw N cases with inputs of CASE dispersed: normal:SIGMA about the case's value, "
            "or uniform:LOW:HIGH (absolute bounds), from numpy's PCG64 generator seeded with "
            "--seed (recorded with the results). Preliminary analysis with the stated models."
        ),
    )
    disperse.add_argument(
        "--samples", "--monte-carlo", type=int, required=True, metavar="N", help="cases drawn"
    )
    disperse.add_argument(
        "--disperse",
        action="append",
        required=True,
        metavar="PATH=normal:SIGMA|uniform:LOW:HIGH",
        help="an input and its distribution (repeatable)",
    )
    disperse.add_argument("--seed", type=int, required=True, metavar="S", help="random seed")
    _common(disperse)
    disperse.set_defaults(run=run_disperse)


def _repeat(text: str | None) -> tuple[int, int] | None:
    from ..kernel.errors import InputError

    if text is None:
        return None
    parts = text.split(":")
    try:
        k, m = (int(p) for p in parts)
    except ValueError:
        raise InputError("--repeat", text, "write K:M, e.g. 15:1 (revolutions:days)") from None
    return k, m


def _options(args: argparse.Namespace) -> dict[str, Any]:
    return {
        "scheduler": args.scheduler,
        "chunk_size": args.chunk_size,
        "repeat": _repeat(args.repeat),
        "connect_timeout_s": args.connect_timeout,
    }


def _prepare(args: argparse.Namespace):
    """Everything checked that can be before the study runs: case, output path, criteria."""
    from ..case import load_case
    from ..kernel.errors import InputError
    from ..trade.criteria import parse_criterion
    from ..trade.metrics import resolve_metrics
    from ..trade.tables import check_table_path

    out = check_table_path(args.out)
    case = load_case(args.case)
    criteria = [parse_criterion(text) for text in args.criteria]
    if args.top < 0:
        raise InputError("--top", args.top, "must be >= 0")
    if criteria:  # a criterion on a metric the study will not compute: refused before the run
        columns = resolve_metrics(case, args.metrics, _repeat(args.repeat)).columns
        for c in criteria:
            if c.metric not in columns:
                raise InputError(
                    "--criteria", c.text, f"{c.metric!r} is not among the metrics of --metrics"
                )
    return case, out, criteria


def _finish(frame: Any, args: argparse.Namespace, out, criteria, started: float) -> int:
    from ..trade.criteria import apply_criteria, rank_candidates
    from ..trade.tables import save_table

    if criteria:
        frame = apply_criteria(frame, criteria)
    save_table(frame, out)
    where = args.scheduler or "in-process"
    print(
        f"{frame.attrs['kind']}: {len(frame)} cases, {len(frame.attrs['inputs'])} inputs, "
        f"{len(frame.attrs['metrics'])} metrics, {where}, {time.perf_counter() - started:.1f} s "
        f"-> {out}"
    )
    if "seed" in frame.attrs:
        print(f"seed {frame.attrs['seed']} ({frame.attrs['bit_generator']})")
    if "error" in frame.columns:
        refused = int((frame["error"] != "").sum())
        if refused:
            print(f"{refused} cases refused (see the error column)")
    if criteria:
        passing = int(frame["meets_criteria"].sum())
        print(f"criteria {'; '.join(frame.attrs['criteria'])}: {passing} of {len(frame)} pass")
        if passing and args.top:
            table = rank_candidates(frame, criteria, top=args.top)
            print(table.to_string(index=False))
        if frame.attrs["kind"] == "sweep" and len(frame):
            from ..trade.statistics import criteria_margins, margin_lines

            print("\n".join(margin_lines(criteria_margins(frame, criteria))))
    if frame.attrs["kind"] == "monte-carlo":
        from ..trade.statistics import metric_statistics, statistics_table

        print("statistics over the runs (std: sample, ddof 1; percentiles: linear, type 7):")
        print(statistics_table(metric_statistics(frame, criteria)))
    groups = frame.attrs.get("groups", [])
    if "lifetime" in groups or "budget" in groups:
        from ..kernel.lifetime import LIFETIME_CAUTION

        print(f"caution: {LIFETIME_CAUTION}")
    return 0


def run_sweep(args: argparse.Namespace) -> int:
    from ..trade.sweep import parse_vary, sweep

    case, out, criteria = _prepare(args)
    vary: dict[str, Any] = {}
    for text in args.vary:
        path, values = parse_vary(text)
        vary[path] = values
    started = time.perf_counter()
    frame = sweep(case, vary, args.metrics, **_options(args))
    return _finish(frame, args, out, criteria, started)


def run_disperse(args: argparse.Namespace) -> int:
    from ..trade.dispersion import disperse, parse_disperse

    case, out, criteria = _prepare(args)
    dispersions = dict(parse_disperse(text) for text in args.disperse)
    started = time.perf_counter()
    frame = disperse(case, dispersions, args.samples, args.seed, args.metrics, **_options(args))
    status = _finish(frame, args, out, criteria, started)
    if "lifetime_percentiles" in frame.attrs:
        from ..trade.lifetime_spread import lifetime_spread_lines

        print("\n".join(lifetime_spread_lines(frame.attrs["lifetime_percentiles"])))
    return status
