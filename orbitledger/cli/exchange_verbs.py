"""Command-line verbs for exchange with other flight-dynamics tools.

``orbitledger import FILE [--epoch UTC] -o CASE.case.json``: a TLE (two or three lines) or a
CCSDS OPM (KVN) becomes a case; the format is detected from the text. An existing case file is
never overwritten.

``orbitledger export CASE --format opm|oem|csv [--what ...] [-o FILE]``: the case as an OPM, its
ephemeris over the analysis window as an OEM, or a CSV of its ephemeris, ground track, passes
or eclipses; to stdout, or to FILE (never over an existing file unless ``--force``).

``orbitledger export CASE --format tle [--out FILE] [--norad-id N] [--name NAME]``: SGP4 mean
elements fitted to the case's trajectory (``exchange.tle_fit``), with the fit's residual.

``orbitledger ephemeris-diff CASE FILE.oem [--csv]``: an OEM against the case propagated to
its epochs; position differences in RTN and their size.
"""

from __future__ import annotations

import argparse
import sys
import warnings
from pathlib import Path

__all__ = ["detect_format", "register"]


def register(subparsers: argparse._SubParsersAction) -> None:
    imp = subparsers.add_parser(
        "import",
        help="make a case from a TLE or a CCSDS OPM",
        description=(
            "Make a case file from FILE: a two-line element set (optionally after a name "
            "line), propagated with SGP4 to the epoch and rotated to GCRF, or a CCSDS OPM "
            "(KVN). The imported text is kept in the case's source section. An existing case "
            "file is never overwritten."
        ),
    )
    imp.add_argument("file", metavar="FILE", help="the TLE or OPM text file ('-' for stdin)")
    imp.add_argument("-o", "--output", required=True, metavar="CASE", help="new *.case.json")
    imp.add_argument(
        "--epoch",
        metavar="UTC",
        help="TLE only: the case epoch (ISO 8601 UTC); default the TLE epoch",
    )
    imp.add_argument(
        "--propagator",
        choices=("sgp4", "two-body", "j2-mean", "numerical"),
        help="the case's propagator (default: sgp4 for a TLE, two-body for an OPM)",
    )
    imp.add_argument("--title", help="meta.title (default from the imported object)")
    imp.add_argument("--record-id", help="meta.record_id (default TLE-<catalog> / OPM-<id>)")
    imp.set_defaults(run=run_import)

    exp = subparsers.add_parser(
        "export",
        help="write a case as a CCSDS OPM or OEM, a TLE, or as CSV",
        description=(
            "Write CASE as a CCSDS OPM (its state), an OEM (its ephemeris over the analysis "
            "window, GCRF, UTC), a TLE (SGP4 mean elements fitted by least squares to the "
            "case's trajectory over --fit-days, with the fit's RMS and largest position "
            "residual) or CSV (--what: ephemeris, groundtrack, passes, eclipses). "
            "Preliminary analysis with the stated models."
        ),
    )
    exp.add_argument("case", metavar="CASE", help="the case file (*.case.json)")
    exp.add_argument("--format", required=True, choices=("opm", "oem", "tle", "csv"))
    exp.add_argument(
        "--what",
        default="ephemeris",
        choices=("ephemeris", "groundtrack", "passes", "eclipses"),
        help="csv only: what to write (default ephemeris)",
    )
    exp.add_argument("--step", type=float, metavar="S", help="oem only: step, s (default window)")
    exp.add_argument("--originator", default="orbitledger", help="ORIGINATOR of an OPM/OEM")
    exp.add_argument("-o", "--output", "--out", metavar="FILE", help="write here instead of stdout")
    exp.add_argument("--force", action="store_true", help="overwrite an existing FILE")
    from .tle_export import add_tle_options

    add_tle_options(exp)
    exp.set_defaults(run=run_export)

    diff = subparsers.add_parser(
        "ephemeris-diff",
        help="compare a CCSDS OEM with the case's own propagation",
        description=(
            "Position differences (OEM minus CASE, km, in the RTN axes of the case's state) "
            "at the OEM's epochs, with the case propagated by its own propagator."
        ),
    )
    diff.add_argument("case", metavar="CASE", help="the case file (*.case.json)")
    diff.add_argument("oem", metavar="OEM", help="the OEM file (KVN)")
    diff.add_argument("--segment", type=int, default=0, help="which segment (default 0)")
    diff.add_argument("--csv", action="store_true", help="print CSV instead of a summary")
    diff.set_defaults(run=run_ephemeris_diff)


def detect_format(text: str) -> str:
    """``"opm"``, ``"oem"`` or ``"tle"`` from the text; ``""`` when none fits."""
    for raw in text.splitlines():
        line = raw.strip()
        if not line or line.startswith("COMMENT"):
            continue
        head = line.split("=")[0].strip()
        if head == "CCSDS_OPM_VERS":
            return "opm"
        if head == "CCSDS_OEM_VERS":
            return "oem"
        break
    rows = [r for r in text.splitlines() if r.strip()]
    if any(r.startswith("1 ") for r in rows) and any(r.startswith("2 ") for r in rows):
        return "tle"
    return ""


def _read(path: str, what: str) -> str:
    from ..kernel.errors import InputError

    if path == "-":
        return sys.stdin.read()
    try:
        return Path(path).read_text(encoding="utf-8")
    except FileNotFoundError:
        raise InputError(what, path, "no such file") from None
    except (OSError, UnicodeDecodeError) as err:
        raise InputError(what, path, f"cannot be read: {err}") from None


