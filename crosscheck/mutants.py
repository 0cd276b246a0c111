"""Corrupted variants of a claim, for auditing how strong its checks are.

A mutant is the claim with one typical slip injected into its right-hand
side: a constant factor (2, pi, 4 pi and their inverses), a changed power of
a parameter, a flipped sign, two parameters swapped; or the claimed value
kept while the spacetime's horizon choice is moved to another root of the
Killing norm.  A check that still confirms a mutant is too weak to notice
that slip.

Mutated expressions are built with sympy operations on the claim's parsed
right-hand side, never from text.  Observable placeholders such as T(M) are
masked while parameters are substituted, so that `M -> M^2` changes the
formula and not the argument list that stands for "the route's T".

A mutant that equals the original (swapping the parameters of a symmetric
expression, say) is marked `equivalent`: no check could catch it.
"""

from __future__ import annotations

import dataclasses
import itertools
import random
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from fractions import Fraction

import mpmath
import sympy
from sympy.core.function import AppliedUndef

from crosscheck import compare
from crosscheck.claim import Claim
from crosscheck.observables import SCALAR_OBSERVABLES
from crosscheck.spacetimes.base import HorizonSpec
from crosscheck.timebox import OutOfTime, run_limited

# Constant factors a derivation typically loses or gains (a doubled exponent,
# a 2 pi in the period, the 4 of the area law with a pi of the sphere).
FACTORS: tuple[tuple[str, sympy.Expr], ...] = (
    ("x 2", sympy.Integer(2)),
    ("x 1/2", sympy.Rational(1, 2)),
    ("x pi", sympy.pi),
    ("x 1/pi", 1 / sympy.pi),
    ("x 4 pi", 4 * sympy.pi),
    ("x 1/(4 pi)", 1 / (4 * sympy.pi)),
)
EQUIVALENCE_DIGITS = 30
EQUIVALENCE_POINTS = 4
# Relative difference below which two values at 30 digits count as equal.
_EQUAL = mpmath.mpf(10) ** -24
# Digits for locating horizons when looking for another one.
_ROOT_DIGITS = 20
# Seconds sympy may spend on one exact question (is the ratio a power law? is a - b = 0?).
RATIO_SECONDS = 1.0


@dataclass(frozen=True)
class Expected:
    """What a diagnosis that names the injected slip says.

    kind: 'factor' (with `factor`, the text diagnose prints), 'sign',
    'power' (with `exponents`, name -> exponent text, and `factor` the
    constant when it is not 1) or 'horizon'.
    """

    kind: str
    factor: str | None = None
    exponents: tuple[tuple[str, str], ...] = ()


@dataclass(frozen=True)
class Mutant:
    """One corrupted claim: `label` names the slip ("x 2", "M -> M^2", "swap M, Q")."""

    label: str
    kind: str  # 'factor', 'sign', 'power', 'swap' or 'horizon'
    claim: Claim
    expected: Expected | None = None
    equivalent: bool = False
    equivalence: str = ""  # how the equivalence was found ("expand", "30-digit evaluation at 4 points")


def derive_mutants(claim: Claim, seed: int = 0) -> list[Mutant]:
    """Every mutant of the claim: right-hand-side slips, then other horizons.

    A claim without an equation (a spectrum-only detector claim) has none.
    """
    if not claim.text:
        return []
    mutants = [_with_equivalence(claim, m, seed) for m in rhs_mutants(claim)]
    return mutants + horizon_mutants(claim, seed)


# -- right-hand-side mutants ----------------------------------------------------------------------
def rhs_mutants(claim: Claim) -> list[Mutant]:
    """Factor, sign, power and swap mutants of the claim's right-hand side."""
    masked, _ = _mask(claim.rhs)
    found: list[Mutant] = []

    def add(label: str, kind: str, change: Callable[[sympy.Expr], sympy.Expr], expected: Expected | None) -> None:
        found.append(Mutant(label, kind, mutate_claim(claim, change), expected))

    for label, factor in FACTORS:
        add(label, "factor", lambda e, f=factor: f * e, Expected("factor", factor=sympy.sstr(factor)))
    if masked != 0:
        add("sign flipped", "sign", lambda e: -e, Expected("sign", factor="-1"))
    present = [s for s in claim.symbols if s in masked.free_symbols]
    for p in present:
        for label, change in _power_changes(masked, p):
            add(label, "power", change, _expected_ratio(masked, change(masked), claim.symbols))
    for p, q in itertools.combinations(present, 2):
        change = _substitution({p: q, q: p})
        add(f"swap {p}, {q}", "swap", change, _expected_ratio(masked, change(masked), claim.symbols))
    return found


