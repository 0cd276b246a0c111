"""Closed-form tidying for the near-horizon route (private helpers).

The horizon values come out of `_near_horizon_fields.Place` as rational
functions of the parameters and of at most one square root sqrt(D) (the
usual r_h = M + sqrt(M^2 - a^2 - Q^2)).  `simplify` on such expressions costs
seconds each, so they are brought to a canonical form in Q(params)(sqrt(D))
instead: numerator and denominator reduced modulo u^2 - D (u = sqrt(D)),
stripped of their common polynomial factor, coefficients factored.  That is
polynomial arithmetic, milliseconds, and the value is unchanged (no
rationalising, which would bring in the conjugate's spurious zeros).
`simplify` only sees small root-free or otherwise unhandled expressions.
"""

from __future__ import annotations

import functools
from collections.abc import Sequence

import sympy

from crosscheck.routes._near_horizon_fields import SIMPLIFY_OPS, ZERO, Point, is_zero, sign_at
from crosscheck.spacetimes.evaluation import as_sympy

FACTOR_OPS = 400  # larger root-free results are cancelled but not factored


def _square_root_bases(expr: sympy.Expr) -> set[sympy.Expr] | None:
    """Bases D of the powers D^(k/2) with symbolic D; None if other roots (cube roots, I) occur."""
    if expr.has(sympy.I):
        return None
    bases = set()
    for power in expr.atoms(sympy.Pow):
        if power.exp.is_Rational and not power.exp.is_Integer:
            if power.exp.q != 2:
                return None
            if not power.base.is_Number:
                bases.add(power.base)
        elif not power.exp.is_Number:
            return None
    return bases


def _root_free(expr: sympy.Expr) -> sympy.Expr:
    """cancel, then factor when the result is not too large."""
    result = sympy.cancel(sympy.together(expr))
    return sympy.factor(result) if sympy.count_ops(result) <= FACTOR_OPS else result


def in_quadratic_field(expr: sympy.Expr, base: sympy.Expr) -> sympy.Expr | None:
    """expr as (a + b sqrt(base))/(p + q sqrt(base)) with a, b, p, q polynomials without common
    factor (factored), or None when expr is not rational in the parameters and sqrt(base)."""
    u = sympy.Dummy("u", positive=True)
    top, bottom = sympy.fraction(sympy.together(expr.subs(sympy.sqrt(base), u)))
    if top.has(base**sympy.Rational(1, 2)) or bottom.has(base**sympy.Rational(1, 2)):
        return None
    try:
        (p_top, p_bottom, p_mod), options = sympy.parallel_poly_from_expr([top, bottom, u**2 - base], u)
    except (sympy.PolynomialError, sympy.GeneratorsNeeded):
        return None
    domain = options.domain
    if not (domain.is_PolynomialRing or domain.is_ZZ or domain.is_QQ):
        return None
    parts = [[domain.convert(poly.rem(p_mod).coeff_monomial(u**k)) for k in (0, 1)] for poly in (p_top, p_bottom)]
    if not any(parts[1]):
        return None
    common = functools.reduce(domain.gcd, parts[0] + parts[1])
    root = sympy.sqrt(base)
    (a, b), (p, q) = ([sympy.factor(domain.to_sympy(domain.exquo(x, common))) for x in pair] for pair in parts)
    return (a + b * root) / (p + q * root)


def tidy(expr: sympy.Expr) -> sympy.Expr:
    """A cheap canonical form: root-free -> cancel and factor; one square root -> the quadratic
    field form; otherwise simplify if small, else as it is (cancel can take minutes on Cardano's
    formula)."""
    expr = as_sympy(expr)
    bases = _square_root_bases(expr)
    if bases is not None and not bases:
        return _root_free(expr)
    if bases is not None and len(bases) == 1:
        reduced = in_quadratic_field(expr, next(iter(bases)))
        if reduced is not None:
            return reduced
    return sympy.simplify(expr) if sympy.count_ops(expr) <= SIMPLIFY_OPS else expr


def positive_sqrt(square: sympy.Expr, points: Sequence[Point]) -> sympy.Expr:
    """sqrt(square) >= 0, simplified: parts denested in Q(params)(sqrt(D)), or powdenest.
    A candidate must have one sign at the test points and square back to `square`."""
    if is_zero(square, points):
        return ZERO
    top, bottom = sympy.fraction(sympy.together(square))
    if sign_at(top, points[0]) < 0:  # sqrt(-top)/sqrt(-bottom): real parts, no I to cancel later
        top, bottom = -top, -bottom
    parts = [_denest(sympy.expand(part), points) or sympy.sqrt(part) for part in (top, bottom)]
    square = tidy(square)
    candidates = [parts[0] / parts[1]]
    if sympy.count_ops(square) <= SIMPLIFY_OPS:  # factor can hang on large radical expressions
        candidates.append(sympy.powdenest(sympy.sqrt(sympy.factor(square)), force=True))
    for candidate in candidates:
        signs = {sign_at(candidate, p) for p in points}
        if len(signs) == 1 and 0 not in signs:
            candidate = tidy(candidate * signs.pop())
            if is_zero(candidate**2 - square, points):
                return candidate
    return sympy.sqrt(square)


def _rational_sqrt(expr: sympy.Expr, points: Sequence[Point]) -> sympy.Expr | None:
    """A root-free s (possibly imaginary) with s^2 = expr (either sign), or None.  Square-free decomposition (gcds
    only) shows a perfect square: all multiplicities even; much cheaper than factor."""
    roots, coefficients = [], []
    for part in sympy.fraction(sympy.together(expr)):
        if _square_root_bases(part) != set():
            return None
        try:
            coefficient, factors = sympy.sqf_list(part)
        except (sympy.PolynomialError, NotImplementedError):
            return None
        if any(m % 2 for _, m in factors) or not coefficient.is_Rational:
            return None
        coefficients.append(coefficient)
        roots.append(sympy.Mul(*(f ** (m // 2) for f, m in factors)))
    ratio = coefficients[0] / coefficients[1]
    if not sympy.sqrt(abs(ratio)).is_Rational:
        return None
    root = sympy.sqrt(ratio) * roots[0] / roots[1]  # I times a real root for a negative square
    return root if is_zero(root**2 - expr, points) else None


def _denest(square: sympy.Expr, points: Sequence[Point]) -> sympy.Expr | None:
    """u + v sqrt(D) with (u + v sqrt(D))^2 = square = E + F sqrt(D), u and v root-free:
    u^2 = (E +- sqrt(E^2 - F^2 D))/2 and v = F/(2u), when those roots are rational."""
    roots = [p for p in square.atoms(sympy.Pow) if p.exp == sympy.Rational(1, 2)]
    if len(roots) != 1 or square.has(sympy.I) or sympy.count_ops(square) > 1000 or not square.is_polynomial(roots[0]):
        return None  # (factor can take minutes on large expressions)
    root, D, y = roots[0], roots[0].base, sympy.Dummy("y")
    F, E = ([ZERO] + sympy.Poly(square.xreplace({root: y}), y).rem(sympy.Poly(y**2 - D, y)).all_coeffs())[-2:]
    discriminant = _rational_sqrt(E**2 - F**2 * D, points)
    for sign in (1, -1):
        u = None if discriminant is None else _rational_sqrt((E + sign * discriminant) / 2, points)
        if u is not None and not is_zero(u, points):
            return sympy.factor(u) + sympy.factor(F / (2 * u)) * root
    return None
