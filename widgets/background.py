"""Long computations off the form's thread, with a progress bar and a cancel button.

A job runs ``fn(progress)`` in a daemon thread. ``fn`` reports with ``progress(fraction, text)``
and should call it between chunks of work: that call raises :class:`JobCancelled` once the user
pressed Cancel (or the editor cancelled the job because the case changed), so a job stops at
the next chunk boundary without any thread being killed. The form stays live meanwhile: the
kernel keeps handling widget messages while the thread computes (ipywidgets' documented way of
doing background work; widget state set from a thread is sent to the front end as usual).
"""

from __future__ import annotations

import threading
import time
from collections.abc import Callable
from typing import Any

import ipywidgets as w

__all__ = ["BackgroundJob", "JobCancelled", "Progress"]


class JobCancelled(Exception):
    """Raised inside a job by ``progress(...)`` once the job has been cancelled."""


class Progress:
    """The callable a job reports through; also tells the job whether it was cancelled."""

    def __init__(self, job: BackgroundJob, cancel: threading.Event) -> None:
        self._job = job
        self._cancel = cancel

    @property
    def cancelled(self) -> bool:
        return self._cancel.is_set()

    def __call__(self, fraction: float, text: str = "") -> None:
        if self.cancelled:
            raise JobCancelled()
        self._job._report(fraction, text, self._cancel)


