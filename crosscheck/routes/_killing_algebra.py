"""Tensor algebra and closed-form helpers of the killing-horizon route.

Everything here works on covariant components and rational functions of the
radial coordinate, because that is where expression swell is cheapest to
control: the metric is inverted block by block, the Killing covector is
differentiated component by component, and every component is cancelled as
soon as it is formed.  No Christoffel symbols are needed (see
`killing_gradient`).

The closed-form helpers keep sympy away from its slow heuristics: a value
that contains a single square root (the usual r_+ = M + sqrt(...)) is
simplified as an element of Q(params)(sqrt(C)), a positive square root is
taken factor by factor and verified numerically, and `simplify` only ever
sees small expressions.
"""

from __future__ import annotations

import functools
from collections.abc import Callable, Mapping, Sequence

import mpmath
import sympy

from crosscheck.spacetimes.evaluation import as_sympy

Point = Mapping[sympy.Symbol, object]

# Largest expression (sympy operation count) handed to `simplify`.
SIMPLIFY_MAX_OPS = 30
# Largest expression handed to the generic `radsimp` fallback.
RADSIMP_MAX_OPS = 3000
# Most L'Hopital steps tried before giving up on a 0/0 limit.
MAX_LHOPITAL = 4


# ---------------------------------------------------------------------------
# inverse metric and the Killing gradient
# ---------------------------------------------------------------------------


def _blocks(g: sympy.MatrixBase) -> list[list[int]]:
    """Index sets of the connected blocks of g's non-zero pattern (sorted)."""
    n = g.shape[0]
    seen: set[int] = set()
    blocks = []
    for start in range(n):
        if start in seen:
            continue
        block, stack = [], [start]
        while stack:
            i = stack.pop()
            if i in seen:
                continue
            seen.add(i)
            block.append(i)
            stack.extend(j for j in range(n) if j not in seen and (g[i, j] != 0 or g[j, i] != 0))
        blocks.append(sorted(block))
    return blocks


def block_inverse(g: sympy.MatrixBase) -> sympy.ImmutableMatrix:
    """g^{mu nu}, inverting only the non-zero blocks (most metrics are diagonal
    or have one t-phi or t-r block), each entry cancelled as a rational function."""
    n = g.shape[0]
    inverse = sympy.zeros(n, n)
    for block in _blocks(g):
        sub = g.extract(block, block)
        if len(block) == 1:
            inverse[block[0], block[0]] = sympy.cancel(1 / sub[0, 0])
            continue
        det = sympy.cancel(sympy.together(sub.det(method="berkowitz")))
        if det == 0:
            raise ValueError("the metric is degenerate (a block has zero determinant)")
        adjugate = sub.adjugate(method="berkowitz")
        for a, i in enumerate(block):
            for b, j in enumerate(block):
                inverse[i, j] = sympy.cancel(sympy.together(adjugate[a, b] / det))
    return sympy.ImmutableMatrix(inverse)


def killing_covector(g: sympy.MatrixBase, axial_index: int | None, omega: sympy.Expr) -> list[sympy.Expr]:
    """chi_mu = g_{mu t} + Omega g_{mu axial} for chi = d/dt + Omega d/d(axial)."""
    n = g.shape[0]
    if axial_index is None:
        return [g[m, 0] for m in range(n)]
    return [g[m, 0] + omega * g[m, axial_index] for m in range(n)]


def killing_gradient(chi: Sequence[sympy.Expr], coords: Sequence[sympy.Symbol]) -> dict[tuple[int, int], sympy.Expr]:
    """Non-zero d_mu chi_nu - d_nu chi_mu for mu < nu.

    For a Killing vector nabla_(mu chi_nu) = 0, and the Christoffel terms of
    nabla_mu chi_nu - nabla_nu chi_mu cancel by symmetry, so
    nabla_mu chi_nu = (1/2)(d_mu chi_nu - d_nu chi_mu): partial derivatives
    of the covector are all that is needed.
    """
    out = {}
    n = len(coords)
    for m in range(n):
        for k in range(m + 1, n):
            comp = sympy.diff(chi[k], coords[m]) - sympy.diff(chi[m], coords[k])
            if comp != 0:
                comp = sympy.cancel(sympy.together(comp))
                if comp != 0:
                    out[(m, k)] = comp
    return out


