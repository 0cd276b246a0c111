"""Proving an algebraic expression zero by reducing its square roots.

Horizon quantities of rotating and charged holes are rational functions of
the parameters and of a few square roots (r_+ = M + sqrt(M^2 - a^2)).
`simplify` and `radsimp` often cannot decide such a difference within a few
seconds, yet the algebra is elementary:

1. factor each radicand, P = c * f_1^e_1 * ... ; where interval arithmetic
   over the claim's parameter box fixes the sign of every factor, write
   sqrt(P) = sqrt(c') * prod g_i^(e_i // 2) * prod sqrt(g_i)^(e_i mod 2) with
   g_i = +-f_i >= 0 on the box (this is where two different-looking roots,
   sqrt(M^2 - M^2 chi^2) and M sqrt(1 - chi^2), become the same generator);
2. write each remaining root sqrt(g) as a new symbol s with s^2 = g;
3. bring everything over one denominator and reduce the numerator's powers
   of each s with s^2 -> g.

If the remainder expands to 0 the expression is 0 on the whole parameter
box, so a zero here is a proof (step 1 holds exactly where the signs were
proved; steps 2-3 are identities).  A non-zero remainder proves nothing, and
the caller goes on to other canonical forms.
"""

from __future__ import annotations

from collections.abc import Mapping
from fractions import Fraction

import sympy
from mpmath import iv

from crosscheck import fieldroots

__all__ = ["reduce_radicals", "sign_on_box"]

Box = Mapping[sympy.Symbol, tuple[Fraction, Fraction]]

#: Give up (leave the expression alone) beyond this many distinct roots.
MAX_ROOTS = 16
#: Bisections of the box when one interval evaluation cannot fix a sign.
MAX_SPLITS = 5


class _Unknown(Exception):
    """The interval evaluation does not support this expression."""


def _interval(expr: sympy.Expr, box: Mapping[sympy.Symbol, object]):
    """An interval containing expr's values over box (mpmath.iv, outward rounding)."""
    if expr.is_Symbol:
        if expr not in box:
            raise _Unknown(str(expr))
        return box[expr]
    if expr.is_Rational:
        return iv.mpf(int(expr.p)) / int(expr.q)
    if expr.is_Add or expr.is_Mul:
        parts = [_interval(a, box) for a in expr.args]
        total = parts[0]
        for part in parts[1:]:
            total = total + part if expr.is_Add else total * part
        return total
    if expr.is_Pow and expr.exp.is_Integer:
        base = _interval(expr.base, box)
        n = int(expr.exp)
        if n >= 0:
            return base**n
        if base.a > 0 or base.b < 0:
            return 1 / base ** (-n)
        return iv.mpf(["-inf", "inf"])  # the divisor's interval holds 0: bisection may separate it
    raise _Unknown(type(expr).__name__)


def _intervals(box: Box, roots: Mapping[sympy.Symbol, sympy.Expr] | None = None) -> dict[sympy.Symbol, object]:
    """Intervals of the parameters, and of each root symbol s = sqrt(g) from g's interval."""
    values = {s: iv.mpf([iv.mpf(lo.numerator) / lo.denominator, iv.mpf(hi.numerator) / hi.denominator])
              for s, (lo, hi) in box.items()}
    for root, radicand in (roots or {}).items():
        square = _interval(radicand, values)
        if square.a < 0:
            raise _Unknown("a root of a possibly negative radicand")
        values[root] = iv.sqrt(square)
    return values


def _bisected(box: Box) -> tuple[Box, Box]:
    widest = max(box, key=lambda s: box[s][1] - box[s][0])
    lo, hi = box[widest]
    middle = (lo + hi) / 2
    return {**box, widest: (lo, middle)}, {**box, widest: (middle, hi)}


def sign_on_box(expr: sympy.Expr, box: Box, splits: int = MAX_SPLITS,
                roots: Mapping[sympy.Symbol, sympy.Expr] | None = None) -> int:
    """+1 if expr >= 0 on all of box, -1 if expr <= 0, 0 if that is not proved.
    `roots` maps symbols standing for sqrt(g) to g (g free of such symbols)."""
    used = expr.free_symbols.union(*(g.free_symbols for g in (roots or {}).values()))
    box = {symbol: bounds for symbol, bounds in box.items() if symbol in used}  # bisect only these
    try:
        value = _interval(expr, _intervals(box, roots))
    except (_Unknown, ZeroDivisionError):
        return 0
    if value.a >= 0:
        return 1
    if value.b <= 0:
        return -1
    if splits == 0 or not box:
        return 0
    halves = [sign_on_box(expr, half, splits - 1, roots) for half in _bisected(box)]
    return halves[0] if halves[0] == halves[1] else 0


def _root_powers(expr: sympy.Expr) -> list[sympy.Pow]:
    """Powers with a fractional exponent of a non-numeric base: sqrt(P), P^(3/2), P^(1/3)..."""
    return [p for p in expr.atoms(sympy.Pow) if p.exp.is_Rational and p.exp.q > 1 and not p.base.is_number]


