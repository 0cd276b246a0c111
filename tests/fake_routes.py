"""Fake routes for the isolation, cache and scheduler tests (imported by them, not collected).

`Hawking` computes T = 1/(8 pi M) for Schwarzschild claims, the published
value (Hawking 1975, Commun. Math. Phys. 43, 199), so that it agrees with a
correct claim; the misbehaving routes each fail in one way.  They live in a
module (not in a test file) so that Dask can pickle them by reference.
"""

from __future__ import annotations

import ctypes
import mmap
import os
import time

import mpmath
import sympy

from crosscheck.errors import CannotCompute
from crosscheck.measure import Measured
from crosscheck.routes.base import NumericResult, SymbolicResult

CALLS: list[str] = []  # names of routes run in this process (inline runs only)


def mass(problem) -> sympy.Symbol:
    [symbol] = [s for s in problem.parameters if s.name == "M"]
    return symbol


class _Fake:
    grade = "exact"
    observables = frozenset({"T"})
    version = "1"
    title = "fake route for tests"

    def applies(self, problem):
        return None

    def numeric(self, problem, point, digits):
        raise CannotCompute("symbolic only")


class Hawking(_Fake):
    name = "hawking"
    delay = 0.0

    def symbolic(self, problem):
        CALLS.append(self.name)
        time.sleep(self.delay)
        return SymbolicResult(values={"T": 1 / (8 * sympy.pi * mass(problem))}, provenance=("test formula",))

    def numeric(self, problem, point, digits):
        with mpmath.workdps(digits):
            return NumericResult(values={"T": Measured(1 / (8 * mpmath.pi * point[mass(problem)]), mpmath.mpf(0))})


class HawkingTwin(Hawking):
    """A second agreeing exact route, so that a claim can be confirmed."""

    name = "hawking-twin"


class SlowByMass(Hawking):
    """Sleeps longer for smaller upper mass bounds: later claims of a test finish first."""

    name = "slow-by-mass"

    def symbolic(self, problem):
        hi = float(problem.ranges[mass(problem)][1])
        time.sleep(max(0.0, 0.3 - 0.05 * hi))
        return super().symbolic(problem)


class Sleeping(_Fake):
    name = "sleeping"

    def symbolic(self, problem):
        time.sleep(60)


class Stubborn(_Fake):
    """Swallows the time-limit signal: only killing the worker stops it."""

    name = "stubborn"

    def symbolic(self, problem):
        end = time.monotonic() + 60
        while time.monotonic() < end:
            try:
                time.sleep(0.05)
            except BaseException:  # noqa: BLE001 - the point of this route
                pass


class Raising(_Fake):
    name = "raising"

    def symbolic(self, problem):
        raise ZeroDivisionError("boom")


class Exiting(_Fake):
    name = "exiting"

    def symbolic(self, problem):
        os._exit(3)


class Segfaulting(_Fake):
    name = "segfaulting"

    def symbolic(self, problem):
        ctypes.string_at(0)  # reads address 0: SIGSEGV


class Hungry(_Fake):
    name = "hungry"

    def symbolic(self, problem):
        hoard = []
        while True:  # 256 MB of address space per step, never touched, so the limit is reached at once
            hoard.append(mmap.mmap(-1, 256 << 20))


def routes(*classes) -> dict:
    return {cls.name: cls() for cls in classes}