def kappa_squared_field(dchi: Mapping[tuple[int, int], sympy.Expr], ginv: sympy.MatrixBase) -> sympy.Expr:
    """-(1/2)(nabla_mu chi_nu)(nabla^mu chi^nu) as a field (not yet at the horizon).

    With F = d chi (antisymmetric) and nabla chi = F/2 this is -(1/8) F_mn F^mn
    = -(1/4) sum over m<n, a<b of F_mn F_ab (g^ma g^nb - g^mb g^na).
    """
    total = sympy.Integer(0)
    for (m, n), f_mn in dchi.items():
        for (a, b), f_ab in dchi.items():
            weight = ginv[m, a] * ginv[n, b] - ginv[m, b] * ginv[n, a]
            if weight != 0:
                total += f_mn * f_ab * weight
    return -total / 4


# ---------------------------------------------------------------------------
# numeric evaluation of exact expressions
# ---------------------------------------------------------------------------


def to_mp(value: object) -> mpmath.mpf | mpmath.mpc:
    """An mpmath number at the current precision (exact rationals stay exact to that precision)."""
    if isinstance(value, sympy.Rational):
        return mpmath.mpf(value.p) / value.q
    if isinstance(value, sympy.Basic):
        return mpmath.mpmathify(sympy.N(value, mpmath.mp.dps + 5))
    return mpmath.mpmathify(value)


def numeric_function(expr: sympy.Expr, args: Sequence[sympy.Symbol]) -> Callable[..., object]:
    """lambdify with mpmath: evaluates at whatever precision the caller has set.

    Common subexpressions are shared (cse): the rotating fields are thousands of
    operations with much repetition, and cse makes them several times faster.
    """
    return _compiled(as_sympy(expr), tuple(args))


@functools.lru_cache(maxsize=256)
def _compiled(expr: sympy.Expr, args: tuple[sympy.Symbol, ...]) -> Callable[..., object]:
    """numeric_function, compiled once per (expression, arguments): every numeric point and
    every zero test of the same expression reuses it."""
    return sympy.lambdify(list(args), expr, modules="mpmath", cse=sympy.count_ops(expr) > 200)


def value_at(expr: sympy.Expr, point: Point, dps: int) -> mpmath.mpf | mpmath.mpc:
    """expr at point (symbol -> number) computed with mpmath at dps digits."""
    expr = as_sympy(expr)
    symbols = sorted(expr.free_symbols, key=str)
    missing = [s for s in symbols if s not in point]
    if missing:
        raise ValueError(f"no value for {', '.join(map(str, missing))} in {expr}")
    with mpmath.workdps(dps):
        return numeric_function(expr, symbols)(*(to_mp(point[s]) for s in symbols))


def vanishes(expr: sympy.Expr, point: Point) -> bool:
    """Whether an exact expression is zero at point, by watching it shrink with precision.

    An exact zero evaluates to rounding noise that drops by ~10^-40 from 40 to
    80 digits; a genuine value stays put.  No scale has to be guessed.
    """
    return zero_flags(expr, [point])[0]


def zero_flags(expr: sympy.Expr, points: Sequence[Point]) -> list[bool]:
    """`vanishes` at each point, compiling expr once."""
    expr = as_sympy(expr)
    if expr == 0:
        return [True] * len(points)
    symbols = sorted(expr.free_symbols, key=str)
    fn = numeric_function(expr, symbols)

    def size(point, dps):
        missing = [s for s in symbols if s not in point]
        if missing:
            raise ValueError(f"no value for {', '.join(map(str, missing))} in {expr}")
        with mpmath.workdps(dps):
            return abs(fn(*(to_mp(point[s]) for s in symbols)))

    flags = []
    for point in points:
        low, high = size(point, 40), size(point, 80)
        if low == 0 and high != 0:
            low, high = high, size(point, 120)
        flags.append(bool(high == 0 or high <= mpmath.mpf(10) ** -25 * low))
    return flags


# ---------------------------------------------------------------------------
# the limit at the horizon
# ---------------------------------------------------------------------------


