"""The case file a study notebook opens: a CaseFile that can also show its editing widget.

Kept out of :mod:`orbitledger.case` so that the case model never depends on the widgets; the
widgets are imported only when ``editor()`` is called.
"""

from __future__ import annotations

import os

from . import study
from .case import CaseFile

__all__ = ["StudyCaseFile", "open_case"]


class StudyCaseFile(CaseFile):
    """A case file opened from a study notebook; ``editor()`` returns its editing widget."""

    def editor(self):
        """The notebook widget that edits this case file (``orbitledger.widgets.CaseEditor``).

        Edits are validated at once and saved to the file through :meth:`CaseFile.save`.
        """
        from .widgets import CaseEditor

        return CaseEditor(self)


def open_case(path: str | os.PathLike, *, create: bool = False) -> StudyCaseFile:
    """Load the case file at ``path``; ``create=True`` writes the starter case there first if
    it is missing (else a missing file raises ``CaseFileNotFound`` naming the closest one).
    Its loads and saves are noted in the study registry (:mod:`orbitledger.study`)."""
    return StudyCaseFile.open(path, create=create, registry=study)
