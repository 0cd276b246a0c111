"""Time limits: honoured, nested, and not lost when the alarm lands in a gc callback."""

from __future__ import annotations

import gc
import time

import pytest

from crosscheck.timebox import OutOfTime, run_limited


def busy(seconds: float) -> None:
    end = time.monotonic() + seconds
    while time.monotonic() < end:
        pass


def test_limit_is_honoured_quickly():
    started = time.monotonic()
    with pytest.raises(OutOfTime):
        run_limited(lambda: busy(10), 0.2)
    assert time.monotonic() - started < 2


def test_inner_limit_never_extends_outer():
    class Outer(BaseException):
        pass

    started = time.monotonic()
    with pytest.raises((Outer, OutOfTime)):
        run_limited(lambda: run_limited(lambda: busy(10), 5), 0.3, Outer)
    assert time.monotonic() - started < 2


@pytest.mark.filterwarnings("ignore::pytest.PytestUnraisableExceptionWarning")
def test_alarm_swallowed_by_a_gc_callback_fires_again():
    # Common practice (pytest 9 installs such a callback): exceptions raised inside gc
    # callbacks are discarded.  The first alarm is made to land in one; a single alarm
    # would then be lost and the work would run to its end (2 s).
    state = {"first": True}

    def callback(phase, info):
        if state["first"]:
            state["first"] = False
            busy(0.3)  # the 0.1 s limit expires in here

    def work():
        gc.collect()
        for _ in range(200):
            busy(0.01)

    gc.callbacks.append(callback)
    try:
        started = time.monotonic()
        with pytest.raises(OutOfTime):
            run_limited(work, 0.1)
        assert time.monotonic() - started < 1.5
    finally:
        gc.callbacks.remove(callback)


def test_result_returned_and_nothing_left_armed():
    assert run_limited(lambda: 42, 1.0) == 42
    busy(0.2)  # an alarm left armed would raise here
