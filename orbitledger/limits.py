"""The stated limits on what orbitledger reads (docs/case-file.md, "Input limits").

Every input is checked against these before any work starts, so that a hostile or mistaken
input is refused with one line naming the file and the field, never met by a traceback, a
hang or an out-of-memory crash:

- a case file must be a regular file of at most ``MAX_CASE_FILE_BYTES``: a FIFO, a device
  (``/dev/zero``), a folder or an oversize file is refused before it is read
  (:func:`read_input_bytes`);
- case-file JSON is nested at most ``MAX_JSON_DEPTH`` deep and writes no integer of more than
  ``MAX_INTEGER_DIGITS`` digits (the physical range of each field is in the case model,
  ``orbitledger.case.fields``).

Standard library only: every part of the package may use this module.
"""

from __future__ import annotations

import os
import stat
from collections.abc import Callable
from pathlib import Path

__all__ = [
    "MAX_CASE_FILE_BYTES",
    "MAX_JSON_DEPTH",
    "MAX_INTEGER_DIGITS",
    "read_input_bytes",
    "size_text",
]

MAX_CASE_FILE_BYTES = 4 * 2**20
"""A case file is a few kilobytes; 4 MiB holds a thousand stations with room to spare."""
MAX_JSON_DEPTH = 32
"""Objects and arrays nested deeper than this are refused (a case file nests 5 deep)."""
MAX_INTEGER_DIGITS = 24
"""Longer integer literals are refused before conversion: no field's range needs more."""


def size_text(n_bytes: float) -> str:
    """``2.35 GiB``, ``640 KiB``, ``12 bytes``: a size as people read it."""
    for unit, scale in (("TiB", 2**40), ("GiB", 2**30), ("MiB", 2**20), ("KiB", 2**10)):
        if n_bytes >= scale:
            return f"{n_bytes / scale:.3g} {unit}"
    return f"{int(n_bytes)} bytes"


_KINDS = (
    (stat.S_ISDIR, "is a folder"),
    (stat.S_ISFIFO, "is a FIFO (named pipe)"),
    (stat.S_ISCHR, "is a character device"),
    (stat.S_ISBLK, "is a block device"),
    (stat.S_ISSOCK, "is a socket"),
)


def read_input_bytes(
    path: str | os.PathLike,
    max_bytes: int,
    refuse: Callable[[str], Exception],
    what: str = "an input file",
) -> bytes:
    """The bytes of the regular file at ``path``, refused unless it is one of at most ``max_bytes``.

    ``refuse(reason)`` makes the exception raised for a refusal (the caller names the file and
    the kind of error). The file is opened without blocking (a FIFO swapped in after the check
    cannot hang the read) and at most ``max_bytes + 1`` bytes are read, so a file that grows or
    lies about its size is refused too. A missing file raises ``FileNotFoundError``.
    """
    path = Path(path)
    try:
        info = path.stat()
    except FileNotFoundError:
        raise
    except OSError as err:
        raise refuse(f"cannot be read: {err.strerror or err}") from None
    for is_kind, words in _KINDS:
        if is_kind(info.st_mode):
            raise refuse(f"{words}, not {what}") from None
    if not stat.S_ISREG(info.st_mode):
        raise refuse(f"is not a regular file, not {what}")
    if info.st_size > max_bytes:
        raise refuse(
            f"is {info.st_size:,} bytes; {what} is at most {size_text(max_bytes)}"
            f" ({max_bytes:,} bytes)"
        )
    try:
        descriptor = os.open(path, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0))
    except OSError as err:
        raise refuse(f"cannot be read: {err.strerror or err}") from None
    try:
        if not stat.S_ISREG(os.fstat(descriptor).st_mode):
            raise refuse(f"is not a regular file, not {what}")
        chunks, total = [], 0
        while total <= max_bytes:
            chunk = os.read(descriptor, min(1 << 20, max_bytes + 1 - total))
            if not chunk:
                break
            chunks.append(chunk)
            total += len(chunk)
    except OSError as err:
        raise refuse(f"cannot be read: {err.strerror or err}") from None
    finally:
        os.close(descriptor)
    if total > max_bytes:
        raise refuse(
            f"is larger than {size_text(max_bytes)} ({max_bytes:,} bytes), the most {what} may be"
        )
    return b"".join(chunks)