def _with_file(err: Exception, name: str) -> Exception:
    from ..kernel.errors import InputError

    if isinstance(err, InputError) and err.file is None:
        return InputError(err.field, err.value, err.reason, file=name)
    return err


def run_import(args: argparse.Namespace) -> int:
    from ..case import write_new_case
    from ..exchange.importing import opm_case, tle_case
    from ..kernel.errors import InputError
    from .main import UsageError

    text = _read(args.file, "FILE")
    kind = detect_format(text)
    if kind == "oem":
        raise UsageError(
            f"{args.file} is an OEM (an ephemeris): compare it with a case by "
            "'orbitledger ephemeris-diff CASE OEM'"
        )
    if kind == "":
        raise UsageError(f"{args.file} is neither a TLE nor a CCSDS OPM (KVN)")
    if kind == "opm" and args.epoch:
        raise UsageError("--epoch is for TLEs: an OPM state is given at its own epoch")
    if Path(args.output).exists():
        raise InputError("-o", args.output, "already exists; not overwritten")
    name = Path(args.file).name
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        try:
            if kind == "tle":
                imported = tle_case(
                    text,
                    epoch_utc=args.epoch,
                    propagator=args.propagator or "sgp4",
                    title=args.title,
                    record_id=args.record_id,
                )
            else:
                imported = opm_case(
                    text,
                    file=name,
                    propagator=args.propagator or "two-body",
                    title=args.title,
                    record_id=args.record_id,
                )
        except InputError as err:
            raise _with_file(err, args.file) from None
    for w in caught:
        print(f"orbitledger import: warning: {w.message}", file=sys.stderr)
    write_new_case(args.output, imported.case)
    case = imported.case
    print(
        f"{args.output}: {kind.upper()} -> case {case.meta.record_id} at {case.epoch_utc}, "
        f"propagator {case.force_model.propagator}, source fingerprint "
        f"{case.source.fingerprint[:16]}..."  # type: ignore[union-attr]
    )
    return 0


def _write(text: str, args: argparse.Namespace) -> None:
    from ..case import atomic_write_text
    from ..kernel.errors import InputError

    if not args.output:
        sys.stdout.write(text)
        return
    try:
        atomic_write_text(args.output, text, exclusive=not args.force)
    except FileExistsError:
        raise InputError("-o", args.output, "already exists; not overwritten (--force)") from None
    except OSError as err:
        raise InputError("-o", args.output, f"cannot be written: {err.strerror}") from None
    print(f"wrote {args.output}", file=sys.stderr)


def run_export(args: argparse.Namespace) -> int:
    from ..case import load_case
    from ..exchange.csv_export import case_csv
    from ..exchange.oem import oem_text
    from ..exchange.opm_export import OPM_CAUTION, opm_text
    from ..kernel.errors import InputError

    case = load_case(args.case)
    if args.format == "tle":
        from .tle_export import run_tle_export

        return run_tle_export(args, case, _write, _with_file)
    try:
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            if args.format == "opm":
                text = opm_text(case, originator=args.originator)
            elif args.format == "oem":
                text = oem_text(case, originator=args.originator, step_s=args.step)
            else:
                text, _ = case_csv(case, args.what)
    except InputError as err:
        raise _with_file(err, args.case) from None
    for line in dict.fromkeys(str(w.message) for w in caught):
        print(f"orbitledger export: warning: {line}", file=sys.stderr)
    _write(text, args)
    print(f"orbitledger export: caution: {OPM_CAUTION}", file=sys.stderr)
    return 0


def run_ephemeris_diff(args: argparse.Namespace) -> int:
    from ..case import load_case
    from ..exchange.compare import ephemeris_difference
    from ..exchange.csv_export import columns_csv
    from ..exchange.oem import parse_oem
    from ..kernel.errors import InputError

    case = load_case(args.case)
    text = _read(args.oem, "OEM")
    try:
        oem = parse_oem(text)
    except InputError as err:
        raise _with_file(err, args.oem) from None
    with warnings.catch_warnings(record=True):
        warnings.simplefilter("always")
        diff = ephemeris_difference(oem, case, segment=args.segment)
    if args.csv:
        cols = {"time_utc": list(diff.times_utc), "offset_s": diff.offset_s.tolist()}
        for k, axis in enumerate(("radial", "transverse", "normal")):
            cols[f"d{axis}_km"] = diff.dr_rtn_km[:, k].tolist()
        cols["distance_km"] = diff.distance_km.tolist()
        sys.stdout.write(columns_csv(cols))
        return 0
    worst = int(diff.distance_km.argmax())
    print(
        "\n".join(
            [
                f"compared   {diff.label}",
                f"epochs     {len(diff.times_utc)} from {diff.times_utc[0]} to {diff.times_utc[-1]}",
                f"distance   rms {diff.rms_distance_km * 1000:.3f} m, max "
                f"{diff.max_distance_km * 1000:.3f} m at {diff.times_utc[worst]}",
                "at max     radial {:.3f} m, transverse {:.3f} m, normal {:.3f} m".format(
                    *(diff.dr_rtn_km[worst] * 1000)
                ),
            ]
        )
    )
    return 0
