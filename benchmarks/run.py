"""Benchmarks: ratios against baselines run in the same process (never timed tests).

1. The killing-horizon route's symbolic side on Kerr-Newman against a plain
   by-hand sympy computation of kappa^2 = -(1/2)(nabla_mu chi_nu)(nabla^mu chi^nu)
   with Christoffel symbols (the textbook way, no shortcuts).
2. Wall time of `crosscheck check` on Schwarzschild, interpreter start and
   imports included.

Usage: python benchmarks/run.py [--skip-baseline]
"""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
import time

import sympy

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))

from crosscheck.routes.base import Problem
from crosscheck.routes.killing_horizon import KillingHorizonRoute
from crosscheck.spacetimes import build_spacetime
from crosscheck.spacetimes.base import R_COORD, THETA, Normalization, Spacetime


def kerr_newman_problem() -> tuple[Problem, dict]:
    M = sympy.Symbol("M", positive=True)
    a = sympy.Symbol("a", nonnegative=True)
    Q = sympy.Symbol("Q", nonnegative=True)
    metric, horizon, _ = build_spacetime("kerr-newman", {"M": M, "a": a, "Q": Q}, {}, "geometric")
    spacetime = Spacetime(metric, horizon, Normalization(), "kerr-newman")
    ranges = {M: (sympy.Integer(1), sympy.Integer(2)), a: (0, sympy.Rational(1, 2)), Q: (0, sympy.Rational(1, 2))}
    problem = Problem(spacetime, None, (M, a, Q), frozenset({"kappa"}), ranges)
    return problem, {"M": M, "a": a, "Q": Q, "metric": metric, "horizon": horizon}


def by_hand_kappa_squared(metric, r_h, omega_h) -> sympy.Expr:
    """The textbook computation: Christoffels, covariant derivative, contraction, limit.

    Each Christoffel symbol is put over a common denominator (`cancel`), the
    contraction is taken on the equator and simplified, and the horizon value
    is the limit r -> r_h -- what one writes by hand in a notebook.
    """
    x = metric.coords
    g = sympy.Matrix(metric.g)
    g_inv = g.inv().applyfunc(sympy.cancel)
    n = len(x)
    gamma = [[[sympy.cancel(sum(g_inv[l, s] * (sympy.diff(g[s, m], x[k]) + sympy.diff(g[s, k], x[m])
                                               - sympy.diff(g[k, m], x[s])) for s in range(n)) / 2)
               for m in range(n)] for k in range(n)] for l in range(n)]
    chi_up = [1, 0, 0, omega_h]
    chi = [sum(g[m, k] * chi_up[k] for k in range(n)) for m in range(n)]
    nabla = [[sympy.diff(chi[nu], x[mu]) - sum(gamma[l][mu][nu] * chi[l] for l in range(n)) for nu in range(n)]
             for mu in range(n)]
    total = sum(g_inv[m, a] * g_inv[nu, b] * nabla[m][nu] * nabla[a][b]
                for m in range(n) for nu in range(n) for a in range(n) for b in range(n))
    field = sympy.cancel((-total / 2).subs(THETA, sympy.pi / 2))
    return sympy.simplify(field.subs(R_COORD, r_h))


def time_call(function) -> tuple[float, object]:
    started = time.perf_counter()
    value = function()
    return time.perf_counter() - started, value


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("--skip-baseline", action="store_true", help="only time our route")
    args = parser.parse_args()

    problem, parts = kerr_newman_problem()
    ours, result = time_call(lambda: KillingHorizonRoute().symbolic(problem))
    print(f"killing-horizon symbolic, Kerr-Newman: {ours:.2f} s  kappa = {result.values['kappa']}")
    if not args.skip_baseline:
        M, a, Q = parts["M"], parts["a"], parts["Q"]
        r_h = M + sympy.sqrt(M**2 - a**2 - Q**2)
        omega_h = a / (r_h**2 + a**2)
        baseline, value = time_call(lambda: by_hand_kappa_squared(parts["metric"], r_h, omega_h))
        point = {M: sympy.Rational(3, 2), a: sympy.Rational(1, 3), Q: sympy.Rational(1, 4)}
        agree = abs(sympy.N(sympy.sqrt(value).subs(point) - result.values["kappa"].subs(point), 30)) < 1e-25
        print(f"by-hand Christoffel computation:     {baseline:.2f} s  (same kappa at a test point: {agree})")
        print(f"speed-up: {baseline / ours:.1f}x")

    command = [sys.executable, "-m", "crosscheck", "check", "T = 1/(8*pi*M)", "--spacetime", "schwarzschild"]
    wall, completed = time_call(lambda: subprocess.run(command, capture_output=True, text=True))
    first_line = completed.stdout.splitlines()[0] if completed.stdout else completed.stderr
    print(f"`crosscheck check` on Schwarzschild, wall time with start-up: {wall:.2f} s ({first_line.split()[0]})")
    interpreter, _ = time_call(lambda: subprocess.run([sys.executable, "-c", "pass"]))
    print(f"  (bare interpreter start: {interpreter:.2f} s; ratio {wall / interpreter:.1f}x)")


if __name__ == "__main__":
    main()
