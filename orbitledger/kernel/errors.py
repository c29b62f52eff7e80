"""The one exception type the kernel raises for a caller's bad input."""

from __future__ import annotations

from typing import Any

__all__ = ["InputError"]


class InputError(ValueError):
    """An input refused with a reason: names the field (or argument), the value and why.

    ``field`` is a dotted path as in a case file (``orbit.e``) or an argument name (``tof_s``).
    ``file`` is the file the value came from, when there is one. ``str(err)`` is one line a
    user can act on; the command line prints exactly that and exits with status 2.
    """

    def __init__(self, field: str, value: Any, reason: str, *, file: str | None = None) -> None:
        self.field = field
        self.value = value
        self.reason = reason
        self.file = file
        super().__init__(self.message)

    @property
    def message(self) -> str:
        where = f"{self.file}: " if self.file else ""
        value = _short_repr(self.value)
        shown = f" = {value}" if value is not None else ""
        return f"{where}{self.field}{shown}: {self.reason}"

    def __str__(self) -> str:
        return self.message

    def __reduce__(self):  # picklable (Dask workers, multiprocessing) despite keyword arguments
        return (_rebuild, (type(self), self.field, self.value, self.reason, self.file))


def _rebuild(cls, field, value, reason, file):
    return cls(field, value, reason, file=file)


def _short_repr(value: Any) -> str | None:
    if value is _MISSING:
        return None
    text = repr(value)
    return text if len(text) <= 80 else text[:77] + "..."


class _Missing:
    def __repr__(self) -> str:
        return "<missing>"

    def __reduce__(self) -> str:  # unpickles as the one MISSING, so ``is MISSING`` still holds
        return "_MISSING"


_MISSING = _Missing()
InputError.MISSING = _MISSING  # type: ignore[attr-defined]
