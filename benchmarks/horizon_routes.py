"""Per route and per parameter point: time and achieved accuracy at 15 and 30 digits.

For every registered horizon route and every built-in claim of the form
`T = <closed form>` or `kappa = <closed form>` that the route covers, the
route's numeric side is run at each of the claim's sample points at 15 and at
30 digits.  The achieved accuracy is the relative difference from the claim's
closed form evaluated at 50 digits (the built-in claims are published values,
so they are the outside reference here), printed beside the route's own error
estimate.  Times are per point; the summary gives the slowest point per route
and the ratio of 30-digit to 15-digit cost.

Usage: python benchmarks/horizon_routes.py [CLAIMS_DIR] [--samples N] [--routes a,b]
(the library runs 5 samples per claim; the default here is 3)
"""

from __future__ import annotations

import argparse
import os
import sys
import time
from collections import defaultdict

import mpmath
import sympy

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))

from crosscheck.claimfile import load_paths
from crosscheck.compare import mp_point, sample_points
from crosscheck.evaluate import NumericEvaluator
from crosscheck.observables import observable_function
from crosscheck.routes.base import claim_kind, route_scope
from crosscheck.routes.registry import load_routes
from crosscheck.runner import problem_for

OBSERVABLES = ("T", "kappa")


def simple_claims(directory: str):
    """Claims `T = expr` / `kappa = expr` (geometric units) with their observable name."""
    for claim in load_paths([directory]).claims:
        if claim.units != "geometric" or claim.spacetime is None:
            continue
        for name in OBSERVABLES:
            placeholder = observable_function(name)(*claim.symbols)
            if claim.lhs == placeholder and not claim.rhs.atoms(sympy.core.function.AppliedUndef):
                yield claim, name


def measure(route, problem, claim, name, point, digits):
    """(seconds, relative difference from the claim, route's own relative error)."""
    with mpmath.workdps(digits + 10):
        numeric_point = mp_point(point)
        started = time.process_time()  # CPU: the routes are single-threaded, and load elsewhere does not count
        result = route.numeric(problem, numeric_point, digits)
        seconds = time.process_time() - started
    value = result.values[name]
    with mpmath.workdps(60):
        reference = NumericEvaluator(lambda p: result, 50).evaluate(claim.rhs, mp_point(point)).value
        difference = abs(value.value - reference) / abs(reference) if reference != 0 else abs(value.value)
        own = value.error / abs(value.value) if value.value != 0 else value.error
    return seconds, float(difference), float(own)


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("claims", nargs="?", default="claims")
    parser.add_argument("--samples", type=int, default=3)
    parser.add_argument("--routes", default="")
    args = parser.parse_args()
    routes, _ = load_routes()
    wanted = [n for n in args.routes.split(",") if n] or sorted(routes)
    slowest: dict[tuple[str, int], float] = defaultdict(float)
    warm: dict[tuple[str, int], float] = defaultdict(float)  # points after a claim's first
    mean: dict[tuple[str, int], float] = defaultdict(float)  # the worst claim's mean per point
    totals: dict[tuple[str, int], float] = defaultdict(float)
    print(f"{'route':20} {'claim':48} {'digits':>6} {'s/point':>8} {'rel.diff':>9} {'own err':>9}")
    for claim, name in simple_claims(args.claims):
        problem = problem_for(claim)
        for route_name in wanted:
            route = routes[route_name]
            if route.grade != "exact" or claim_kind(problem) not in route_scope(route):
                continue
            if name not in route.observables or route.applies(problem):
                continue
            for digits in (15, 30):
                times = []
                for point in sample_points(claim.parameters, args.samples, 0):
                    try:
                        seconds, difference, own = measure(route, problem, claim, name, point, digits)
                    except Exception as exc:  # a benchmark reports failures, it does not stop
                        print(f"{route_name:20} {claim.id[:48]:48} {digits:6d}   failed: {type(exc).__name__}: {exc}")
                        break
                    slowest[route_name, digits] = max(slowest[route_name, digits], seconds)
                    if times:
                        warm[route_name, digits] = max(warm[route_name, digits], seconds)
                    times.append(seconds)
                    totals[route_name, digits] += seconds
                    print(f"{route_name:20} {claim.id[:48]:48} {digits:6d} {seconds:8.3f} {difference:9.1e} {own:9.1e}")
                if times:
                    mean[route_name, digits] = max(mean[route_name, digits], sum(times) / len(times))
    print("\nCPU seconds per point (target for numeric horizon routes: < 0.3 s at 15 digits); 'first'")
    print("points include the claim's one-off preparation (derivatives, compiled functions)")
    print(f"  {'route':20} {'digits':>6} {'slowest':>8} {'warm':>8} {'claim mean':>11}")
    for route_name in wanted:
        for digits in (15, 30):
            if (route_name, digits) in slowest:
                print(f"  {route_name:20} {digits:6d} {slowest[route_name, digits]:8.3f} {warm[route_name, digits]:8.3f} "
                      f"{mean[route_name, digits]:11.3f}")
        if totals[route_name, 15]:
            print(f"  {route_name:20} cost 30/15 digits = {totals[route_name, 30] / totals[route_name, 15]:.2f}x")


if __name__ == "__main__":
    main()
