"""Debounced typing: act on a field once the user has stopped typing for a moment.

Inside a Jupyter kernel the widget messages arrive on the kernel's asyncio loop, so the
pending action is scheduled there with ``loop.call_later`` and runs on the same thread as every
other widget callback (no locking needed). Outside a running loop (plain Python, tests) the
action runs at once, which keeps scripted use deterministic.
"""

from __future__ import annotations

import asyncio
from collections.abc import Callable, Hashable

__all__ = ["Debouncer"]


class Debouncer:
    """``trigger(key, fn)`` runs ``fn()`` ``delay_s`` after the last trigger with that key."""

    def __init__(self, delay_s: float = 0.3) -> None:
        self.delay_s = delay_s
        self._pending: dict[Hashable, tuple[asyncio.TimerHandle, Callable[[], None]]] = {}

    def trigger(self, key: Hashable, fn: Callable[[], None]) -> None:
        try:
            loop = asyncio.get_running_loop()
        except RuntimeError:
            loop = None
        self.cancel(key)
        if loop is None or self.delay_s <= 0.0:
            fn()
            return
        handle = loop.call_later(self.delay_s, self._fire, key)
        self._pending[key] = (handle, fn)

    def _fire(self, key: Hashable) -> None:
        entry = self._pending.pop(key, None)
        if entry is not None:
            entry[1]()

    def cancel(self, key: Hashable) -> None:
        entry = self._pending.pop(key, None)
        if entry is not None:
            entry[0].cancel()

    def flush(self) -> None:
        """Run every pending action now (before undo, save or close)."""
        for key in list(self._pending):
            handle, _fn = self._pending[key]
            handle.cancel()
            self._fire(key)

    @property
    def pending(self) -> int:
        return len(self._pending)
