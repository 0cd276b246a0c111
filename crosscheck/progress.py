"""A one-line progress display on a terminal; silent anywhere else (CI logs).

The line lives on stderr and is redrawn in place with a carriage return.
Whoever prints a result line calls `clear()` first and `draw()` after, so
results on stdout and the progress line never tangle on the same screen.
"""

from __future__ import annotations

import os
import sys
import time
from typing import TextIO


def wanted(stream: TextIO) -> bool:
    """True on an interactive terminal (not in CI, not when TERM=dumb)."""
    try:
        interactive = stream.isatty()
    except (AttributeError, ValueError):
        return False
    return interactive and os.environ.get("TERM", "") != "dumb" and not os.environ.get("CI")


class Progress:
    """Counts of claims and tasks; `update` redraws at most every `interval` seconds."""

    def __init__(self, claims: int, tasks: int, stream: TextIO | None = None, enabled: bool | None = None,
                 interval: float = 0.2) -> None:
        self.stream = stream if stream is not None else sys.stderr
        self.enabled = wanted(self.stream) if enabled is None else enabled
        self.claims, self.tasks = claims, tasks
        self.claims_done = self.tasks_done = self.running = self.failing = 0
        self.started = time.monotonic()
        self.interval = interval
        self._last = 0.0
        self._shown = False

    def update(self, *, claims_done: int, tasks_done: int, running: int, failing: int, force: bool = False) -> None:
        self.claims_done, self.tasks_done, self.running, self.failing = claims_done, tasks_done, running, failing
        now = time.monotonic()
        if force or now - self._last >= self.interval:
            self._last = now
            self.draw()

    def text(self) -> str:
        parts = [f"{self.claims_done}/{self.claims} claims", f"{self.running} running"]
        if self.failing:
            parts.append(f"{self.failing} failing")
        parts.append(f"ETA {self._eta()}")
        return "crosscheck: " + ", ".join(parts)

    def _eta(self) -> str:
        """Remaining tasks at the throughput so far (parallelism included)."""
        if not self.tasks_done:
            return "--"
        elapsed = time.monotonic() - self.started
        left = elapsed / self.tasks_done * max(self.tasks - self.tasks_done, 0)
        minutes, seconds = divmod(int(round(left)), 60)
        return f"{minutes}:{seconds:02d}"

    def draw(self) -> None:
        if self.enabled:
            self.stream.write("\r\x1b[K" + self.text())
            self.stream.flush()
            self._shown = True

    def clear(self) -> None:
        if self.enabled and self._shown:
            self.stream.write("\r\x1b[K")
            self.stream.flush()
            self._shown = False
