"""One line everywhere: what the command line prints on stderr is one line a terminal shows as
written.

- :func:`one_line` escapes what would break a line or the terminal: control characters
  (a newline in a path, ANSI escape sequences) and the Unicode bidirectional controls (which
  reorder what is shown, Unicode Standard Annex #9), as ``\\n``, ``\\x1b``, ``\\u202e``.
- :func:`named_file` gives a kernel error that reached the command line without a file the
  case file the verb was given (an option's or an environment variable's error names none).
- :func:`numeric_warnings` collects the warnings of a run (numpy's ``RuntimeWarning``,
  ERFA's ``ErfaWarning``) and prints each once as one named line on stderr after the run; a
  run refused with an error prints the error line alone (the error names the field).
"""

from __future__ import annotations

import argparse
import os
import sys
import warnings
from collections.abc import Iterator
from contextlib import contextmanager
from typing import Any

__all__ = ["BIDI_CONTROLS", "named_file", "numeric_warnings", "one_line"]

BIDI_CONTROLS = frozenset(
    "\u061c\u200e\u200f\u202a\u202b\u202c\u202d\u202e\u2066\u2067\u2068\u2069"
)
"""ALM, LRM, RLM, the embeddings and overrides LRE..RLO and the isolates LRI..PDI (UAX #9)."""


def _escaped(ch: str) -> str:
    if ch == "\n":
        return "\\n"
    if ch == "\r":
        return "\\r"
    if ch == "\t":
        return "\\t"
    code = ord(ch)
    return f"\\x{code:02x}" if code < 0x100 else f"\\u{code:04x}"


def one_line(text: str) -> str:
    """``text`` with control and bidi characters escaped, so it prints as one plain line."""
    if text.isprintable() and not BIDI_CONTROLS.intersection(text):
        return text
    return "".join(
        _escaped(ch) if (not ch.isprintable() and ch != " ") or ch in BIDI_CONTROLS else ch
        for ch in text
    )


def named_file(err: Any, args: argparse.Namespace) -> Any:
    """``err`` with the verb's case file as its file when it names a case field and no file."""
    case = getattr(args, "case", None)
    field = str(getattr(err, "field", "") or "")
    if getattr(err, "file", None) is not None or not isinstance(case, str | os.PathLike):
        return err
    if not field or field.startswith("-") or field.isupper() or field.startswith("ORBITLEDGER"):
        return err  # an option, an argument such as CASE or RECORD, an environment variable
    from ..kernel.errors import InputError

    return InputError(err.field, err.value, err.reason, file=str(case))


@contextmanager
def numeric_warnings(verb: str) -> Iterator[None]:
    """Print the run's warnings as one line each on stderr, after the run (none on an error)."""
    with warnings.catch_warnings(record=True) as caught:
        yield
    seen: set[str] = set()
    for w in caught:
        where = f"{os.path.basename(w.filename)}:{w.lineno}"
        line = f"{w.category.__name__}: {w.message} ({where})"
        if line not in seen:
            seen.add(line)
            print(f"orbitledger {verb}: warning: {one_line(line)}", file=sys.stderr)
