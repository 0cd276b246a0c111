"""Square roots of rational functions of a root of a quadratic (generic algebra).

A rotating or charged horizon r_h is a root of a quadratic Delta(r_h) = 0 over
the parameters (r_h = M + sqrt(M^2 - a^2)); the Taylor coefficients of the
lapse there are rational functions of r_h, and the temperature needs the
square root of their product.  Left as sqrt(rational function of r_h), the
closed form has nested roots that sympy cannot prove equal to a claim within
seconds; yet the root usually lies in the field Q(parameters)(r_h) itself, as
u + v r_h with u, v rational in the parameters.  This module finds u and v:

with r_h^2 = c1 r_h + c0 and z = p + q r_h (numerator times the conjugate of
the denominator, both reduced modulo the quadratic), the norm
N = z z' = p^2 + c1 p q - c0 q^2 and the trace 2p + c1 q give
v^2 = (trace - 2 sqrt(N)) / (c1^2 + 4 c0) for one sign of sqrt(N), and
u = (q - c1 v^2)/(2 v).  Both square roots must be of perfect squares
(found by factoring).  The result is then written over a denominator that is
finite wherever z is (`field_sqrt`), and returned for the caller to check
numerically at the actual r_h (sign and branch).  Nothing here knows a
metric, a surface gravity or a temperature: it is field arithmetic on
whatever expression a route hands it (euclidean-period and tunneling both
use it, as they share `crosscheck.probing`).
"""

from __future__ import annotations

from collections.abc import Sequence

import mpmath
import sympy

from crosscheck import probing
from crosscheck.errors import CannotCompute

FACTOR_OPS = 600  # factor only below this many operations (it can hang)


def defining_factor(F: sympy.Expr, r: sympy.Symbol, value: sympy.Expr, points: Sequence, symbol: sympy.Symbol
                    ) -> sympy.Poly | None:
    """The irreducible factor of F's numerator (a polynomial in r) that vanishes at the
    closed form `value` (tested at the first probe point), as a Poly in `symbol`; None
    when the numerator is not a polynomial or is too large to factor."""
    numerator = sympy.fraction(sympy.cancel(sympy.together(F)))[0]
    try:
        if not numerator.is_polynomial(r) or sympy.count_ops(numerator) > FACTOR_OPS:
            return None
        factors = sympy.factor_list(sympy.Poly(numerator, r))[1]
        for factor, _ in sorted(factors, key=lambda pair: pair[0].degree()):
            if factor.degree() >= 1 and probing.is_zero(factor.as_expr().subs(r, value), points[:1]):
                return sympy.Poly(factor.as_expr().subs(r, symbol), symbol)
    except (sympy.PolynomialError, NotImplementedError, CannotCompute):
        return None
    return None


