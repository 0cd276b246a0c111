"""The detector-response route: first-order transition rates on a stationary worldline.

A two-level detector (gap w) coupled to a massless scalar in the Minkowski vacuum
(monopole coupling; derivative coupling in 1+1) has the transition rate
F(w) = integral ds exp(-i w s) W(s - i eps) per unit proper time (PHYSICS.md).  The
route computes F(+w) and F(-w) by shifted contours and residues
(`_detector_rate`), the detailed-balance temperature T(w) = w/ln(F(-w)/F(w))
over a band of gaps, and the spectrum verdict (`_detector_spectrum`).

Observables: T (when T(w) is constant over the band), T_eff(w) (the
detailed-balance temperature at gap w) and rate(w) (F(w); w < 0 de-excites).
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from typing import ClassVar, Literal

import mpmath
import sympy

from crosscheck.errors import CannotCompute
from crosscheck.measure import Measured
from crosscheck.routes._detector_rate import Rates, Sampling, rates_from, transition_rates
from crosscheck.routes._detector_spectrum import temperature, verdict
from crosscheck.routes.base import NumericResult, Problem, SymbolicResult
from crosscheck.trajectories import Worldline, band_gaps, detector_worldline, minkowski_applies


class DetectorResponseRoute:
    """First-order transition rate of a two-level detector, temperature by detailed balance."""

    name: ClassVar[str] = "detector-response"
    title: ClassVar[str] = "First-order detector transition rate on the worldline, detailed balance"
    grade: ClassVar[Literal["exact", "estimate"]] = "exact"
    version: ClassVar[str] = "2"
    observables: ClassVar[frozenset[str]] = frozenset({"T", "T_eff", "rate", "spectrum"})
    scope: ClassVar[frozenset[str]] = frozenset({"detector"})

    def applies(self, problem: Problem) -> str | None:
        return minkowski_applies(problem)

    def symbolic(self, problem: Problem) -> SymbolicResult:
        raise CannotCompute("the rate is computed numerically (contour quadrature), no closed form")

    def numeric(self, problem: Problem, point: Mapping[sympy.Symbol, object], digits: int) -> NumericResult:
        line, coupling = detector_worldline(problem, point, digits)
        gaps = band_gaps(problem, point, line, digits)
        rates = transition_rates(line, coupling, gaps, digits)
        with mpmath.workdps(digits + 10):
            temperatures = [temperature(g, u, d) for g, u, d in zip(gaps, rates.excitation, rates.deexcitation)]
            degree = 1 if coupling == "derivative" else line.dim - 3
            spectrum = verdict(gaps, rates.excitation, rates.deexcitation, temperatures, degree)
            values = {}
            if spectrum["verdict"] in ("bose", "fermi", "thermal"):
                values["T"] = _mean(temperatures)
            elif spectrum["detail"].startswith("no excitation"):
                values["T"] = Measured(mpmath.mpf(0), max(t.error for t in temperatures))
        functions = _functions(line, coupling, digits, rates.sampling)
        evidence = _evidence(line, gaps, rates, temperatures, spectrum)
        provenance = (f"worldline: {line.kind}, dim {line.dim}, {coupling} coupling, Minkowski vacuum",
                      *rates.provenance,
                      f"T(omega) = omega/ln(F(-omega)/F(omega)) at {len(gaps)} gaps; spectrum: {spectrum['detail']}")
        return NumericResult(values=values, functions=functions, evidence=evidence, provenance=provenance)


def _mean(temperatures: list[Measured]) -> Measured:
    values = [t.value for t in temperatures]
    mean = mpmath.fsum(values) / len(values)
    return Measured(mean, max(abs(v - mean) for v in values) + max(t.error for t in temperatures))


def _functions(line: Worldline, coupling: str, digits: int, band: Sampling | None) -> dict[str, Callable[[object], Measured]]:
    """T_eff(w) and rate(w) at any gap, computed when asked (cached per gap).  A gap within
    the band reuses the band's samples (they serve any gap up to the largest)."""
    cache: dict[str, Rates] = {}

    def rates_at(w: object) -> tuple[mpmath.mpf, Rates]:
        gap = abs(mpmath.mpf(mpmath.re(w)))
        if gap == 0:
            raise CannotCompute("the gap must be non-zero")
        key = mpmath.nstr(gap, digits + 5)
        if key not in cache:
            inside = band is not None and gap <= band.top
            cache[key] = rates_from(band, [gap]) if inside else transition_rates(line, coupling, [gap], digits)
        return gap, cache[key]

    def t_eff(w: object) -> Measured:
        gap, rates = rates_at(w)
        with mpmath.workdps(digits + 10):
            return temperature(gap, rates.excitation[0], rates.deexcitation[0])

    def rate(w: object) -> Measured:
        _, rates = rates_at(w)
        return rates.excitation[0] if mpmath.re(w) > 0 else rates.deexcitation[0]

    return {"T_eff": t_eff, "rate": rate}


def _evidence(line: Worldline, gaps, rates: Rates, temperatures, spectrum) -> dict[str, object]:
    scale = line.natural_scale()
    x = [float(g / scale) for g in gaps]
    series = [
        {"name": "detailed-balance temperature", "x_label": "gap / natural scale", "y_label": "T(omega) / natural scale",
         "x": x, "y": [float(t.value / scale) for t in temperatures], "y_error": [float(t.error / scale) for t in temperatures],
         "log_x": True},
        {"name": "excitation rate", "x_label": "gap / natural scale", "y_label": "F(omega)", "x": x,
         "y": [float(u.value) for u in rates.excitation], "log_x": True, "log_y": True},
    ]
    if spectrum.get("verdict") in ("bose", "fermi"):
        bose = spectrum["verdict"] == "bose"
        T = mpmath.mpf(spectrum["temperature"])
        fit = [(d.value - u.value) / mpmath.expm1(g / T) if bose else (d.value + u.value) / (mpmath.exp(g / T) + 1)
               for g, u, d in zip(gaps, rates.excitation, rates.deexcitation)]
        series[1].update(fit_x=x, fit_y=[float(f) for f in fit],
                         fit_label=f"{spectrum['verdict']} factor at T = {float(T / scale):.6g} x scale")
    return {"spectrum": {**spectrum, "band": [x[0], x[-1]]}, "natural_scale": float(scale), "series": series}
