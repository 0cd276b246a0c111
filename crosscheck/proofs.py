"""Proving route - claim = 0 symbolically: canonical forms tried in turn, each under a
deadline (PITFALLS.md: never a bare `simplify(...) == 0`; `simplify` comes last).

The square-root form (`crosscheck.radicals`) uses the claim's parameter box; the
others are sympy's.  A form that raises or runs out of time just fails, with a note.
"""

from __future__ import annotations

import time
from collections.abc import Callable

import sympy

from crosscheck.radicals import reduce_radicals
from crosscheck.timebox import run_limited

__all__ = ["prove_zero"]


class _OutOfTime(BaseException):
    """Our own limit ran out (a caller's limit raises its own exception and propagates)."""


def _run_limited(func, seconds: float):
    return run_limited(func, seconds, exception=_OutOfTime)


_CANONICAL_FORMS: tuple[tuple[str, Callable], ...] = (
    ("expand", lambda t, box: sympy.expand(t)),
    ("square roots and absolute values reduced over the parameter ranges", reduce_radicals),
    ("cancel", lambda t, box: sympy.cancel(t)),
    ("together", lambda t, box: sympy.together(t)),
    ("radsimp", lambda t, box: sympy.radsimp(t)),
    ("simplify", lambda t, box: sympy.simplify(t)),
)


def _is_zero_by(name: str, form: Callable, target: sympy.Expr, box, deadline: float, notes: list[str]) -> bool:
    try:
        return _run_limited(lambda: form(target, box), deadline - time.monotonic()) == 0
    except _OutOfTime:
        notes.append(f"{name} ran out of time")
    except Exception as exc:  # sympy raises many kinds; this form just fails
        notes.append(f"{name} failed ({type(exc).__name__})")
    return False


def prove_zero(targets: list[sympy.Expr], deadline: float, box=None) -> tuple[str | None, list[str]]:
    """Names of the canonical forms turning every target into 0 (or None), and notes.
    `box` holds the parameter ranges (symbol -> exact (lo, hi)) for the forms that use them."""
    notes: list[str] = []
    if all(t == 0 for t in targets):
        return "identical after automatic evaluation", notes
    left, used = list(targets), []
    for name, form in _CANONICAL_FORMS:
        still = [t for t in left if not _is_zero_by(name, form, t, box, deadline, notes)]
        if len(still) < len(left):
            used.append(name)
        left = still
        if not left:
            return ", ".join(used), notes
        if time.monotonic() >= deadline:
            break
    return None, notes