class _Roots:
    """The generators s = g^(1/n) met so far, one per distinct (n, g)."""

    def __init__(self, box: Box) -> None:
        self.box = box
        self.symbols: dict[tuple[int, sympy.Expr], sympy.Symbol] = {}

    @property
    def generators(self) -> set[sympy.Symbol]:
        return set(self.symbols.values())

    def root(self, radicand: sympy.Expr, n: int) -> sympy.Expr:
        """radicand^(1/n), written with the generators (split into factors when their
        signs are proved on the box, whole otherwise)."""
        inner = radicand.free_symbols & self.generators
        if not _root_powers(radicand) and (n == 2 or not inner):
            try:
                split = self._nested(radicand, inner) if inner else self._split(radicand, n)
            except (sympy.PolynomialError, _Unknown):  # not a rational function: keep it whole
                split = None
            if split is not None:
                return split
        return self._generator(radicand, n)

    def _nested(self, radicand: sympy.Expr, inner: set[sympy.Symbol]) -> sympy.Expr | None:
        """sqrt(radicand) for a radicand in one inner square root s = sqrt(g), when it is a
        square w^2 in the field Q(parameters)(s) (checked exactly) and w's sign is proved on
        the box: sqrt((1 - q^2)/(2 + 2 s - q^2)^2) = s/(2 + 2 s - q^2) with s = sqrt(1 - q^2)."""
        if len(inner) != 1:
            return None
        (root,) = inner
        (n, g), = [key for key, symbol in self.symbols.items() if symbol == root]
        if n != 2 or g.free_symbols & self.generators:
            return None
        top, bottom = sympy.fraction(sympy.together(radicand))
        radicand = sympy.expand(top) / sympy.expand(bottom)
        for candidate in fieldroots.field_sqrt(radicand, sympy.Poly(root**2 - g, root)):
            numerator, _ = sympy.fraction(sympy.together(candidate**2 - radicand))
            if _reduce_powers(sympy.expand(numerator), root, g, 2) != 0:
                continue
            sign = sign_on_box(candidate, self.box, roots={root: g})
            if sign != 0:
                return sign * candidate
        return None

    def _generator(self, g: sympy.Expr, n: int) -> sympy.Symbol:
        key = (n, sympy.expand(g))
        if key not in self.symbols:
            if len(self.symbols) >= MAX_ROOTS:
                raise ValueError("too many distinct roots to reduce")
            self.symbols[key] = sympy.Dummy(f"s{len(self.symbols)}")
        return self.symbols[key]

    def _split(self, radicand: sympy.Expr, n: int) -> sympy.Expr | None:
        """(N/D)^(1/n) as c^(1/n) * (factors pulled out) * generators, or None when a
        factor's sign is not proved on the box."""
        numerator, denominator = sympy.fraction(sympy.together(radicand))
        content, result = sympy.S.One, sympy.S.One
        rest = {1: sympy.S.One, -1: sympy.S.One}
        for polynomial, side in ((numerator, 1), (denominator, -1)):
            part_content, factors = sympy.factor_list(polynomial)
            content *= part_content**side
            for factor, power in factors:
                sign = sign_on_box(factor, self.box)
                if sign == 0:
                    return None
                content *= sign ** power
                result *= (sign * factor) ** (side * (power // n))
                # What is left stays under one root: sqrt(1 - q) sqrt(1 + q) is sqrt(1 - q^2).
                rest[side] *= (sign * factor) ** (power % n)
        if not (content.is_number and content.is_positive):
            return None
        for side, product in rest.items():
            if product != 1:
                result *= self._generator(product, n) ** side
        return content ** sympy.Rational(1, n) * result

    def relations(self) -> list[tuple[sympy.Symbol, sympy.Expr, int]]:
        return [(s, g, n) for (n, g), s in self.symbols.items()]


def _with_generators(expr: sympy.Expr, roots: _Roots) -> sympy.Expr:
    """expr with every P^(p/n) replaced by (its generators)^p, innermost roots first."""
    powers = sorted(_root_powers(expr), key=lambda p: len(_root_powers(p.base)))
    mapping: dict[sympy.Expr, sympy.Expr] = {}
    for power in powers:  # an inner root is replaced before any root containing it
        base = power.base.xreplace(mapping)
        mapping[power] = roots.root(base, int(power.exp.q)) ** int(power.exp.p)
    return expr.xreplace(mapping)


def _reduce_powers(expanded: sympy.Expr, root: sympy.Symbol, radicand: sympy.Expr, n: int) -> sympy.Expr:
    """root^k -> radicand^(k // n) * root^(k % n) in an expanded polynomial."""
    total = sympy.S.Zero
    for (k,), coefficient in sympy.Poly(expanded, root).terms():
        total += coefficient * radicand ** (k // n) * root ** (k % n)
    return sympy.expand(total)


def _without_abs(expr: sympy.Expr, box: Box) -> sympy.Expr:
    """|e| -> e or -e where e's sign on the box is proved (|r_b - r_c| between two horizons)."""
    mapping = {}
    for node in expr.atoms(sympy.Abs):
        sign = sign_on_box(node.args[0], box) if not _root_powers(node.args[0]) else 0
        if sign != 0:
            mapping[node] = sign * node.args[0]
    return expr.xreplace(mapping) if mapping else expr


def reduce_radicals(expr: sympy.Expr, box: Box | None = None) -> sympy.Expr:
    """The numerator of expr after every square root is reduced (see the module text).

    `box` maps parameter symbols to exact (lo, hi) ranges; without it no
    radicand is split.  Zero means expr is identically zero on the box;
    anything else is only a remainder.
    """
    roots = _Roots(box or {})
    replaced = _with_generators(_without_abs(expr, box or {}), roots)
    numerator, _ = sympy.fraction(sympy.together(replaced))
    reduced = sympy.expand(numerator)
    relations = roots.relations()
    # Reduce generators whose radicands contain other generators first.
    relations.sort(key=lambda item: len(item[1].free_symbols & roots.generators), reverse=True)
    for root, radicand, n in relations:
        if reduced == 0:
            break
        if reduced.has(root):
            reduced = _reduce_powers(reduced, root, radicand, n)
    return reduced
