"""Where a case's orbit came from when it was imported: a TLE or a CCSDS OPM.

The imported text is kept verbatim with its SHA-256 (``fingerprint``), so a record can show
exactly what was read. The fingerprint is the SHA-256 hex digest of the UTF-8 text: for a
TLE, its lines joined with a newline ("\\n"); for an OPM, ``text`` itself. Left out, it is
filled in on validation; given, it must match (a changed import is refused).
"""

from __future__ import annotations

import hashlib
from typing import Annotated, Literal

from pydantic import Field, model_validator

from .fields import CaseModel, UtcText, rule

__all__ = ["TleSource", "OpmSource", "Source", "text_fingerprint"]


def text_fingerprint(text: str) -> str:
    """SHA-256 hex digest of ``text`` encoded as UTF-8."""
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


def _check_fingerprint(source: TleSource | OpmSource, text: str) -> None:
    actual = text_fingerprint(text)
    if source.fingerprint is None:
        object.__setattr__(source, "fingerprint", actual)  # frozen: set once, during validation
    elif source.fingerprint.lower() != actual:
        raise rule(
            "fingerprint",
            source.fingerprint,
            "is not the SHA-256 of the imported text: the text was changed after the import",
        )
    else:
        object.__setattr__(source, "fingerprint", actual)


class TleSource(CaseModel):
    """A two-line element set. Its elements are SGP4 mean elements, not osculating ones."""

    kind: Literal["tle"]
    name: str = ""
    """The object name (the optional line 0), if any."""
    lines: Annotated[list[str], Field(min_length=2, max_length=2)]
    """Line 1 and line 2, verbatim."""
    epoch_utc: UtcText
    """The TLE's epoch."""
    fingerprint: str | None = None
    note: str = ""

    @model_validator(mode="after")
    def _tle_lines(self) -> TleSource:
        for k, (line, number) in enumerate(zip(self.lines, ("1", "2"), strict=True)):
            if not line.startswith(number + " ") or len(line.rstrip()) != 69:
                raise rule(
                    f"lines[{k}]",
                    line,
                    f"not TLE line {number}: it starts with '{number} ' and has 69 characters",
                )
        _check_fingerprint(self, "\n".join(self.lines))
        return self


class OpmSource(CaseModel):
    """A CCSDS Orbit Parameter Message (CCSDS 502.0-B), kept as text."""

    kind: Literal["opm"]
    text: Annotated[str, Field(min_length=1)]
    file: str = ""
    """The name of the file it was read from."""
    fingerprint: str | None = None
    note: str = ""

    @model_validator(mode="after")
    def _opm_fingerprint(self) -> OpmSource:
        _check_fingerprint(self, self.text)
        return self


Source = Annotated[TleSource | OpmSource, Field(discriminator="kind")]