def horizon_limit(
    field: sympy.Expr,
    r: sympy.Symbol,
    r_h: sympy.Expr,
    constants: Mapping[sympy.Symbol, sympy.Expr],
    point: Point,
    checks: Sequence[Point] = (),
) -> tuple[sympy.Expr, int]:
    """lim_{r -> r_h} of a field, exactly: (value, number of L'Hopital steps).

    The field is put over a common denominator in r; when the denominator
    vanishes at r_h (tested at the representative point), numerator and
    denominator are differentiated in r and the test repeated.  `constants`
    (e.g. Omega_H) are substituted after differentiation; `checks` go to
    `simplify_radical`.
    """
    num, den = sympy.fraction(sympy.cancel(sympy.together(field)))
    for steps in range(MAX_LHOPITAL + 1):
        den_h = den.subs(r, r_h).xreplace(constants)
        num_h = num.subs(r, r_h).xreplace(constants)
        if not vanishes(den_h, point):
            return simplify_radical(num_h / den_h, checks), steps
        if not vanishes(num_h, point):
            raise ValueError("kappa^2 diverges at the horizon: the field has a pole there (wrong horizon or Omega_H?)")
        num, den = sympy.diff(num, r), sympy.diff(den, r)
    raise ValueError(f"kappa^2 at the horizon: still 0/0 after {MAX_LHOPITAL} L'Hopital steps")


# ---------------------------------------------------------------------------
# closed-form simplification
# ---------------------------------------------------------------------------


def _radicals(expr: sympy.Expr) -> set[sympy.Expr]:
    """Bases C of the half-integer powers C^(k/2) in expr (numeric bases such as 2 excluded)."""
    return {
        p.base
        for p in expr.atoms(sympy.Pow)
        if isinstance(p.exp, sympy.Rational) and p.exp.q == 2 and not p.base.is_Number
    }


def _quadratic_candidates(expr: sympy.Expr, c: sympy.Expr) -> list[tuple[sympy.Expr, sympy.Expr]] | None:
    """Forms (numerator, denominator) of expr in Q(params)(sqrt(c)), or None.

    Works in the polynomial ring of the parameters: numerator a + b u and
    denominator p + q u (u = sqrt(c)) are reduced modulo u^2 - c and stripped
    of their common polynomial factor -- much cheaper than radsimp/cancel.
    Three candidates: as reduced, the denominator rationalised, and the
    numerator rationalised.  Only the first is always safe: rationalising
    multiplies by a conjugate, whose zeros are spurious (dividing by
    M^2 - sqrt(M^2 - Q^2)^2 = Q^2 breaks the form at Q = 0).
    """
    u = sympy.Dummy("u", positive=True)
    num, den = sympy.fraction(sympy.together(expr.subs(sympy.sqrt(c), u)))
    if _radicals(num) or _radicals(den):
        return None
    try:
        (p_num, p_den, p_mod), opt = sympy.parallel_poly_from_expr([num, den, u**2 - c], u)
    except (sympy.PolynomialError, sympy.GeneratorsNeeded):
        return None
    dom = opt.domain
    if not (dom.is_PolynomialRing or dom.is_ZZ or dom.is_QQ):
        return None

    def parts(poly):  # (coefficient of u^0, coefficient of u^1) after reduction
        reduced = poly.rem(p_mod)
        return [dom.convert(reduced.coeff_monomial(u**k)) for k in (0, 1)]

    def form(top, bottom):  # strip the common factor, back to sympy
        common = functools.reduce(dom.gcd, top + bottom)
        top, bottom = ([dom.to_sympy(dom.exquo(x, common)) for x in xs] for xs in (top, bottom))
        root = sympy.sqrt(c)
        return top[0] + top[1] * root, bottom[0] + bottom[1] * root

    (a, b), (p, q) = parts(p_num), parts(p_den)
    cc = dom.from_sympy(c)
    if not (p or q):
        return None
    out = [form([a, b], [p, q])]
    # (a + b u)/(p + q u) = (a + b u)(p - q u)/(p^2 - q^2 c) = (a^2 - b^2 c)/((a - b u)(p + q u))
    if q:
        out.append(form([a * p - b * q * cc, b * p - a * q], [p * p - q * q * cc, dom.zero]))
    if b:
        out.append(form([a * a - b * b * cc, dom.zero], [a * p - b * q * cc, a * q - b * p]))
    return out


