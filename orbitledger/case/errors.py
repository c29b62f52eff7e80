"""Errors of the case model: one line naming the file, the field's JSON path, the value, why."""

from __future__ import annotations

from typing import Any

from ..kernel.errors import InputError

__all__ = ["CaseError", "CaseFileChanged", "CaseFileNotFound", "MISSING"]

MISSING = InputError.MISSING  # type: ignore[attr-defined]


class CaseError(InputError):
    """A case (or case file) refused: ``field`` is the JSON path (``orbit.e``, ``stations[1].lat_deg``).

    ``path`` is the same as ``field``. ``value`` is the value refused (``MISSING`` when there was
    none) and ``reason`` says why in plain words. ``file`` names the file, ``line`` and
    ``column`` the place in it for malformed JSON. ``others`` lists further problems found in
    the same input (each a CaseError), for a caller who wants them all; the message names
    only the first.
    """

    def __init__(
        self,
        field: str,
        value: Any,
        reason: str,
        *,
        file: str | None = None,
        line: int | None = None,
        column: int | None = None,
        others: tuple[CaseError, ...] = (),
    ) -> None:
        self.line = line
        self.column = column
        self.others = tuple(others)
        super().__init__(field, value, reason, file=file)

    @property
    def path(self) -> str:
        return self.field

    @property
    def message(self) -> str:
        if self.line is not None and not self.field:
            where = f"{self.file}:" if self.file else ""
            return f"{where}{self.line}:{self.column}: {self.reason}"
        if not self.field:
            return f"{self.file}: {self.reason}" if self.file else self.reason
        if self.line is not None:
            return f"{super().message} (line {self.line}, column {self.column})"
        return super().message

    def __reduce__(self):  # picklable (dask workers, multiprocessing) despite keyword arguments
        return (
            _rebuild,
            (
                type(self),
                self.field,
                self.value,
                self.reason,
                self.file,
                self.line,
                self.column,
                self.others,
            ),
        )


def _rebuild(cls, field, value, reason, file, line, column, others=()):
    return cls(field, value, reason, file=file, line=line, column=column, others=others)


class CaseFileChanged(CaseError):
    """Saving refused: the case file changed on disk since it was loaded or last saved."""


class CaseFileNotFound(CaseError, FileNotFoundError):
    """No case file at the path given (also a FileNotFoundError)."""