class BackgroundJob:
    """One named long computation with its own row of widgets (label, bar, status, buttons).

    ``fn(progress) -> result``; ``describe(result) -> str`` writes the status line when done;
    ``on_done(job)`` is called (from the worker thread) after success, failure or cancel.
    ``min_interval_s`` throttles progress messages to the front end.
    """

    def __init__(
        self,
        title: str,
        fn: Callable[[Progress], Any] | None = None,
        *,
        describe: Callable[[Any], str] = str,
        on_done: Callable[[BackgroundJob], None] | None = None,
        min_interval_s: float = 0.1,
        auto: bool = False,
    ) -> None:
        self.title = title
        self.auto = auto  # started by the editor itself: the Run button shows only when needed
        self.fn = fn
        self.describe = describe
        self.on_done = on_done
        self.min_interval_s = min_interval_s
        self.state = "idle"  # idle | running | done | cancelled | failed
        self.result: Any = None
        self.error: BaseException | None = None
        self._cancel = threading.Event()
        self._finished = threading.Event()
        self._finished.set()
        self._thread: threading.Thread | None = None
        self._last_report = 0.0

        self.run_button = w.Button(
            description=f"Run: {title}", tooltip=f"Compute {title} in the background"
        )
        self.run_button.layout = w.Layout(width="15em")
        self.bar = w.FloatProgress(value=0.0, min=0.0, max=1.0, layout=w.Layout(width="12em"))
        self.bar.layout.visibility = "hidden"
        self.cancel_button = w.Button(
            description="Cancel", tooltip=f"Stop {title}", disabled=True, button_style=""
        )
        self.cancel_button.layout = w.Layout(width="6em")
        self.status = w.HTML("", layout=w.Layout(flex="1 1 auto"))
        self.status.add_class("ol-note")
        self.run_button.on_click(lambda _b: self.start())
        self.cancel_button.on_click(lambda _b: self.cancel())
        self.label = w.HTML(f"<b>{_escape(title)}</b>", layout=w.Layout(width="auto"))
        self.label.add_class("ol-note")
        self.widget = w.HBox(
            [self.label, self.run_button, self.bar, self.cancel_button, self.status]
        )
        self.widget.add_class("ol-job")
        self._show_run_button()

    def _show_run_button(self) -> None:
        """Run shows whenever running again is the way on: not while a run goes, and for a job
        the editor starts itself only after a cancel or a failure. Cancel and the bar show
        only while a run goes: a finished or cancelled job is back in its idle look."""
        running = self.state == "running"
        wanted = not running and (not self.auto or self.state in ("cancelled", "failed"))
        self.run_button.layout.display = None if wanted else "none"
        self.cancel_button.layout.display = None if running else "none"
        self.bar.layout.visibility = "visible" if running else "hidden"

    def show_idle(self, text: str) -> None:
        """No run is needed (what the job computes is there already): say so in the status."""
        if self.running:
            return
        self.state = "idle"
        self.status.value = _escape(text)
        self._show_run_button()

    @property
    def running(self) -> bool:
        return not self._finished.is_set()

    def start(self, fn: Callable[[Progress], Any] | None = None) -> None:
        """Start the job; returns at once. A run still going is superseded: it is told to
        stop at its next progress report and its outcome is dropped (nobody waits for it)."""
        if fn is not None:
            self.fn = fn
        if self.fn is None:
            raise ValueError(f"{self.title}: no computation to run")
        self._cancel.set()  # the previous run, if any, stops at its next report
        cancel, finished = threading.Event(), threading.Event()
        self._cancel, self._finished = cancel, finished
        self.state, self.result, self.error = "running", None, None
        self.bar.value = 0.0
        self.bar.bar_style = ""
        self.cancel_button.disabled = False
        self.status.value = "starting\u2026"
        self._show_run_button()
        self._thread = threading.Thread(
            target=self._run, args=(self.fn, cancel, finished), name=f"orbitledger {self.title}"
        )
        self._thread.daemon = True
        self._thread.start()

    def cancel(self, quiet: bool = False) -> None:
        """Stop the job: at once on screen (state "cancelled", the Run button back), and in
        its thread at the next progress report, its outcome dropped. ``quiet``: no trace on
        screen (the run is superseded by cached results)."""
        if not self.running:
            return
        self._cancel.set()
        self._cancel, self._finished = threading.Event(), threading.Event()
        self._finished.set()  # the stopped thread no longer counts as the current run
        if quiet:
            self.state = "idle"
            self.cancel_button.disabled = True
            self._show_run_button()
            return
        self._finish("cancelled", None)

    def wait(self, timeout: float | None = None) -> bool:
        """Block until the current run has finished; True if it did within ``timeout`` s."""
        return self._finished.wait(timeout)

    def _current(self, cancel: threading.Event) -> bool:
        return cancel is self._cancel

    def _report(self, fraction: float, text: str, cancel: threading.Event) -> None:
        now = time.monotonic()
        if not self._current(cancel):
            return
        if now - self._last_report < self.min_interval_s and fraction < 1.0:
            return
        self._last_report = now
        self.bar.value = min(max(float(fraction), 0.0), 1.0)
        self.status.value = text or f"{100.0 * self.bar.value:.0f} %"

    def _run(
        self, fn: Callable[[Progress], Any], cancel: threading.Event, finished: threading.Event
    ) -> None:
        progress = Progress(self, cancel)
        outcome: tuple[str, Any] = ("cancelled", None)
        try:
            result = fn(progress)
            if not cancel.is_set():
                outcome = ("done", result)
        except JobCancelled:
            pass
        except Exception as exc:  # a job's failure is shown beside it, never lost
            outcome = ("failed", exc)
        if not self._current(cancel):  # superseded by a newer run: drop this outcome
            finished.set()
            return
        self._finish(*outcome)
        finished.set()

    def _finish(self, state: str, value: Any) -> None:
        if state == "done":
            self.state, self.result = "done", value
            self.bar.value = 1.0
            self.bar.bar_style = "success"
            self.status.value = _escape(self.describe(value))
        elif state == "failed":
            self.state, self.error = "failed", value
            self.status.value = f"failed: {_escape(str(value))}"
            self.bar.bar_style = "danger"
        else:
            self.state = "cancelled"
            self.status.value = "cancelled"
            self.bar.bar_style = "warning"
        self.cancel_button.disabled = True
        self._show_run_button()
        if self.on_done is not None:
            self.on_done(self)


def _escape(text: str) -> str:
    return text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
