"""Wall-clock limits for work that might not finish (sympy simplification, routes).

Uses SIGALRM, so a limit only applies in the main thread (elsewhere the work
runs unlimited).  Limits nest: an inner limit never extends an outer one, and
the outer alarm is re-armed with the time it has left.  The exception raised
derives from BaseException so that library code's `except Exception` cannot
swallow it.

An exception raised by a signal handler can still be lost when the signal
lands in a context that discards exceptions (a garbage-collector callback, a
`__del__` method).  So once the limit is reached the alarm repeats every
REPEAT seconds until the work stops; the handler does nothing after the
limited block has finished.
"""

from __future__ import annotations

import signal
import threading
import time
from collections.abc import Callable
from typing import TypeVar

_T = TypeVar("_T")
REPEAT = 0.05


class OutOfTime(BaseException):
    """The time limit of the innermost `run_limited` ran out."""


def run_limited(func: Callable[[], _T], seconds: float, exception: type[BaseException] = OutOfTime) -> _T:
    """func() with a wall-clock limit; raise `exception` when it is exceeded."""
    if seconds <= 0:
        raise exception()
    usable = hasattr(signal, "setitimer") and threading.current_thread() is threading.main_thread()
    if not usable:
        return func()
    finished = False

    def on_alarm(signum, frame):
        if not finished:
            raise exception()

    started = time.monotonic()
    previous_handler = signal.signal(signal.SIGALRM, on_alarm)
    outer_delay, outer_interval = signal.setitimer(signal.ITIMER_REAL, 0)
    limit = min(seconds, outer_delay) if outer_delay > 0 else seconds
    try:
        signal.setitimer(signal.ITIMER_REAL, limit, REPEAT)
        return func()
    finally:
        finished = True
        signal.setitimer(signal.ITIMER_REAL, 0)
        signal.signal(signal.SIGALRM, previous_handler)
        if outer_delay > 0:
            left = max(outer_delay - (time.monotonic() - started), 1e-6)
            signal.setitimer(signal.ITIMER_REAL, left, outer_interval)
