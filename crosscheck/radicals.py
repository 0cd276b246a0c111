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

import math
from collections.abc import Mapping, Sequence
from fractions import Fraction

import sympy
from mpmath import iv

from crosscheck import fieldroots

__all__ = ["parameter_box", "reduce_radicals", "sign_on_box", "with_generators"]

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
                roots: Mapping[sympy.Symbol, sympy.Expr] | None = None, strict: bool = False) -> int:
    """+1 if expr >= 0 on all of box, -1 if expr <= 0, 0 if that is not proved
    (strict: > 0 and < 0).  `roots` maps symbols standing for sqrt(g) to g (g free
    of such symbols)."""
    used = expr.free_symbols.union(*(g.free_symbols for g in (roots or {}).values()))
    box = {symbol: bounds for symbol, bounds in box.items() if symbol in used}  # bisect only these
    try:
        value = _interval(expr, _intervals(box, roots))
    except (_Unknown, ZeroDivisionError):
        return 0
    if value.a > 0 or (value.a == 0 and not strict):
        return 1
    if value.b < 0 or (value.b == 0 and not strict):
        return -1
    if splits == 0 or not box:
        return 0
    halves = [sign_on_box(expr, half, splits - 1, roots, strict) for half in _bisected(box)]
    return halves[0] if halves[0] == halves[1] else 0


def _root_powers(expr: sympy.Expr) -> list[sympy.Pow]:
    """Powers with a fractional exponent of a non-numeric base: sqrt(P), P^(3/2), P^(1/3)..."""
    return [p for p in expr.atoms(sympy.Pow) if p.exp.is_Rational and p.exp.q > 1 and not p.base.is_number]