def _perfect_root(square: sympy.Expr) -> sympy.Expr | None:
    """sqrt(square) without roots of the parameters (up to sign), when factoring shows a
    perfect square (a numeric constant may stay under a root); None otherwise."""
    if square == 0:
        return sympy.Integer(0)
    if sympy.count_ops(square) > FACTOR_OPS:
        return None
    root = sympy.Integer(1)
    for part, power in zip(sympy.fraction(sympy.cancel(square)), (1, -1)):
        coefficient, factors = sympy.factor_list(part)
        if any(e % 2 for _, e in factors):
            return None
        root *= (sympy.sqrt(coefficient) * sympy.Mul(*(f ** (e // 2) for f, e in factors))) ** power
    return root


class _Field:
    """Arithmetic in Q(parameters)(r_h), r_h^2 = c1 r_h + c0, on sympy's polynomial domains
    (much faster than expanding expressions): an element is a pair (alpha, beta) meaning
    alpha + beta r_h."""

    def __init__(self, modulus: sympy.Poly, *exprs: sympy.Expr) -> None:
        symbols = set(modulus.free_symbols).union(*(e.free_symbols for e in exprs)) - {modulus.gen}
        self.gen = modulus.gen
        self.domain = sympy.QQ.frac_field(*sorted(symbols, key=str)) if symbols else sympy.QQ
        self.modulus = sympy.Poly(modulus.as_expr(), modulus.gen, domain=self.domain)
        m2, m1, m0 = self.modulus.rep.to_list()
        self.c1, self.c0 = -m1 / m2, -m0 / m2

    def linear(self, expr: sympy.Expr) -> tuple | None:
        """expr (a polynomial in r_h) reduced to (alpha, beta); None if it is not one."""
        try:
            reduced = sympy.Poly(expr, self.gen, domain=self.domain).rem(self.modulus)
        except (sympy.PolynomialError, sympy.CoercionFailed):
            return None
        coefficients = reduced.rep.to_list()
        return coefficients[-1], coefficients[-2] if len(coefficients) > 1 else self.domain.zero

    def norm(self, x: tuple):
        """x times its conjugate (r_h -> the other root c1 - r_h): an element of Q(parameters)."""
        return x[0] ** 2 + self.c1 * x[0] * x[1] - self.c0 * x[1] ** 2

    def divide(self, x: tuple, y: tuple) -> tuple | None:
        """x / y: x times the conjugate (alpha + beta c1) - beta r_h of y, over y's norm."""
        norm = self.norm(y)
        if not norm:
            return None
        conjugate = (y[0] + y[1] * self.c1, -y[1])
        product = (x[0] * conjugate[0] + self.c0 * x[1] * conjugate[1],
                   x[0] * conjugate[1] + x[1] * conjugate[0] + self.c1 * x[1] * conjugate[1])
        return product[0] / norm, product[1] / norm

    def expr(self, element) -> sympy.Expr:
        return self.domain.to_sympy(element)

    def element(self, expr: sympy.Expr) -> tuple | None:
        """A rational function of r_h as (alpha, beta); None if it is not one."""
        numerator, denominator = sympy.fraction(sympy.together(expr))
        top, bottom = self.linear(numerator), self.linear(denominator)
        return None if top is None or bottom is None else self.divide(top, bottom)


def _linear_sqrt(z: sympy.Expr, field: _Field) -> list[sympy.Expr]:
    """Candidates u + v r_h for sqrt(z), up to sign (u, v rational in the parameters)."""
    quotient = field.element(z)
    if quotient is None:
        return []
    p, q = quotient
    if not q:
        root = _perfect_root(field.expr(p))
        return [] if root is None else [root]
    norm_root = _perfect_root(field.expr(field.norm(quotient)))
    if norm_root is None or not norm_root.is_rational_function():
        return []  # an irrational constant under the root: v^2 would not be in the field
    n = field.domain.from_sympy(norm_root)
    candidates = []
    for sign in (1, -1):
        w = (2 * p + field.c1 * q - 2 * sign * n) / (field.c1**2 + 4 * field.c0)
        v = _perfect_root(field.expr(w)) if w else None
        if v is None or v == 0:
            continue
        u = (field.expr(q) - field.expr(field.c1) * field.expr(w)) / (2 * v)
        candidates.append(sympy.factor(sympy.cancel(u)) + v * field.gen)
    return candidates


def _denominator_factors(expr: sympy.Expr) -> set[sympy.Expr]:
    """The non-constant factors of expr's denominator (both signs)."""
    found = set()
    for factor, _ in sympy.factor_list(sympy.fraction(sympy.together(expr))[1])[1]:
        if not factor.is_number:
            found |= {factor, sympy.expand(-factor)}
    return found


def _sign_free(factor: sympy.Expr) -> sympy.Expr:
    """One of factor, -factor (the same for both)."""
    return max(factor, sympy.expand(-factor), key=sympy.default_sort_key)


def _reduced_factors(factor: sympy.Expr, field: _Field) -> set[sympy.Expr]:
    """The factors of `factor` reduced modulo the quadratic: equal to it at r_h, so a
    denominator made of them is finite wherever `factor` is non-zero."""
    reduced = field.linear(factor)
    if reduced is None:
        return set()
    return _denominator_factors(1 / (field.expr(reduced[0]) + field.expr(reduced[1]) * field.gen))


def field_sqrt(z: sympy.Expr, modulus: sympy.Poly | None, parts: Sequence[sympy.Expr] = ()) -> list[sympy.Expr]:
    """Candidates for sqrt(z) (z rational in r_h = modulus.gen), up to sign, simplest first;
    empty when z is not recognised as a square in the field.  A z written as a square
    gives its root; else u + v r_h is tried as it is and over each factor g of the
    denominators and its square and cube (l/g with l = (u + v r_h) g reduced); a form
    is kept only if its denominator divides that of z or of one of the `parts` z is the
    product of (before cancelling), so it is finite wherever they are (u + v r_h alone may
    divide by a norm that vanishes where the other root does, a -> 0 in Kerr).  The last
    resort, sqrt(numerator * denominator) over the reduced denominator, always has that
    property.  The caller checks each candidate numerically (sign and branch)."""
    if modulus is None or modulus.degree() != 2:
        return []
    field = _Field(modulus, z, *parts)
    allowed = set().union(_denominator_factors(z), *(_denominator_factors(p) for p in parts))
    allowed |= set().union(*(_reduced_factors(f, field) for f in allowed if f.has(field.gen)))
    divisors = [sympy.Integer(1)] + sorted({_sign_free(f) ** k for f in allowed if f.has(field.gen) for k in (1, 2, 3)},
                                           key=sympy.count_ops)
    if z.is_Pow and z.exp.is_Integer and int(z.exp) % 2 == 0:  # a square as it stands (F = G: a b = a^2)
        return [z.base ** (int(z.exp) // 2)]
    found: list[sympy.Expr] = []
    for root in _linear_sqrt(z, field):
        numerator, denominator = sympy.fraction(sympy.together(root))
        for g in divisors:  # the first (smallest) divisor that gives a finite form
            reduced = field.linear(sympy.expand(numerator * g))
            if reduced is None:
                continue
            candidate = sympy.factor(sympy.cancel((field.expr(reduced[0]) + field.expr(reduced[1]) * field.gen)
                                                  / (denominator * g)))
            if _denominator_factors(candidate) <= allowed:
                found.append(candidate)
                break
    if not found:
        numerator, denominator = sympy.fraction(sympy.together(z))
        bottom = field.linear(denominator)
        if bottom is not None and any(bottom):
            below = sympy.factor(field.expr(bottom[0]) + field.expr(bottom[1]) * field.gen)
            found += [sympy.factor(root) / below for root in _linear_sqrt(sympy.expand(numerator * denominator), field)]
    return sorted(found, key=sympy.count_ops)


def positive_sqrt(z: sympy.Expr, modulus: sympy.Poly | None, parts: Sequence[sympy.Expr], value: sympy.Expr,
                  points: Sequence) -> sympy.Expr | None:
    """sqrt(z) > 0 as a rational function of r_h (modulus.gen), or None: the first candidate
    of `field_sqrt` whose square equals z in the field (exact arithmetic: a proof that it is
    +-sqrt(z)), with the sign that makes it positive at every probe point, r_h = `value`."""
    if modulus is None or modulus.degree() != 2:
        return None
    field = _Field(modulus, z, *parts)
    target = field.element(z)
    for candidate in field_sqrt(z, modulus, parts):
        if target is None or field.element(sympy.expand(candidate**2)) != target:
            continue
        try:
            signs = {mpmath.sign(probing.value(candidate.subs(field.gen, value), point, 30).real) for point in points}
        except ValueError:
            continue
        if signs in ({1}, {-1}):
            return candidate * int(signs.pop())
    return None