def _complicated(expr: sympy.Expr) -> bool:
    """Cardano-type closed forms (I, cube roots) or huge ones: exact manipulation would hang."""
    if expr.has(sympy.I) or sympy.count_ops(expr) > RADSIMP_MAX_OPS:
        return True
    return any(isinstance(p.exp, sympy.Rational) and p.exp.q > 2 for p in expr.atoms(sympy.Pow))


def merge_radicals(expr: sympy.Expr) -> sympy.Expr:
    """sqrt(M - Q) sqrt(M + Q) -> sqrt(M^2 - Q^2) where the assumptions allow it.

    Root finders may return split radicals; one radical keeps the value in a
    quadratic extension, where `simplify_radical` is fast.
    """
    if len(_radicals(expr)) < 2:
        return expr
    merged = sympy.powsimp(expr, combine="base")
    return merged if len(_radicals(merged)) < len(_radicals(expr)) else expr


def simplify_radical(expr: sympy.Expr, points: Sequence[Point] = ()) -> sympy.Expr:
    """Cheap canonical form of a closed-form value.

    With one non-numeric square root sqrt(C) (the usual r_+ = M + sqrt(...))
    the value is handled in the quadratic extension (`_quadratic_candidates`);
    a rationalised candidate replaces the always-safe reduced form only when
    it is shorter and its denominator vanishes at none of `points` where the
    reduced one does not.  With several radicals only `cancel` is tried
    (radsimp and factor can take minutes there); Cardano-type forms are
    returned as they are.  Small results are tried with `simplify` and kept
    only if shorter.
    """
    expr = as_sympy(expr)
    if _complicated(expr):
        return expr
    radicals = _radicals(expr)
    if len(radicals) > 1:
        expr = merge_radicals(expr)
        radicals = _radicals(expr)
    if len(radicals) == 1:
        candidates = _quadratic_candidates(expr, next(iter(radicals)))
        if candidates:
            return _maybe_simplify(_choose(candidates, points))
    result = sympy.cancel(sympy.together(expr))
    if not radicals and sympy.count_ops(result) <= RADSIMP_MAX_OPS:
        result = sympy.factor(result)
    return _maybe_simplify(result)


def _choose(candidates: list[tuple[sympy.Expr, sympy.Expr]], points: Sequence[Point]) -> sympy.Expr:
    """The shortest safe candidate (the first, reduced, form is the safe default)."""
    safe_num, safe_den = candidates[0]
    best = sympy.factor(safe_num) / sympy.factor(safe_den)
    safe_zeros = None
    for num, den in candidates[1:]:
        cand = sympy.factor(num) / sympy.factor(den)
        if not points or sympy.count_ops(cand) >= sympy.count_ops(best):
            continue
        try:
            safe_zeros = zero_flags(safe_den, points) if safe_zeros is None else safe_zeros
            spurious = any(z and not s for z, s in zip(zero_flags(den, points), safe_zeros))
        except (ValueError, TypeError, ZeroDivisionError):
            spurious = True
        if not spurious:
            best = cand
    return best


def _maybe_simplify(expr: sympy.Expr) -> sympy.Expr:
    """`simplify` only for small expressions, kept only when it is shorter."""
    if sympy.count_ops(expr) > SIMPLIFY_MAX_OPS:
        return expr
    candidate = sympy.simplify(expr)
    return candidate if sympy.count_ops(candidate) < sympy.count_ops(expr) else expr


def _denest(base: sympy.Expr, point: Point) -> sympy.Expr | None:
    """sqrt(A + B sqrt(C)) = sqrt((A + D)/2) + sign(B) sqrt((A - D)/2) when
    A^2 - B^2 C = D^2 is a perfect square (sympy's sqrtdenest needs numbers).

    Signs are fixed at `point`; the caller verifies the result numerically.
    """
    radicals = _radicals(base)
    if len(radicals) != 1:
        return None
    (c,) = radicals
    u = sympy.Dummy("u")
    poly = sympy.expand(base.subs(sympy.sqrt(c), u))
    if _radicals(poly) or not poly.is_polynomial(u) or sympy.degree(poly, u) != 1:
        return None
    a, b = poly.coeff(u, 0), poly.coeff(u, 1)
    d = _square_root_of_square(sympy.factor(sympy.expand(a**2 - b**2 * c)))
    if d is None:
        return None
    d = _nonnegative(d, point)
    parts = []
    for half in ((a + d) / 2, (a - d) / 2):
        half = sympy.factor(sympy.expand(half))
        root = _square_root_of_square(half)
        parts.append(None if root is None else _nonnegative(root, point))
    if parts == [None, None]:
        return None
    parts = [sympy.sqrt(sympy.factor_terms(sympy.expand(h))) if p is None else p
             for h, p in zip(((a + d) / 2, (a - d) / 2), parts)]
    return parts[0] + parts[1] if mpmath.re(value_at(b, point, 50)) >= 0 else parts[0] - parts[1]


