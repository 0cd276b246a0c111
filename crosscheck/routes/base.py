"""The route interface: what a route receives, what it returns.

A route is an independent way to compute observables (DESIGN.md section 4).
It receives a `Problem` -- the claim's physical inputs without the claimed
value -- and returns, from its symbolic side, sympy expressions in the
parameters with the derivation steps, and from its numeric side `Measured`
values (value and error estimate) at one parameter point.

Both sides return values in geometric form (see `crosscheck.spacetimes.base`);
the unit layer converts them.  A route raises `CannotCompute` when a side does
not apply (for example, no closed form); any other exception is caught by the
runner and reported as that route's `error`.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from typing import ClassVar, Literal, Protocol, runtime_checkable

import sympy

from crosscheck.claim import Detector
from crosscheck.measure import Measured
from crosscheck.spacetimes.base import Spacetime


@dataclass(frozen=True)
class Problem:
    """A claim's physical inputs, as a route sees them.

    `parameters` are the claim's free parameter symbols (with the assumptions
    their ranges imply); `wanted` the observables the claim mentions;
    `ranges` the sampled range of each parameter (for routes that need a
    representative point, e.g. to pick among symbolic roots).
    """

    spacetime: Spacetime | None
    detector: Detector | None
    parameters: tuple[sympy.Symbol, ...]
    wanted: frozenset[str]
    ranges: dict[sympy.Symbol, tuple[sympy.Rational, sympy.Rational]] = field(
        default_factory=dict, compare=False, hash=False
    )


@dataclass(frozen=True)
class Step:
    """One derivation step shown to the reader: a short label and an expression."""

    label: str
    expr: sympy.Basic


@dataclass(frozen=True)
class SymbolicResult:
    """Observables as closed forms in the parameters.

    `values` maps scalar observable names to expressions; `functions` maps
    function observables (a_loc, T_loc) to `sympy.Lambda(r, expr)`.
    `provenance` says which inputs and methods were used, in words.
    """

    values: dict[str, sympy.Expr]
    functions: dict[str, sympy.Lambda] = field(default_factory=dict)
    steps: tuple[Step, ...] = ()
    provenance: tuple[str, ...] = ()


@dataclass(frozen=True)
class NumericResult:
    """Observables at one parameter point, each with an error estimate.

    `functions` maps function observables to callables r -> Measured (r an
    mpmath number) valid at this parameter point.  `evidence` holds plain
    data (lists of floats, short strings) for reports and plots.
    """

    values: dict[str, Measured]
    functions: dict[str, Callable[[object], Measured]] = field(default_factory=dict)
    evidence: dict[str, object] = field(default_factory=dict)
    provenance: tuple[str, ...] = ()


DEFAULT_SCOPE = frozenset({"horizon"})


def claim_kind(problem: Problem) -> str:
    """'detector' for a claim with a detector worldline, else 'horizon'."""
    return "detector" if problem.detector is not None else "horizon"


def route_scope(route: object) -> frozenset[str]:
    """The kinds of claim a route checks (DEFAULT_SCOPE when it does not say)."""
    return frozenset(getattr(route, "scope", DEFAULT_SCOPE))


def horizon_input_obstacle(problem: Problem, observables: frozenset[str]) -> str | None:
    """Why a horizon route cannot take this problem at all (no spacetime, no horizon, an
    observable it does not compute), or None: the common part of `applies`."""
    spacetime = problem.spacetime
    if spacetime is None:
        return "needs a spacetime"
    spec = spacetime.horizon
    if spec is None or (spec.expression is None and spec.root is None):
        return "needs a spacetime with a horizon"
    missing = problem.wanted - observables
    if missing:
        return f"does not compute {', '.join(sorted(missing))}"
    return None


@runtime_checkable
class Route(Protocol):
    """What every route provides.  See DEVELOPERS.md, "Adding a route"."""

    name: ClassVar[str]
    title: ClassVar[str]
    grade: ClassVar[Literal["exact", "estimate"]]
    observables: ClassVar[frozenset[str]]
    version: ClassVar[str]
    # Optional: which claims the route checks, {"horizon"}, {"detector"} or both.
    # A claim with a `detector:` section is a detector claim (its T is what the
    # detector sees).  Routes without the attribute check horizon claims only.
    # scope: ClassVar[frozenset[str]]

    def applies(self, problem: Problem) -> str | None:
        """None when the route can handle the problem, else the reason it cannot."""

    def symbolic(self, problem: Problem) -> SymbolicResult:
        """Closed forms for `problem.wanted` (raise CannotCompute if impossible)."""

    def numeric(
        self, problem: Problem, point: Mapping[sympy.Symbol, object], digits: int
    ) -> NumericResult:
        """Values at `point` (symbol -> mpmath number) computed at `digits` digits."""
