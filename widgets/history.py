"""Undo and redo within an editing session: a list of validated cases and a cursor.

Each entry is a whole validated case (cases are immutable pydantic models, so keeping them costs
a reference, not a copy). A new edit after an undo drops the undone branch, as editors do.
"""

from __future__ import annotations

from typing import Generic, TypeVar

__all__ = ["History"]

T = TypeVar("T")


class History(Generic[T]):
    """Validated states of one session, oldest first, with the current one marked.

    ``limit`` bounds the number of states kept (the oldest go first).
    """

    def __init__(self, first: T, limit: int = 500) -> None:
        if limit < 2:
            raise ValueError("limit must be at least 2")
        self._states: list[T] = [first]
        self._index = 0
        self._limit = limit

    @property
    def current(self) -> T:
        return self._states[self._index]

    @property
    def can_undo(self) -> bool:
        return self._index > 0

    @property
    def can_redo(self) -> bool:
        return self._index < len(self._states) - 1

    def __len__(self) -> int:
        return len(self._states)

    def push(self, state: T) -> None:
        """Make ``state`` current; forget anything that had been undone."""
        del self._states[self._index + 1 :]
        self._states.append(state)
        if len(self._states) > self._limit:
            del self._states[0]
        self._index = len(self._states) - 1

    def peek_undo(self) -> T:
        """The state an undo would return to (raises IndexError when there is none)."""
        if not self.can_undo:
            raise IndexError("nothing to undo")
        return self._states[self._index - 1]

    def peek_redo(self) -> T:
        if not self.can_redo:
            raise IndexError("nothing to redo")
        return self._states[self._index + 1]

    def undo(self) -> T:
        state = self.peek_undo()
        self._index -= 1
        return state

    def redo(self) -> T:
        state = self.peek_redo()
        self._index += 1
        return state

    def replace_current(self, state: T) -> None:
        """Replace the current state in place (after a reload from disk the file is the truth)."""
        self._states[self._index] = state