def _nonnegative(expr: sympy.Expr, point: Point) -> sympy.Expr:
    """expr or -expr, whichever is >= 0 at point."""
    return -expr if mpmath.re(value_at(expr, point, 50)) < 0 else expr


def _square_root_of_square(expr: sympy.Expr) -> sympy.Expr | None:
    """X with X^2 = expr when the factored expr is visibly a square (signs unchecked)."""
    coeff, factors = sympy.Integer(1), []
    for part in sympy.Mul.make_args(expr):
        base, exp = part.as_base_exp()
        if part.is_Number:
            coeff *= part
        elif exp.is_Integer and exp % 2 == 0:
            factors.append(base ** (exp // 2))
        else:
            return None
    if not (coeff.is_Rational and coeff >= 0):
        return None
    root = sympy.sqrt(coeff)
    if not root.is_Rational:
        return None
    return root * sympy.Mul(*factors)


def positive_sqrt(expr: sympy.Expr, points: Sequence[Point]) -> sympy.Expr:
    """sqrt(expr) >= 0 in a readable form, verified at `points`.

    expr is factored; even powers are pulled out, factors negative at the
    first point are flipped in pairs, and nested roots of the form
    sqrt(A + B sqrt(C)) are denested.  The candidate is accepted only when
    it is >= 0 and squares to expr at every point where expr >= 0 (50
    digits); otherwise the plain principal root is returned.
    """
    expr = as_sympy(expr)
    if expr == 0:
        return sympy.Integer(0)
    plain = sympy.sqrt(expr)
    if _complicated(expr):
        return plain
    try:
        candidate = _sqrt_by_factors(sympy.factor(expr), points[0])
    except (ValueError, TypeError, ZeroDivisionError):
        return plain
    if candidate is None:
        return plain
    with mpmath.workdps(50):
        tol = mpmath.mpf(10) ** -35
        for pt in points:
            try:
                w = value_at(expr, pt, 50)
                if abs(mpmath.im(w)) > tol * abs(w) or mpmath.re(w) < 0:
                    continue  # outside the physical region: nothing to compare
                v = value_at(candidate, pt, 50)
            except (ValueError, TypeError, ZeroDivisionError):
                return plain
            if abs(mpmath.im(v)) > tol * abs(v) or mpmath.re(v) < 0 or abs(v * v - w) > tol * max(abs(w), tol):
                return plain
    return candidate


def _sqrt_by_factors(expr: sympy.Expr, point: Point) -> sympy.Expr | None:
    """sqrt of a factored expression: even powers halve, radical factors denest,
    the remaining odd polynomial factors share one expanded root (so that
    sqrt(M^2 - Q^2) stays one radical, as in r_h, instead of two)."""
    out, sign, plain = sympy.Integer(1), 1, sympy.Integer(1)
    for part in sympy.Mul.make_args(expr):
        if part.is_Rational:
            out, sign = out * sympy.sqrt(abs(part)), sign * (1 if part > 0 else -1)
            continue
        base, exp = part.as_base_exp()
        if not exp.is_Rational:
            return None
        if exp.is_Integer and exp % 2 == 0:
            out *= base ** (exp // 2)
            continue
        if mpmath.re(value_at(base, point, 50)) < 0:
            base, sign = -base, sign * (-1) ** int(exp.p)
        root = _denest(base, point) if exp.is_Integer else None
        if root is not None:
            out *= root**exp
        elif exp.is_Integer:
            out *= base ** ((exp - 1) // 2)
            plain *= base
        else:
            out *= sympy.sqrt(base) ** exp
    if sign < 0:
        return None
    return _nonnegative(out * sympy.sqrt(sympy.expand(plain)), point)
