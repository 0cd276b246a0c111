"""Limits at a point in closed form for algebraic expressions (a claim's `limit(...)`).

sympy's `limit` often does not finish within seconds on the near-horizon ratios
claims take, e.g. 2 pi T_loc(r)/a_loc(r) as r -> r_h, where sqrt(F(r)) and |F'/F|
vanish or blow up together.  Yet the algebra is the square-root reduction of
`crosscheck.radicals` once the approach is written as r = r_h + t^2 (t -> 0+):

1. the roots are written as generators over the parameter box and t in [0, 1/100]
   (signs proved there by interval arithmetic: the factor t^2 of F(r_h + t^2) comes
   out of its root as t);
2. absolute values whose argument has a proved sign on that box are resolved;
3. the expression is brought to one fraction N/D, reduced modulo the generators'
   relations, and common powers of t are cancelled;
4. if D at t = 0 is proved non-zero over the box, the limit is N(0)/D(0): N and D are
   polynomials in t, the parameters and the generators, and every generator is a
   root of a real function of t, continuous at t = 0.

Anything else (a function other than powers and |.|, D(0) not proved non-zero)
gives None, and the caller falls back to sympy.
"""

from __future__ import annotations

from fractions import Fraction

import sympy

from crosscheck.radicals import Box, sign_on_box, with_generators

__all__ = ["algebraic_limit"]

#: t ranges over [0, T_MAX]: r - r_h up to 1e-4 (in the claim's units).
T_MAX = Fraction(1, 100)


def algebraic_limit(body: sympy.Expr, variable: sympy.Symbol, point: sympy.Expr, direction: str,
                    box: Box) -> sympy.Expr | None:
    """lim body as variable -> point from `direction` ('+' or '-'), or None (see the module text)."""
    if not (_algebraic(body) and _algebraic(point)) or point.has(variable):
        return None
    if (body.free_symbols | point.free_symbols) - {variable} - set(box):
        return None
    t = sympy.Dummy("t")
    step = -1 if str(direction) == "-" else 1
    shifted_box = {**box, t: (Fraction(0), T_MAX)}
    try:
        written, roots = with_generators(body.xreplace({variable: point + step * t**2}), shifted_box)
        signs = _Signs(roots, shifted_box, t)
        written = _without_abs(written, signs)
        if written is None:
            return None
        top, bottom = (roots.reduced(part) for part in sympy.fraction(sympy.together(written)))
        top, bottom = sympy.fraction(sympy.cancel(top / bottom))
        at_zero = roots.reduced(bottom.xreplace({t: 0}))
        if at_zero == 0 or signs.of(at_zero, strict=True) == 0:
            return None
        return roots.radicals(top.xreplace({t: 0})) / roots.radicals(at_zero)
    except (ValueError, sympy.PolynomialError, ZeroDivisionError):  # too many roots, not rational
        return None


def _algebraic(expr: sympy.Expr) -> bool:
    """Built from symbols, numbers, +, *, rational powers and |.| only."""
    for node in sympy.preorder_traversal(expr):
        if node.is_Atom or node.is_Add or node.is_Mul or isinstance(node, sympy.Abs):
            continue
        if node.is_Pow and node.exp.is_Rational:
            continue
        return False
    return True


class _Signs:
    """Signs on the box with t >= 0, for expressions in the parameters, t and the
    generators that are square roots of radicands free of generators."""

    def __init__(self, roots, box: Box, t: sympy.Symbol) -> None:
        self.roots, self.box, self.t = roots, box, t
        self.square = {s: g for s, g, n in roots.relations() if n == 2 and not g.free_symbols & roots.generators}

    def of(self, expr: sympy.Expr, strict: bool = False) -> int:
        """The common sign of the coefficients of the powers of t (t^k >= 0), each taken
        factor by factor: grouping keeps interval arithmetic from losing the sign of
        M (1 - q^2 + s) + t^2 to the dependency between M's and q's ranges."""
        expr = sympy.expand(expr)
        groups = [c for _, c in sympy.Poly(expr, self.t).terms()] if expr.has(self.t) else [expr]
        signs = {self._factored(c, strict) for c in groups}
        return signs.pop() if len(signs) == 1 else 0

    def _factored(self, expr: sympy.Expr, strict: bool) -> int:
        total = 1
        for factor in sympy.Mul.make_args(sympy.factor_terms(expr)):
            _, power = factor.as_base_exp()
            if power.is_Integer and int(power) % 2 == 0 and not strict:
                continue
            used = factor.free_symbols & self.roots.generators
            if used - set(self.square):
                return 0
            sign = sign_on_box(factor, self.box, roots={s: self.square[s] for s in used} or None, strict=strict)
            if sign == 0:
                return 0
            total *= sign
        return total


def _without_abs(expr: sympy.Expr, signs: _Signs) -> sympy.Expr | None:
    """|a| -> a or -a where the signs of a's reduced numerator and denominator are proved
    on the box (innermost first); None when one is not."""
    for node in sorted(expr.atoms(sympy.Abs), key=lambda a: len(a.atoms(sympy.Abs))):
        argument = node.args[0]
        top, bottom = (signs.roots.reduced(part) for part in sympy.fraction(sympy.together(argument)))
        sign = signs.of(top) * signs.of(bottom)
        if sign == 0:
            return None
        expr = expr.xreplace({node: sign * argument})
    return expr
