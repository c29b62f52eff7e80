"""Local and Dask runs give identical tables; a worker killed midway is survived.

A LocalCluster on loopback with two worker processes (one thread each), started and stopped
by the test. The reference is the in-process run of the same inputs and seed, which the
other trade tests check against ``case_results`` and published values.
"""

from __future__ import annotations

import os
import signal
import warnings
from pathlib import Path

import pytest

from orbitledger.case import load_case
from orbitledger.trade import Normal, Uniform, disperse, sweep

pytestmark = [pytest.mark.slow, pytest.mark.filterwarnings("ignore")]

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"


@pytest.fixture(scope="module")
def cluster():
    distributed = pytest.importorskip("distributed")
    with distributed.LocalCluster(
        n_workers=2,
        threads_per_worker=1,
        processes=True,
        dashboard_address=None,
        host="127.0.0.1",
    ) as local:
        yield local


@pytest.fixture(scope="module")
def base():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        case = load_case(EXAMPLES / "candidate-a.case.json")
    return case.with_changes({"window.duration_s": 21600.0, "window.step_s": 30.0})


VARY = {"orbit.altitude_km": "500:575:25", "orbit.raan_deg": [150.0, 160.0, 170.0]}
METRICS = ["orbit", "j2", "eclipses", "contacts"]


def test_sweep_local_and_dask_identical(cluster, base):
    local = sweep(base, VARY, METRICS, chunk_size=2, progress=False)
    remote = sweep(base, VARY, METRICS, scheduler=cluster, chunk_size=2, progress=False)
    assert (local["error"] == "").all()
    assert local.equals(remote)  # bit for bit, every column, same order
    by_address = sweep(
        base, VARY, METRICS, scheduler=cluster.scheduler_address, chunk_size=5, progress=False
    )
    assert local.equals(by_address)  # other chunking, same table


def test_monte_carlo_local_and_dask_identical(cluster, base):
    spec = {"orbit.altitude_km": Normal(3.0), "orbit.raan_deg": Uniform(150.0, 170.0)}
    local = disperse(base, spec, 12, seed=2027, metrics=["eclipses"], progress=False)
    remote = disperse(
        base, spec, 12, seed=2027, metrics=["eclipses"], scheduler=cluster, progress=False
    )
    assert local.equals(remote) and remote.attrs["seed"] == 2027


def test_a_worker_killed_midway_is_survived(cluster, base):
    from distributed import Client

    local = sweep(base, VARY, METRICS, chunk_size=1, progress=False)
    with Client(cluster, set_as_default=False) as client:
        pids = sorted(client.run(os.getpid).values())
        killed = []

        def kill_one_worker(done: int, total: int) -> None:
            if not killed and done < total:  # after the first task, with work still queued
                os.kill(pids[0], signal.SIGKILL)
                killed.append(pids[0])

        remote = sweep(
            base,
            VARY,
            METRICS,
            scheduler=client,
            chunk_size=1,
            progress=False,
            on_chunk_done=kill_one_worker,
        )
        assert killed  # the kill did happen midway
        client.wait_for_workers(2, timeout=60)  # the nanny restarts the worker
    assert local.equals(remote)
