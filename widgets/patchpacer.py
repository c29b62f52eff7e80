"""Figure patches sent to the browser one frame apart, so that it repaints one figure per frame.

An edit changes four figures at once. Sent back to back, their patches reach the page in one
burst and BokehJS repaints all four in one animation frame: on the starter case about 280 ms
of layout and text measuring with no frame drawn (benchmarks/bench_editor_frames.py). Sent
``PATCH_PACE_S`` apart (longer than a frame at 60 Hz, 16.7 ms), each figure's repaint lands
in a frame of its own; the last figure is on screen about 3 x ``PATCH_PACE_S`` later than with
one burst. Measured, the longest frame gap fell from about 210 ms to 160-185 ms: one figure's
repaint alone still holds the page longer than the 100 ms target (docs/widgets.md).

One daemon thread sends the queued patches in order (so one figure's messages never overtake
each other); the first of a quiet spell goes at once. ipykernel's IOPub socket takes messages
from any thread (the background jobs' progress bars rely on it too).
"""

from __future__ import annotations

import logging
import queue
import threading
import time
from collections.abc import Callable

__all__ = ["PATCH_PACE_S", "flush", "send_paced"]

log = logging.getLogger(__name__)

PATCH_PACE_S = 0.05

_jobs: queue.Queue[Callable[[], None]] = queue.Queue()
# The clock and the wait of the pacing (a test puts a fake clock here).
_clock: Callable[[], float] = time.monotonic
_sleep: Callable[[float], None] = time.sleep
_lock = threading.Lock()
_thread: threading.Thread | None = None


def send_paced(send: Callable[[], None], pace_s: float | None = None) -> None:
    """Run ``send`` (one figure's messages) now if the last one went ``pace_s`` ago or more,
    else as soon as that much time has passed; ``pace_s`` 0 sends at once, in this thread."""
    pace = PATCH_PACE_S if pace_s is None else pace_s
    if pace <= 0.0:
        send()
        return
    global _thread
    with _lock:
        if _thread is None or not _thread.is_alive():
            _thread = threading.Thread(target=_run, name="orbitledger-patches", daemon=True)
            _thread.start()
    _jobs.put(lambda: _timed(send, pace))


def flush() -> None:
    """Wait until every queued patch has been sent."""
    _jobs.join()


_last = [float("-inf")]


def _timed(send: Callable[[], None], pace: float) -> None:
    wait = _last[0] + pace - _clock()
    if wait > 0.0:
        _sleep(wait)
    try:
        send()
    except Exception:  # a closed comm (the notebook went away): nothing to draw into
        log.debug("a figure patch could not be sent", exc_info=True)
    _last[0] = _clock()


def _run() -> None:
    while True:
        job = _jobs.get()
        try:
            job()
        finally:
            _jobs.task_done()
