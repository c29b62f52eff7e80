"""orbitledger: reproducible orbit reports.

Edit orbit cases in a notebook, compute with a validated kernel, and build versioned HTML/PDF
calculation records that carry every input and verify from the file alone.
"""

from __future__ import annotations

from typing import Any

from ._version import __version__

__all__ = ["__version__", "open_case", "result"]


def __getattr__(name: str) -> Any:
    # ``result`` (and the study registry with it) is imported on first use, so that a bare
    # ``import orbitledger`` -- the command line's ``--version`` -- imports nothing heavy.
    if name == "result":
        from .study import result

        return result
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")


def open_case(path, *, create=False):
    """Load the case file at ``path``; ``create=True`` writes the starter case there first if
    it is missing.

    A missing file is an error (``orbitledger.case.CaseFileNotFound``, naming the path and the
    closest existing case file in its folder), in a build and in a live notebook alike: a
    mistyped name never silently becomes the starter case.

    Returns the case bound to its file (an :class:`orbitledger.case.CaseFile`: ``.case`` is
    the validated Case, ``.save(case)`` writes it back atomically); ``.editor()`` opens the
    editing widget. Raises :class:`orbitledger.case.CaseError` for a file that does not validate.
    """
    from ._opened import open_case as _open_case

    return _open_case(path, create=create)
