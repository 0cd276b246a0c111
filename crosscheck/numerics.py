"""Generic numerical tools shared by routes (never a shortcut for an observable).

The one tool here is Richardson extrapolation of a function sampled at
geometrically shrinking offsets, used wherever a route takes a limit at the
horizon numerically.  Its error estimate is the difference between the last
two extrapolation orders -- an estimate, as PITFALLS.md insists, not a bound.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence

import mpmath

from crosscheck.measure import Measured


def richardson_table(values: Sequence[mpmath.mpf], ratio: mpmath.mpf, orders: Sequence[int]) -> list[list]:
    """Neville-style table eliminating error terms h^p for p in `orders`.

    values[k] is f(h0 * ratio**k) (ratio < 1); row j of the table has the
    estimates after eliminating the first j error orders.
    """
    table = [list(values)]
    for power in orders[: len(values) - 1]:
        previous = table[-1]
        factor = mpmath.mpf(ratio) ** (-power)
        table.append(
            [(factor * previous[k + 1] - previous[k]) / (factor - 1) for k in range(len(previous) - 1)]
        )
    return table


def richardson_limit(
    f: Callable[[mpmath.mpf], mpmath.mpf],
    h0: mpmath.mpf,
    *,
    steps: int = 8,
    ratio: mpmath.mpf | float = 0.5,
    orders: Sequence[int] | None = None,
) -> tuple[Measured, list[tuple[float, float]]]:
    """Limit of f(h) as h -> 0+ from samples at h0 * ratio**k, k = 0..steps-1.

    Assumes f(h) = f0 + c1 h + c2 h^2 + ... (orders 1, 2, 3, ... by default).
    Returns the extrapolated value with an error estimate and the raw samples
    (h, f(h)) as floats for evidence.  Work at the caller's precision.
    """
    ratio = mpmath.mpf(ratio)
    orders = list(orders) if orders is not None else list(range(1, steps))
    hs = [mpmath.mpf(h0) * ratio**k for k in range(steps)]
    values = [f(h) for h in hs]
    table = richardson_table(values, ratio, orders)
    best = table[-1][-1]
    previous = table[-2][-1] if len(table) > 1 else values[-1]
    # The estimate of the last order is compared with the one before it; the
    # spread of the last row guards against a lucky coincidence.
    spread = max((abs(x - best) for x in table[-2][-2:]), default=abs(best - previous))
    error = max(abs(best - previous), spread) + mpmath.eps * abs(best) * 10
    samples = [(float(h), float(mpmath.re(v))) for h, v in zip(hs, values)]
    return Measured(best, error), samples


def richardson_until(
    f: Callable[[mpmath.mpf], mpmath.mpf],
    h0: mpmath.mpf,
    *,
    relative: mpmath.mpf,
    orders: Sequence[int],
    min_steps: int = 4,
    ratio: mpmath.mpf | float = 0.5,
) -> Measured:
    """As `richardson_limit`, sampling one offset more at a time and stopping once the
    error estimate is below `relative` * |value| (after `min_steps` samples), or after
    len(orders) + 1 samples.  Why: each sample of a claim's derivative costs two route
    evaluations, and a smooth function meets 20 digits after four of six offsets."""
    ratio = mpmath.mpf(ratio)
    values: list = []
    for k in range(len(orders) + 1):
        values.append(f(mpmath.mpf(h0) * ratio**k))
        if len(values) < min_steps:
            continue
        table = richardson_table(values, ratio, orders)
        best = table[-1][-1]
        spread = max(abs(x - best) for x in table[-2][-2:])
        error = max(abs(best - table[-2][-1]), spread) + mpmath.eps * abs(best) * 10
        if error <= relative * abs(best):
            break
    return Measured(best, error)
