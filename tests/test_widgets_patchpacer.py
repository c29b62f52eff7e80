"""The figure patches of one edit go to the browser one frame apart, in order.

A frame at 60 Hz lasts 1/60 s = 16.7 ms (common practice: the refresh rate browsers pace
requestAnimationFrame to); the pace must be longer so that each figure's repaint lands in a
frame of its own. A fake clock stands in for time (no sleeping in the test).
"""

from __future__ import annotations

import threading

import pytest
from orbitledger.widgets import patchpacer


class FakeClock:
    def __init__(self) -> None:
        self.now = 1000.0
        self.waits: list[float] = []

    def __call__(self) -> float:
        return self.now

    def sleep(self, seconds: float) -> None:
        self.waits.append(seconds)
        self.now += seconds


@pytest.fixture
def clock(monkeypatch: pytest.MonkeyPatch) -> FakeClock:
    fake = FakeClock()
    monkeypatch.setattr(patchpacer, "_clock", fake)
    monkeypatch.setattr(patchpacer, "_sleep", fake.sleep)
    monkeypatch.setattr(patchpacer, "_last", [float("-inf")])
    return fake


def test_patches_go_in_order_one_pace_apart(clock: FakeClock) -> None:
    assert patchpacer.PATCH_PACE_S > 1.0 / 60.0  # longer than a frame
    sent: list[tuple[str, float, str]] = []

    def figure(name: str):
        return lambda: sent.append((name, clock.now, threading.current_thread().name))

    for name in ("orbit plane", "inertial view", "ground track", "height and speed"):
        patchpacer.send_paced(figure(name))
    patchpacer.flush()
    assert [s[0] for s in sent] == [
        "orbit plane",
        "inertial view",
        "ground track",
        "height and speed",
    ]
    times = [s[1] for s in sent]
    assert times[0] == 1000.0  # the first of a quiet spell goes at once
    gaps = [b - a for a, b in zip(times, times[1:], strict=False)]
    assert all(gap == pytest.approx(patchpacer.PATCH_PACE_S) for gap in gaps)
    assert {s[2] for s in sent} == {"orbitledger-patches"}


def test_a_quiet_spell_sends_at_once_and_pace_zero_sends_in_the_caller(clock: FakeClock) -> None:
    sent: list[float] = []
    patchpacer.send_paced(lambda: sent.append(clock.now))
    patchpacer.flush()
    clock.now += 10.0  # later than the pace: no wait
    patchpacer.send_paced(lambda: sent.append(clock.now))
    patchpacer.flush()
    assert sent == [1000.0, 1010.0] and clock.waits == []
    here: list[str] = []
    patchpacer.send_paced(lambda: here.append(threading.current_thread().name), pace_s=0.0)
    assert here == [threading.current_thread().name]


def test_a_send_that_fails_does_not_stop_the_next(clock: FakeClock) -> None:
    sent: list[str] = []

    def closed() -> None:
        raise RuntimeError("comm closed")

    patchpacer.send_paced(closed)
    patchpacer.send_paced(lambda: sent.append("next"))
    patchpacer.flush()
    assert sent == ["next"]