def _expected_ratio(original: sympy.Expr, mutated: sympy.Expr, symbols: Sequence[sympy.Symbol]) -> Expected | None:
    """The diagnosis a mutant should get when mutant/original is c * prod p^k; None when it is
    not (or sympy cannot tell within RATIO_SECONDS)."""
    try:
        return run_limited(lambda: _power_law(original, mutated, symbols), RATIO_SECONDS)
    except OutOfTime:
        return None


def _power_changes(masked: sympy.Expr, p: sympy.Symbol) -> list[tuple[str, Callable[[sympy.Expr], sympy.Expr]]]:
    """One more power of p (p^k -> p^(k+1) when p enters as a factor p^k, else p -> p^2), and p -> 1/p."""
    k = _exponent(masked, p)
    if k is not None and k != 0:
        raised = (f"{p}^{_text(k)} -> {p}^{_text(k + 1)}", lambda e, p=p: p * e)
    else:
        raised = (f"{p} -> {p}^2", _substitution({p: p**2}))
    return [raised, (f"{p} -> 1/{p}", _substitution({p: 1 / p}))]


def _exponent(expr: sympy.Expr, p: sympy.Symbol) -> sympy.Rational | None:
    """k when expr is (something free of p) * p^k as written, else None (structural: cheap)."""
    _, dependent = expr.as_independent(p, as_Add=False)
    if not dependent.has(p):
        return sympy.Integer(0)
    if dependent == p:
        return sympy.Integer(1)
    if dependent.is_Pow and dependent.base == p and dependent.exp.is_Rational:
        return dependent.exp
    return None


def _text(k: sympy.Rational) -> str:
    return str(k) if k.q == 1 else f"({k})"


def _substitution(mapping: dict) -> Callable[[sympy.Expr], sympy.Expr]:
    """Simultaneous replacement (a swap stays a swap) in an expression whose placeholders are masked."""

    def change(expr: sympy.Expr) -> sympy.Expr:
        masked, unmask = _mask(expr)
        return unmask(masked.xreplace(mapping))

    return change


def _power_law(original: sympy.Expr, mutated: sympy.Expr, symbols: Sequence[sympy.Symbol]) -> Expected | None:
    if original == 0 or not symbols:
        return None
    positive = {s: sympy.Symbol(s.name, positive=True) for s in symbols}
    ratio = sympy.expand_power_base(sympy.cancel((mutated / original).xreplace(positive)), force=True)
    if ratio.free_symbols - set(positive.values()):
        return None
    exponents = {}
    for s in positive.values():
        k = _exponent(ratio, s)
        if k is None:
            return None
        if k != 0:
            exponents[s.name] = k
    constant = sympy.cancel(ratio / sympy.Mul(*(sympy.Symbol(n, positive=True) ** k for n, k in exponents.items())))
    if not constant.is_number:
        return None
    if not exponents:  # a constant ratio: a factor (or sign) slip after all
        if constant == -1:
            return Expected("sign", factor="-1")
        return None if constant == 1 else Expected("factor", factor=sympy.sstr(constant))
    texts = tuple((n, _fraction_text(k)) for n, k in exponents.items())
    return Expected("power", factor=None if constant == 1 else sympy.sstr(constant), exponents=texts)


def _fraction_text(k: sympy.Rational) -> str:
    return str(k.p) if k.q == 1 else f"{k.p}/{k.q}"


def mutate_claim(claim: Claim, change: Callable[[sympy.Expr], sympy.Expr]) -> Claim:
    """The claim with `change` applied to its right-hand side (and to the SI dimension sides)."""
    masked, unmask = _mask(claim.rhs)
    rhs = unmask(change(masked))
    sides = claim.dimension_sides
    if sides is not None:
        masked_side, unmask_side = _mask(sides[1])
        sides = (sides[0], unmask_side(change(masked_side)))
    lhs_text = claim.text.split("=", 1)[0].rstrip()
    return dataclasses.replace(claim, rhs=rhs, dimension_sides=sides, text=f"{lhs_text} = {sympy.sstr(rhs)}")


def _mask(expr: sympy.Expr) -> tuple[sympy.Expr, Callable[[sympy.Expr], sympy.Expr]]:
    """expr with each scalar-observable placeholder T(M, ...) replaced by a dummy, and the way back."""
    placeholders = [a for a in expr.atoms(AppliedUndef) if a.func.__name__ in SCALAR_OBSERVABLES]
    forward = {a: sympy.Dummy(a.func.__name__) for a in placeholders}
    back = {d: a for a, d in forward.items()}
    return expr.xreplace(forward), (lambda e: e.xreplace(back))


# -- equivalence ----------------------------------------------------------------------------------
def _with_equivalence(claim: Claim, mutant: Mutant, seed: int) -> Mutant:
    if claim.agreement == "scaling" and mutant.kind in ("factor", "sign"):
        return dataclasses.replace(mutant, equivalent=True, equivalence="the claim holds only up to a constant")
    how = equivalence(claim.rhs, mutant.claim.rhs, claim, seed)
    return dataclasses.replace(mutant, equivalent=how is not None, equivalence=how or "")