class _Roots:
    """The generators s = g^(1/n) met so far, one per distinct (n, g).

    `index` maps a radicand g to the one index L it is given whatever root of it is
    met: g^(1/n) is then s^(L/n) with s^L = g.  rb^(1/3) and rb^(1/6) must share a
    generator, or the reduction cannot see that (rb^(1/6))^2 = rb^(1/3)."""

    def __init__(self, box: Box, index: Mapping[sympy.Expr, int] | None = None) -> None:
        self.box = box
        self.index = dict(index or {})
        self.symbols: dict[tuple[int, sympy.Expr], sympy.Symbol] = {}

    @property
    def generators(self) -> set[sympy.Symbol]:
        return set(self.symbols.values())

    def root(self, radicand: sympy.Expr, n: int) -> sympy.Expr:
        """radicand^(1/n), written with the generators (split into factors when their
        signs are proved on the box, whole otherwise)."""
        inner = radicand.free_symbols & self.generators
        if not _root_powers(radicand):
            try:
                split = self._split(radicand, n) if not inner else self._nested(radicand, inner) if n == 2 else None
            except (sympy.PolynomialError, _Unknown):  # not a rational function: keep it whole
                split = None
            if split is not None:
                return split
        return self._generator(self.reduced(radicand) if inner else radicand, n)

    def _nested(self, radicand: sympy.Expr, inner: set[sympy.Symbol]) -> sympy.Expr | None:
        """sqrt(radicand) for a radicand in inner roots: its root in the field of the
        inner root when it is a square there, else sqrt(top) / sqrt(bottom), each part
        simplified the same way (the two sides of a claim often write one radicand
        over different denominators: sqrt(P / (x r_h)^2) and sqrt(P) / (x r_h))."""
        whole = self._field_square(radicand, inner)
        if whole is not None:
            return whole
        top, bottom = (self.reduced(part) for part in sympy.fraction(sympy.together(radicand)))
        if bottom.free_symbols & self.generators:
            root_of_bottom = self._field_square(bottom, inner)  # proved >= 0, so sqrt(top/bottom) = sqrt(top)/it
            sign = 1
            if root_of_bottom is None:  # sqrt(a/b) = sqrt(a)/sqrt(b) for b > 0 (b = 0: undefined anyway)
                sign = self._sign_with_roots(bottom, inner)
                root_of_bottom = self._root_of_top(sign * bottom, inner) if sign != 0 else None
        else:
            sign = sign_on_box(bottom, self.box, strict=True)  # sqrt(a/b) = sqrt(a)/sqrt(b) for b > 0
            root_of_bottom = self.root(sign * bottom, 2) if sign != 0 else None
        if root_of_bottom is None:
            return None
        return self._root_of_top(sign * top, inner) / root_of_bottom

    def _sign_with_roots(self, expr: sympy.Expr, inner: set[sympy.Symbol]) -> int:
        """expr's sign on the box, inner roots given their intervals (square roots of
        radicands free of roots only), or 0."""
        keys = {symbol: key for key, symbol in self.symbols.items()}
        if any(keys[s][0] != 2 or keys[s][1].free_symbols & self.generators for s in inner):
            return 0
        return sign_on_box(expr, self.box, roots={s: keys[s][1] for s in inner})

    def _root_of_top(self, top: sympy.Expr, inner: set[sympy.Symbol]) -> sympy.Expr:
        """sqrt(top) for a polynomial in the parameters and inner roots: a field square,
        or sqrt(|c|) times a generator of top/c, with c the numeric factor of top's
        leading term (so that P and 2 P share a generator)."""
        if top.is_number:
            return sympy.sqrt(top)
        square = self._field_square(top, inner) if top.free_symbols & inner else None
        if square is not None:
            return square
        root_of_common, top = self._common_factor(top)
        if root_of_common is not None:  # sqrt(a b) = sqrt(a) sqrt(b) for a >= 0
            return root_of_common * self._root_of_top(top, inner)
        terms = sorted(sympy.Add.make_args(top), key=sympy.default_sort_key)
        content, _ = terms[0].as_independent(*top.free_symbols)
        if not (content.is_number and content.is_real and content != 0):
            return self._generator(top, 2)
        sign = 1 if content.is_positive else -1
        return sympy.sqrt(sign * content) * self._generator(sympy.expand(top / (sign * content)), 2)

    def _common_factor(self, top: sympy.Expr) -> tuple[sympy.Expr | None, sympy.Expr]:
        """(sqrt(a), top / a): a the factor common to top's terms that is free of roots,
        split by `_split` (which proves a >= 0 on the box): M^2 in M^2 x^2 s - M^2 x.
        (None, top) when there is none or its sign is not proved."""
        outside = [f for f in sympy.Mul.make_args(sympy.factor_terms(top))
                   if not f.is_Add and not f.is_number and not (f.free_symbols & self.generators)]
        common = sympy.Mul(*outside)
        root = self._split(common, 2) if common != 1 else None
        if root is None:
            return None, top
        return root, sympy.expand(sympy.cancel(top / common))

    def _field_square(self, radicand: sympy.Expr, inner: set[sympy.Symbol]) -> sympy.Expr | None:
        """w >= 0 (proved on the box) with w^2 = radicand exactly, w in the field of one
        square root t (t a product of inner square roots when the radicand holds only
        that product: sqrt(1 - q) sqrt(1 + q)), or None."""
        single = self._single_root(inner)
        if single is None:
            return None
        t, g, back = single
        z = _in_product(radicand, sorted(inner, key=str), t)
        if z is None:
            return None
        top, bottom = sympy.fraction(sympy.together(z))
        z = sympy.expand(top) / sympy.expand(bottom)
        for candidate in fieldroots.field_sqrt(z, sympy.Poly(t**2 - g, t)):
            numerator, _ = sympy.fraction(sympy.together(candidate**2 - z))
            if _reduce_powers(sympy.expand(numerator), t, g, 2) != 0:
                continue
            sign = sign_on_box(candidate, self.box, roots={t: g})
            if sign != 0:
                return sign * candidate.xreplace({t: back})
        return None

    def _single_root(self, inner: set[sympy.Symbol]) -> tuple[sympy.Symbol, sympy.Expr, sympy.Expr] | None:
        """(t, g, product of inner roots) with t^2 = g, when every inner root is a square
        root of a radicand free of roots (and, for a product, proved positive)."""
        keys = {symbol: key for key, symbol in self.symbols.items()}
        radicands = []
        for root in inner:
            n, g = keys[root]
            if n != 2 or g.free_symbols & self.generators:
                return None
            if len(inner) > 1 and sign_on_box(g, self.box, strict=True) != 1:
                return None  # sqrt(a) sqrt(b) = sqrt(a b) needs a, b > 0
            radicands.append(g)
        if len(inner) == 1:
            (root,) = inner
            return root, radicands[0], root
        return sympy.Dummy("t"), sympy.expand(sympy.Mul(*radicands)), sympy.Mul(*inner)

    def reduced(self, expr: sympy.Expr) -> sympy.Expr:
        """expr expanded, each generator's powers reduced below its index (s^n = g); a
        fraction has its numerator and denominator reduced."""
        top, bottom = sympy.fraction(sympy.together(expr))
        if bottom.free_symbols & self.generators:
            return self.reduced(top) / self.reduced(bottom)
        expr = sympy.expand(top)
        for (n, g), symbol in sorted(self.symbols.items(), key=lambda item: -len(item[0][1].free_symbols & self.generators)):
            if expr.has(symbol):
                expr = _reduce_powers(expr, symbol, g, n)
        return expr / sympy.expand(bottom)

    def _generator(self, g: sympy.Expr, n: int) -> sympy.Expr:
        g = sympy.expand(g)
        common = self.index.get(g, n)
        key = (common, g)
        if key not in self.symbols:
            if len(self.symbols) >= MAX_ROOTS:
                raise ValueError("too many distinct roots to reduce")
            self.symbols[key] = sympy.Dummy(f"s{len(self.symbols)}")
        return self.symbols[key] ** (common // n)

    def common_indices(self) -> dict[sympy.Expr, int]:
        """Each radicand met with several indices, with their least common multiple."""
        seen: dict[sympy.Expr, list[int]] = {}
        for n, g in self.symbols:
            seen.setdefault(g, []).append(n)
        return {g: math.lcm(*ns) for g, ns in seen.items() if len(ns) > 1}

    def _split(self, radicand: sympy.Expr, n: int) -> sympy.Expr | None:
        """(N/D)^(1/n) as c^(1/n) * (factors pulled out) * generators, or None when a
        factor's sign is not proved on the box."""
        numerator, denominator = sympy.fraction(sympy.together(radicand))
        content, result = sympy.S.One, sympy.S.One
        rest: list[tuple[sympy.Expr, int]] = []
        for polynomial, side in ((numerator, 1), (denominator, -1)):
            part_content, factors = sympy.factor_list(polynomial)
            content *= part_content**side
            for factor, power in factors:
                sign = sign_on_box(factor, self.box)
                if sign == 0:
                    return None
                content *= sign ** power
                result *= (sign * factor) ** (side * (power // n))
                # One generator per factor (factorisation is unique, a grouping is not):
                # sqrt(1 - q) sqrt(1 + q) and sqrt(1 - q^2) are then the same product.
                rest.append(((sign * factor), side * (power % n)))
        if not (content.is_number and content.is_positive):
            return None
        for factor, power in rest:
            if power != 0:
                result *= self._generator(factor, n) ** power
        return content ** sympy.Rational(1, n) * result

    def relations(self) -> list[tuple[sympy.Symbol, sympy.Expr, int]]:
        return [(s, g, n) for (n, g), s in self.symbols.items()]

    def radicals(self, expr: sympy.Expr) -> sympy.Expr:
        """expr with every generator s (s^n = g) written back as g^(1/n)."""
        back = {s: g ** sympy.Rational(1, n) for s, g, n in self.relations()}
        while expr.free_symbols & self.generators:
            expr = expr.xreplace(back)
        return expr


def _with_generators(expr: sympy.Expr, roots: _Roots) -> sympy.Expr:
    """expr with every P^(p/n) replaced by (its generators)^p, innermost roots first."""
    powers = sorted(_root_powers(expr), key=lambda p: len(_root_powers(p.base)))
    mapping: dict[sympy.Expr, sympy.Expr] = {}
    for power in powers:  # an inner root is replaced before any root containing it
        base = power.base.xreplace(mapping)
        mapping[power] = roots.root(base, int(power.exp.q)) ** int(power.exp.p)
    return expr.xreplace(mapping)


def _in_product(expr: sympy.Expr, roots: list[sympy.Symbol], t: sympy.Symbol) -> sympy.Expr | None:
    """expr with the product of `roots` written as t, or None when the roots do not
    appear only through their product (each monomial has equal powers of all)."""
    if len(roots) == 1:
        return expr.xreplace({roots[0]: t})
    parts = []
    for part in sympy.fraction(sympy.together(expr)):
        total = sympy.S.Zero
        for powers, coefficient in sympy.Poly(sympy.expand(part), *roots).terms():
            if len(set(powers)) != 1:
                return None
            total += coefficient * t ** powers[0]
        parts.append(total)
    return parts[0] / parts[1]


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


def parameter_box(parameters: Sequence) -> dict[sympy.Symbol, tuple[Fraction, Fraction]]:
    """The claim parameters' exact ranges keyed by their symbols (a float end by its repr:
    0.95 means 19/20)."""
    def exact(value: object) -> Fraction:
        if isinstance(value, float):
            return Fraction(repr(value))
        rational = sympy.Rational(value)
        return Fraction(int(rational.p), int(rational.q))

    return {p.symbol: (exact(p.lo), exact(p.hi)) for p in parameters}


def with_generators(expr: sympy.Expr, box: Box | None = None) -> tuple[sympy.Expr, _Roots]:
    """expr with its roots written as generators (steps 1-2 of the module text), and the
    generators (`relations()`, `reduced(e)`, `radicals(e)`)."""
    plain = _without_abs(expr, box or {})
    roots = _Roots(box or {})
    replaced = _with_generators(plain, roots)
    common = roots.common_indices()
    if common:  # again, with one generator per radicand
        roots = _Roots(box or {}, common)
        replaced = _with_generators(plain, roots)
    return replaced, roots


def reduce_radicals(expr: sympy.Expr, box: Box | None = None) -> sympy.Expr:
    """The numerator of expr after every square root is reduced (see the module text).

    `box` maps parameter symbols to exact (lo, hi) ranges; without it no
    radicand is split.  Zero means expr is identically zero on the box;
    anything else is only a remainder.
    """
    replaced, roots = with_generators(expr, box)
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
