"""Where the per-case work runs: in this process, or on a Dask cluster.

``runner(scheduler)`` gives a runner whose ``map(fn, tasks)`` yields ``fn(task)`` for every
task, in the order of the tasks, with a progress bar:

- ``scheduler=None``: in this process, one task after another.
- a scheduler address (``"tcp://10.0.0.5:8786"``), a cluster object (``LocalCluster``,
  anything with ``scheduler_address``) or a ``distributed.Client``: each task is one Dask
  task (``client.submit``), retried up to ``retries`` times if it raises and rescheduled by
  the scheduler if its worker dies. A scheduler that cannot be reached within
  ``connect_timeout_s`` (10 s by default) is refused with a one-line message naming the
  address; nothing hangs.

Tasks are chunks of a few hundred cases (see ``evaluate``), so the scheduling overhead, a
few milliseconds per task, stays small against the seconds of work in each. The results do
not depend on where a task ran: a task is a pure function of its inputs.

The progress bar counts cases: on a terminal it is tqdm on stderr (only when stderr is a
terminal), in a notebook the tqdm.auto widget; elsewhere (pipes, CI, records) there is none.
"""

from __future__ import annotations

import uuid
from collections.abc import Callable, Iterator, Sequence
from contextlib import contextmanager
from typing import Any

from ..kernel.errors import InputError
from ..progress import in_notebook, progress_bar

__all__ = ["DaskRunner", "LocalRunner", "in_notebook", "progress_bar", "runner"]


class LocalRunner:
    """Runs tasks one after another in this process."""

    workers = 1
    where = "in-process"

    def map(
        self,
        fn: Callable[[Any], Any],
        tasks: Sequence[Any],
        *,
        desc: str = "cases",
        progress: bool | None = None,
        on_done: Callable[[int, int], None] | None = None,
    ) -> Iterator[Any]:
        total = sum(len(t) for t in tasks)
        bar = progress_bar(total, desc, progress)
        done = 0
        try:
            for task in tasks:
                result = fn(task)
                done += len(task)
                bar.update(len(task))
                if on_done is not None:
                    on_done(done, total)
                yield result
        finally:
            bar.close()


class DaskRunner:
    """Runs tasks on a Dask cluster through ``client``; results come back in task order."""

    def __init__(self, client: Any, retries: int = 3) -> None:
        self.client = client
        self.retries = int(retries)
        self.where = str(client.scheduler.address)

    @property
    def workers(self) -> int:
        """Worker threads of the cluster now (at least 1)."""
        return max(1, sum(self.client.nthreads().values()))

    def map(
        self,
        fn: Callable[[Any], Any],
        tasks: Sequence[Any],
        *,
        desc: str = "cases",
        progress: bool | None = None,
        on_done: Callable[[int, int], None] | None = None,
    ) -> Iterator[Any]:
        from distributed import as_completed

        total = sum(len(t) for t in tasks)
        bar = progress_bar(total, desc, progress)
        run_id = uuid.uuid4().hex[:12]
        futures = [
            self.client.submit(
                fn, task, key=f"orbitledger-trade-{run_id}-{k}", retries=self.retries, pure=False
            )
            for k, task in enumerate(tasks)
        ]
        index = {f.key: k for k, f in enumerate(futures)}
        results: list[Any] = [None] * len(futures)
        ready: set[int] = set()
        next_out = 0
        done = 0
        try:
            for future in as_completed(futures, loop=self.client.loop):
                k = index[future.key]
                results[k] = future.result()
                ready.add(k)
                done += len(tasks[k])
                bar.update(len(tasks[k]))
                if on_done is not None:
                    on_done(done, total)
                while next_out in ready:  # hand results on in task order, as they allow
                    yield results[next_out]
                    results[next_out] = None
                    next_out += 1
        finally:
            bar.close()
            for future in futures:
                future.release()


def _address_of(scheduler: Any) -> str:
    if isinstance(scheduler, str):
        return scheduler
    address = getattr(scheduler, "scheduler_address", None)
    if isinstance(address, str):
        return address
    raise InputError(
        "scheduler",
        type(scheduler).__name__,
        "must be a scheduler address such as tcp://host:8786, a Dask cluster or a Client",
    )


@contextmanager
def runner(
    scheduler: Any = None, *, connect_timeout_s: float = 10.0, retries: int = 3
) -> Iterator[LocalRunner | DaskRunner]:
    """The runner for ``scheduler`` (see the module docstring); a client it opened is closed
    on exit, one it was given is left open."""
    if scheduler is None:
        yield LocalRunner()
        return
    from distributed import Client

    if isinstance(scheduler, Client):
        yield DaskRunner(scheduler, retries)
        return
    address = _address_of(scheduler)
    try:
        client = Client(address, timeout=connect_timeout_s, set_as_default=False)
    except (OSError, TimeoutError, ValueError) as err:
        reason = str(err).splitlines()[0] if str(err) else type(err).__name__
        raise InputError(
            "scheduler",
            address,
            f"cannot be reached within {connect_timeout_s:g} s ({reason}); check the address "
            "and that the Dask scheduler is running",
        ) from None
    try:
        yield DaskRunner(client, retries)
    finally:
        client.close()
