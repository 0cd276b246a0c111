"""From transition rates to temperatures and a spectrum verdict (detector-response).

Detailed balance defines T(w) = w/ln(F(-w)/F(w)) at every gap.  The spectrum is
thermal when T(w) is the same over the band (within the rates' own errors).  Its
*shape* is read from the density of states: for a thermal response
F(w) = rho_B(w)/(e^(w/T) - 1) with rho_B = F(-w) - F(w), and equally
F(w) = rho_F(w)/(e^(w/T) + 1) with rho_F = F(-w) + F(w).  Which of the two is a
polynomial in w of degree D - 3 (odd for bose, even for fermi) decides: in 3+1
rho_B = w/(2 pi), in 2+1 rho_F = 1/2 (Takagi, Prog. Theor. Phys. Suppl. 88 (1986) 1,
the inversion of statistics in odd dimensions, from memory).
"""

from __future__ import annotations

from collections.abc import Sequence

import mpmath

from crosscheck.measure import Measured


def temperature(gap: mpmath.mpf, up: Measured, down: Measured) -> Measured:
    """T = w/ln(F(-w)/F(w)) with the error propagated; 0 (with a bound) when F(w)
    vanishes within its error (inertial motion)."""
    if up.value <= up.error or up.value <= 0:
        bound = gap / mpmath.log(down.value / max(up.error, mpmath.mpf(10) ** (-mpmath.mp.dps)))
        return Measured(mpmath.mpf(0), abs(bound))
    log_ratio = mpmath.log(down.value / up.value)
    value = gap / log_ratio
    relative = up.error / up.value + down.error / abs(down.value)
    return Measured(value, abs(value) * relative / abs(log_ratio) + mpmath.eps * abs(value) * 10)


def polynomial_residual(gaps: Sequence[mpmath.mpf], values: Sequence[mpmath.mpf], degree: int) -> tuple[mpmath.mpf, list]:
    """Least-squares fit of values by c_d w^d + c_(d-2) w^(d-2) + ... (one parity);
    returns (max |residual|/max |value|, coefficients)."""
    powers = list(range(degree % 2, degree + 1, 2))
    if len(powers) >= len(gaps):
        raise ValueError("too few gaps to test the density of states")
    A = mpmath.matrix([[g**p for p in powers] for g in gaps])
    b = mpmath.matrix(list(values))
    coefficients = mpmath.lu_solve(A.T * A, A.T * b)
    fitted = A * coefficients
    scale = max(abs(v) for v in values)
    residual = max(abs(fitted[i] - values[i]) for i in range(len(values))) / scale
    return residual, [coefficients[i] for i in range(len(powers))]


def verdict(gaps: Sequence[mpmath.mpf], ups: Sequence[Measured], downs: Sequence[Measured],
            temperatures: Sequence[Measured], degree: int) -> dict[str, object]:
    """The spectrum verdict: bose, fermi or non-thermal, with the spread of T(w)."""
    values = [t.value for t in temperatures]
    mean = mpmath.fsum(values) / len(values)
    if mean == 0:
        return {"verdict": "non-thermal", "spread": 0.0, "tolerance": 0.0,
                "detail": "no excitation at any gap (T = 0): the vacuum, not a thermal state"}
    spread = (max(values) - min(values)) / abs(mean)
    noise = max(t.error / abs(t.value) for t in temperatures)
    tolerance = max(mpmath.mpf(10) ** -8, 100 * noise)
    result: dict[str, object] = {"spread": float(spread), "tolerance": float(tolerance), "temperature": float(mean)}
    if spread > tolerance:
        result.update(verdict="non-thermal", detail=f"T(omega) varies by {_percent(spread)} across the band: not thermal")
        return result
    bose, _ = polynomial_residual(gaps, [d.value - u.value for u, d in zip(ups, downs)], degree)
    fermi, _ = polynomial_residual(gaps, [d.value + u.value for u, d in zip(ups, downs)], degree)
    result.update(bose_residual=float(bose), fermi_residual=float(fermi))
    if bose <= tolerance < fermi:
        result.update(verdict="bose", detail=f"thermal (T(omega) constant to {float(spread):.1e}); F(-w) - F(w) is a polynomial of degree {degree}: bose-shaped")
    elif fermi <= tolerance < bose:
        result.update(verdict="fermi", detail=f"thermal (T(omega) constant to {float(spread):.1e}); F(-w) + F(w) is a polynomial of degree {degree}: fermi-shaped")
    else:
        result.update(verdict="thermal", detail="thermal, but neither density of states is a polynomial: shape undecided")
    return result


def _percent(x: mpmath.mpf) -> str:
    value = float(x) * 100
    return f"{value:.3g}%"
