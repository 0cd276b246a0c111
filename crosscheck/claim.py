"""Immutable claim objects, as built by `claimfile` from a YAML file.

A `Claim` holds the parsed equation (sympy objects, never text to evaluate)
and the physical inputs.  Routes never see a `Claim`: they get a `Problem`
(`crosscheck.routes.base`) that has the inputs but not the claimed value, so a
route cannot lean on the answer it is checking.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Literal

import sympy

from crosscheck.spacetimes.base import Spacetime


@dataclass(frozen=True)
class Parameter:
    """A free parameter sampled over [lo, hi] (exact rationals) for numeric checks."""

    name: str
    symbol: sympy.Symbol
    lo: sympy.Rational
    hi: sympy.Rational


@dataclass(frozen=True)
class Detector:
    """A detector worldline (DESIGN.md section 3); routes for it come in later work."""

    trajectory: Literal["uniform-acceleration", "circular", "inertial", "static", "infall"]
    arguments: dict[str, sympy.Expr] = field(default_factory=dict, compare=False, hash=False)
    field_coupling: Literal["monopole", "derivative"] = "monopole"
    field_name: str = "massless-scalar"


@dataclass(frozen=True)
class Claim:
    """One claim: the equation lhs = rhs plus everything needed to check it.

    `observables` lists the observable names the equation mentions; a route
    covers the claim when it computes all of them.  `derived` holds the
    `where:` definitions (already substituted into every expression; kept for
    reports).  `line` is the 1-based line of the claim in its file.
    `dimension_sides` is the equation with SI constants kept as symbols (their
    values are substituted in lhs/rhs), for the dimensional check; None in
    geometric units, where lhs/rhs serve.
    """

    id: str
    title: str
    path: str
    line: int
    units: Literal["geometric", "si"]
    parameters: tuple[Parameter, ...]
    lhs: sympy.Expr
    rhs: sympy.Expr
    text: str
    observables: frozenset[str]
    spacetime: Spacetime | None = None
    detector: Detector | None = None
    derived: tuple[tuple[str, sympy.Expr], ...] = ()
    routes: tuple[str, ...] | None = None
    agreement: Literal["exact", "scaling"] = "exact"
    tolerance: float = 1e-9
    sources: tuple[str, ...] = ()
    notes: str = ""
    spectrum: Literal["bose", "fermi", "non-thermal"] | None = None
    band: tuple[sympy.Expr, sympy.Expr] | None = None
    claim_line: int = 0
    claim_column: int = 0
    dimension_sides: tuple[sympy.Expr, sympy.Expr] | None = None

    @property
    def symbols(self) -> tuple[sympy.Symbol, ...]:
        return tuple(p.symbol for p in self.parameters)
