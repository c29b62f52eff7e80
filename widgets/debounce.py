"""Debounced typing: act on a field once the user has stopped typing for a moment.

Inside a Jupyter kernel the widget messages arrive on the kernel's asyncio loop, so the
pending action is scheduled there with ``loop.call_later`` and runs on the same thread as every
other widget callback (no locking needed). Outside a running loop (plain Python, tests) the
action runs at once, which keeps scripted use deterministic.
"""

from __future__ import annotations

import asyncio
from collections.abc import Callable, Hashable
from typing import Any

__all__ = ["Debouncer"]


class Debouncer:
    """``trigger(key, fn)`` runs ``fn()`` ``delay_s`` after the last trigger with that key.

    ``loop``: what schedules the pending action (anything with asyncio's ``call_later``);
    default the running asyncio loop. Tests pass a fake clock.
    """

    def __init__(self, delay_s: float = 0.3, *, loop: Any = None) -> None:
        self.delay_s = delay_s
        self.loop = loop
        self._pending: dict[Hashable, tuple[Any, Callable[[], None]]] = {}

    def trigger(self, key: Hashable, fn: Callable[[], None]) -> None:
        loop = self.loop
        if loop is None:
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

    def flush(self, key: Hashable | None = None) -> None:
        """Run the pending action of ``key`` now (Enter), or every pending action (before
        undo, save or close)."""
        for k in list(self._pending) if key is None else [key]:
            entry = self._pending.get(k)
            if entry is not None:
                entry[0].cancel()
                self._fire(k)

    @property
    def pending(self) -> int:
        return len(self._pending)
