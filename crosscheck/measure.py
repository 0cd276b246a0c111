"""A number with an error estimate: every numeric result in crosscheck is one.

Agreement decisions use the error (DESIGN.md section 5), so a value is never
passed around without it.
"""

from __future__ import annotations

from dataclasses import dataclass

import mpmath


@dataclass(frozen=True)
class Measured:
    """`value` with absolute error estimate `error` (both mpmath numbers).

    `error` is an estimate (for instance the difference between two
    extrapolation orders or two precisions), not a rigorous bound; routes say
    in their provenance how they obtained it.
    """

    value: mpmath.mpf | mpmath.mpc
    error: mpmath.mpf

    def relative_error(self) -> mpmath.mpf:
        """Error relative to |value| (infinite for a zero value with an error)."""
        magnitude = abs(self.value)
        if magnitude == 0:
            return mpmath.mpf(0) if self.error == 0 else mpmath.inf
        return self.error / magnitude
