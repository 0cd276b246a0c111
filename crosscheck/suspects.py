"""Suspicious factors the diagnosis should recognise beyond plain constants.

A wrong Killing normalisation gives a ratio claim/route that is not a
constant but sqrt(F(r0)) at each parameter point.  This module computes, for
a claim, the per-point values of such factors -- the ratio between the
claim's normalisation and each alternative one -- so that `compare.diagnose`
can name them.  It uses the spacetime package's normalisation, an input of
the claim, never any route's result.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Mapping, Sequence

import mpmath
import sympy

from crosscheck.claim import Claim
from crosscheck.compare import mp_point
from crosscheck.spacetimes.base import Normalization
from crosscheck.spacetimes.normalize import normalization_factor_numeric

_ALTERNATIVES = {
    "as-written": Normalization("as-written"),
    "geodesic": Normalization("geodesic"),
}


def suspicious_factors(
    claim: Claim, points: Sequence[Mapping[sympy.Symbol, sympy.Rational]], digits: int
) -> dict[str, list]:
    """name -> per-point factor by which the claim would differ if it used that choice."""
    spacetime = claim.spacetime
    if spacetime is None or not claim.observables & {"T", "kappa", "T_loc"}:
        return {}
    ours = spacetime.normalization
    candidates: dict[str, list] = {}
    for label, alternative in _ALTERNATIVES.items():
        if alternative.kind == ours.kind:
            continue
        factors = _ratios(spacetime, alternative, points, digits)
        if factors is not None:
            candidates[f"Killing normalisation: the claim uses the {label} normalisation, not {_describe(ours)}"] = factors
    return candidates


def _ratios(spacetime, alternative: Normalization, points, digits: int) -> list | None:
    other = dataclasses.replace(spacetime, normalization=alternative)
    values = []
    try:
        with mpmath.workdps(digits + 10):
            for point in points:
                numeric = mp_point(point)
                mine = normalization_factor_numeric(spacetime, numeric, digits).value
                theirs = normalization_factor_numeric(other, numeric, digits).value
                values.append(theirs / mine)
    except Exception:  # an alternative that does not exist here is simply no suspect
        return None
    if all(abs(v - 1) < mpmath.mpf(10) ** (-digits // 2) for v in values):
        return None
    return values


def _describe(norm: Normalization) -> str:
    if norm.kind == "radius":
        return f"the normalisation at r0 = {norm.radius}"
    return f"the {norm.kind} normalisation"