def equivalence(original: sympy.Expr, mutated: sympy.Expr, claim: Claim, seed: int = 0) -> str | None:
    """How `mutated` was found equal to `original` over the claim's parameter box, or None.

    expand(a - b) == 0 first (cheap, exact); else values at EQUIVALENCE_POINTS points at
    30 digits, every observable placeholder standing for a seeded random number (the
    same one on both sides, so only the formula around it matters).
    """
    try:
        if run_limited(lambda: sympy.expand(original - mutated) == 0, RATIO_SECONDS):
            return "expand(original - mutant) = 0"
    except OutOfTime:
        pass
    rng = random.Random(seed)
    stand_ins: dict[sympy.Expr, list[sympy.Rational]] = {}
    points = compare.sample_points(claim.parameters, EQUIVALENCE_POINTS, seed + 1) if claim.parameters else [{}]
    for index, point in enumerate(points):
        values = dict(point)
        for expr in (original, mutated):
            for applied in expr.atoms(AppliedUndef):
                draws = stand_ins.setdefault(applied, [])
                while len(draws) <= index:
                    draws.append(sympy.Rational(rng.randint(1000, 9999), 1000))
        a = _value(original, values, stand_ins, index)
        b = _value(mutated, values, stand_ins, index)
        if a is None or b is None or abs(a - b) > _EQUAL * max(abs(a), abs(b)):
            return None
    return f"{EQUIVALENCE_DIGITS}-digit evaluation at {len(points)} points"


def _value(expr: sympy.Expr, point: dict, stand_ins: dict, index: int) -> mpmath.mpc | None:
    """expr at the point (placeholders replaced outermost first), or None when it has no value."""
    replaced = expr
    for applied in sorted(expr.atoms(AppliedUndef), key=sympy.count_ops, reverse=True):
        replaced = replaced.xreplace({applied: stand_ins[applied][index]})
    try:
        value = sympy.N(replaced.xreplace(point), EQUIVALENCE_DIGITS)
        with mpmath.workdps(EQUIVALENCE_DIGITS + 5):
            result = mpmath.mpc(complex(value)) if not value.is_real else mpmath.mpf(sympy.Float(value, EQUIVALENCE_DIGITS + 5)._mpf_)
    except (TypeError, ValueError, ArithmeticError, AttributeError):
        return None
    return result if mpmath.isfinite(result) else None


# -- other horizons -------------------------------------------------------------------------------
def horizon_mutants(claim: Claim, seed: int = 0) -> list[Mutant]:
    """The claim with its claimed value kept and the horizon moved to each other positive root.

    The roots of the (equatorial) Killing norm are found numerically at three sample
    points; a root selector 'k-th positive root' is used only when every point has the
    same number of roots and the claim's horizon is the same one of them, so the mutant
    means the same horizon over the whole parameter box.
    """
    spacetime = claim.spacetime
    if spacetime is None or claim.detector is not None:
        return []
    try:
        index, count = _horizon_index(claim, seed)
    except Exception:  # noqa: BLE001 - no horizon, no roots, a metric the root finder cannot handle
        return []
    if index is None:
        return []
    mutants = []
    for other in range(count):
        if other == index:
            continue
        where = "inner" if other < index else "outer"
        changed = dataclasses.replace(spacetime, horizon=HorizonSpec(root=other + 1))
        mutants.append(Mutant(f"other horizon ({where})", "horizon", dataclasses.replace(claim, spacetime=changed),
                              Expected("horizon")))
    return mutants


def _horizon_index(claim: Claim, seed: int) -> tuple[int | None, int]:
    """(index of the claim's horizon among the positive roots, number of roots), the same at every point."""
    from crosscheck.spacetimes.horizon import equatorial, horizon_radius_numeric, killing_norm, positive_roots_numeric

    spacetime = claim.spacetime
    metric = spacetime.metric
    norm = equatorial(killing_norm(metric), metric)
    found: set[tuple[int | None, int]] = set()
    for point in compare.sample_points(claim.parameters, 3, seed) if claim.parameters else [{}]:
        roots = positive_roots_numeric(norm, metric.radial, point, _ROOT_DIGITS)
        current = horizon_radius_numeric(spacetime, point, _ROOT_DIGITS)
        matches = [i for i, r in enumerate(roots) if abs(r.value - current.value) <= 1e-8 * abs(current.value) + 10 * (r.error + current.error)]
        found.add((matches[0] if len(matches) == 1 else None, len(roots)))
    if len(found) != 1:
        return None, 0
    return found.pop()


def fraction(text: str) -> Fraction | None:
    """An exponent text of our own ('2', '-3/2') as a Fraction, or None."""
    try:
        return Fraction(text)
    except (ValueError, ZeroDivisionError):
        return None
