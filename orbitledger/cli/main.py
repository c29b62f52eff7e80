"""Entry point of the ``orbitledger`` command.

Exit status: 0 on success, 1 for a failed check (``verify``), 2 for bad input or usage. A
user's mistake prints one line naming the file, the field, the value and the reason, never a
traceback. Each verbs module defines ``register(subparsers)``, adding its verbs with
``set_defaults(run=function)``; ``run(args)`` returns the exit status.
"""

from __future__ import annotations

import argparse
import importlib
import sys
from collections.abc import Sequence

from .._version import __version__

# The verbs modules, in the order their verbs appear in ``--help``.
VERB_MODULES = [
    "orbitledger.cli.case_verbs",  # new, summary, schema
    "orbitledger.cli.environment_verbs",  # passes, eclipses, groundtrack, ephemeris
    "orbitledger.cli.seasons_verbs",  # seasons
    "orbitledger.cli.targets_verbs",  # targets, coverage
    "orbitledger.cli.lifetime_verbs",  # lifetime
    "orbitledger.cli.design_verbs",  # budget, transfer
    "orbitledger.cli.exchange_verbs",  # import, export, ephemeris-diff
    "orbitledger.cli.trade_verbs",  # sweep, disperse
    "orbitledger.cli.report_verbs",  # build, history, diff, sign, verify, demo
    "orbitledger.cli.keys_verbs",  # keys new, keys new-ca
    "orbitledger.cli.ledger_verbs",  # index, ledger copy | export | init
]


class UsageError(Exception):
    """Wrong use of the command line (exit 2)."""


class CheckFailed(Exception):
    """A check that ran and did not hold (exit 1); the message says what differed."""


class _Parser(argparse.ArgumentParser):
    def error(self, message: str) -> None:  # argparse's own errors: one line, exit 2
        self.print_usage(sys.stderr)
        self.exit(2, f"{self.prog}: error: {message}\n")


def build_parser() -> argparse.ArgumentParser:
    parser = _Parser(
        prog="orbitledger",
        description="Reproducible orbit reports: cases, computations and calculation records.",
    )
    parser.add_argument("--version", action="version", version=f"orbitledger {__version__}")
    subparsers = parser.add_subparsers(dest="verb", metavar="VERB", parser_class=_Parser)
    for name in VERB_MODULES:
        importlib.import_module(name).register(subparsers)
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    if not getattr(args, "run", None):
        parser.print_help()
        return 2
    from ..kernel.errors import InputError  # after parsing: --version and --help import no kernel
    from .one_line import named_file, numeric_warnings, one_line

    try:
        with numeric_warnings(args.verb):
            return int(args.run(args) or 0)
    except InputError as err:
        print(f"orbitledger {args.verb}: {one_line(str(named_file(err, args)))}", file=sys.stderr)
        return 2
    except UsageError as err:
        print(f"orbitledger {args.verb}: {one_line(str(err))}", file=sys.stderr)
        return 2
    except CheckFailed as err:
        print(f"orbitledger {args.verb}: {one_line(str(err))}", file=sys.stderr)
        return 1
    except KeyboardInterrupt:
        print(f"orbitledger {args.verb}: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:
        return 0


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
