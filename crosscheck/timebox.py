"""Wall-clock limits for work that might not finish (sympy simplification, routes).

Uses SIGALRM, so a limit only applies in the main thread (elsewhere the work
runs unlimited).  Limits nest: an inner limit never extends an outer one, and
the outer alarm is re-armed with the time it has left.  The exception raised
derives from BaseException so that library code's `except Exception` cannot
swallow it.
"""

from __future__ import annotations

import signal
import threading
import time
from collections.abc import Callable
from typing import TypeVar

_T = TypeVar("_T")


class OutOfTime(BaseException):
    """The time limit of the innermost `run_limited` ran out."""


def run_limited(func: Callable[[], _T], seconds: float, exception: type[BaseException] = OutOfTime) -> _T:
    """func() with a wall-clock limit; raise `exception` when it is exceeded."""
    if seconds <= 0:
        raise exception()
    usable = hasattr(signal, "setitimer") and threading.current_thread() is threading.main_thread()
    if not usable:
        return func()

    def on_alarm(signum, frame):
        raise exception()

    started = time.monotonic()
    previous_handler = signal.signal(signal.SIGALRM, on_alarm)
    outer_delay, outer_interval = signal.setitimer(signal.ITIMER_REAL, 0)
    limit = min(seconds, outer_delay) if outer_delay > 0 else seconds
    try:
        signal.setitimer(signal.ITIMER_REAL, limit)
        return func()
    finally:
        signal.setitimer(signal.ITIMER_REAL, 0)
        signal.signal(signal.SIGALRM, previous_handler)
        if outer_delay > 0:
            left = max(outer_delay - (time.monotonic() - started), 1e-6)
            signal.setitimer(signal.ITIMER_REAL, left, outer_interval)
