"""The mutation audit: mutant generation, equivalent mutants, a small audit run, JSON, HTML, CLI.

The expected mutated expressions are derived by hand from the claims below and
written out here; the audit run checks that the library's own routes catch
injected factors on claims whose correct values are textbook results.
"""

from __future__ import annotations

import dataclasses
import json

import pytest
import sympy

from crosscheck.audit import Audit, MemoRoute, matches, route_variants_task, run_audit
from crosscheck.audit_io import SCHEMA, audit_from_data, audit_to_data
from crosscheck.claimfile import load_claim_text
from crosscheck.cli import main
from crosscheck.mutants import Expected, derive_mutants, equivalence, rhs_mutants
from crosscheck.report.html import to_html
from crosscheck.results import Diagnosis
from crosscheck.routes.registry import load_routes
from crosscheck.runner import RunOptions
from crosscheck.workers import InlineExecutor

# Source: S. W. Hawking, Commun. Math. Phys. 43, 199 (1975): T = 1/(8 pi M).
SCHWARZSCHILD_T = """
id: test/schwarzschild-t
title: Schwarzschild temperature
spacetime: {name: schwarzschild}
parameters: {M: [0.5, 20]}
claim: T = 1/(8*pi*M)
"""
# Source: M. Banados, C. Teitelboim and J. Zanelli, PRL 69, 1849 (1992): T = sqrt(M)/(2 pi l).
BTZ_T = """
id: test/btz-t
title: BTZ temperature
spacetime: {name: btz}
parameters: {M: [0.1, 10], l: [0.5, 10]}
claim: T = sqrt(M)/(2*pi*l)
"""
# Source: Gibbons and Hawking, PRD 15, 2752 (1977): outer horizon r+ = M + sqrt(M^2 - Q^2).
REISSNER_NORDSTROM_T = """
id: test/rn-t
title: RN temperature
spacetime:
  name: reissner-nordstrom
  horizon: M + sqrt(M**2 - Q**2)
parameters: {M: [0.5, 20], q: [0, 0.95]}
where: {Q: q*M}
claim: T = sqrt(M**2 - Q**2)/(2*pi*(M + sqrt(M**2 - Q**2))**2)
"""
# Source: Bardeen, Carter and Hawking, CMP 31, 161 (1973): first law dS/dM = 1/T.
FIRST_LAW = """
id: test/first-law
title: first law
spacetime: {name: schwarzschild}
parameters: {M: [0.5, 20]}
claim: diff(S, M) = 1/T
"""
FAST_ROUTES = ("euclidean-period", "killing-horizon")


def _claim(text: str):
    routes, _ = load_routes()
    claims, errors = load_claim_text(text, "test.yaml", known_routes=routes)
    assert not errors
    return claims[0]


def _routes():
    routes, _ = load_routes()
    return {name: routes[name] for name in FAST_ROUTES}


def _symbols(claim):
    return {s.name: s for s in claim.symbols}


def _same(a, b) -> bool:
    return sympy.expand(a - b) == 0


# -- generation --------------------------------------------------------------------------------
def test_btz_mutants_are_the_hand_derived_expressions():
    claim = _claim(BTZ_T)
    s = _symbols(claim)
    M, l, pi = s["M"], s["l"], sympy.pi
    by_label = {m.label: m for m in derive_mutants(claim)}
    # Hand-derived from T = sqrt(M)/(2 pi l):
    expected = {
        "x 2": sympy.sqrt(M) / (pi * l),
        "x 1/2": sympy.sqrt(M) / (4 * pi * l),
        "x pi": sympy.sqrt(M) / (2 * l),
        "x 1/pi": sympy.sqrt(M) / (2 * pi**2 * l),
        "x 4 pi": 2 * sympy.sqrt(M) / l,
        "x 1/(4 pi)": sympy.sqrt(M) / (8 * pi**2 * l),
        "sign flipped": -sympy.sqrt(M) / (2 * pi * l),
        "M^(1/2) -> M^(3/2)": M ** sympy.Rational(3, 2) / (2 * pi * l),
        "M -> 1/M": 1 / (2 * pi * sympy.sqrt(M) * l),
        "l^-1 -> l^0": sympy.sqrt(M) / (2 * pi),
        "l -> 1/l": sympy.sqrt(M) * l / (2 * pi),
        "swap M, l": sympy.sqrt(l) / (2 * pi * M),
    }
    assert set(by_label) == set(expected)
    for label, expr in expected.items():
        assert _same(by_label[label].claim.rhs, expr), label
        assert by_label[label].claim.lhs == claim.lhs  # only the right-hand side changes
        assert not by_label[label].equivalent
    # The diagnosis each should get: the injected factor, and claim/route = M^(-3/2) l^(3/2) for the swap.
    assert by_label["x 4 pi"].expected == Expected("factor", factor="4*pi")
    assert by_label["sign flipped"].expected.kind == "sign"
    assert dict(by_label["swap M, l"].expected.exponents) == {"M": "-3/2", "l": "3/2"}
    assert dict(by_label["l -> 1/l"].expected.exponents) == {"l": "2"}


def test_observable_placeholders_are_not_mutated():
    claim = _claim(FIRST_LAW)
    mutants = rhs_mutants(claim)
    T = next(iter(claim.rhs.atoms(sympy.core.function.AppliedUndef)))  # T(M), the route's temperature
    # M occurs only as T's argument, so only factors and the sign apply; 2/T keeps T(M) as it was.
    assert [m.kind for m in mutants] == ["factor"] * 6 + ["sign"]
    assert _same(mutants[0].claim.rhs, 2 / T)


def test_other_horizon_only_where_the_spacetime_has_one():
    assert [m for m in derive_mutants(_claim(SCHWARZSCHILD_T)) if m.kind == "horizon"] == []
    claim = _claim(REISSNER_NORDSTROM_T)
    [inner] = [m for m in derive_mutants(claim) if m.kind == "horizon"]
    # r- = M - sqrt(M^2 - Q^2) < r+: the smaller of the two positive roots, with the claimed value kept.
    assert inner.label == "other horizon (inner)"
    assert inner.claim.spacetime.horizon.root == 1
    assert inner.claim.rhs == claim.rhs


def test_equivalent_mutants_are_detected():
    claim = _claim(BTZ_T)
    M, l = _symbols(claim)["M"], _symbols(claim)["l"]
    assert equivalence(M * l, l * M, claim) is not None  # a swap of a symmetric expression
    # sin^2 + cos^2 = 1 is not seen by expand, only by the numbers.
    assert "30-digit" in equivalence(sympy.sin(M) ** 2 + sympy.cos(M) ** 2, sympy.Integer(1) + 0 * l, claim)
    assert equivalence(M * l, M * l * (1 + sympy.Rational(1, 10**12)), claim) is None


def test_a_dimensionless_result_independent_of_m_makes_m_to_1_over_m_equivalent():
    # Phi = Q r+/(r+^2 + a^2) with Q = q M, a = chi M, r+ = M (1 + sqrt(1 - chi^2 - q^2)) does not depend
    # on M (a potential is dimensionless in geometric units; common practice), so M -> 1/M is equivalent.
    text = """
id: test/kn-phi
title: KN potential
spacetime: {name: kerr-newman}
parameters: {M: [0.5, 20], chi: [0, 0.6], q: [0, 0.6]}
where: {a: chi*M, Q: q*M, rp: M + sqrt(M**2 - a**2 - Q**2)}
claim: Phi = Q*rp/(rp**2 + a**2)
"""
    by_label = {m.label: m for m in derive_mutants(_claim(text))}
    assert by_label["M -> 1/M"].equivalent
    assert not by_label["q -> q^2"].equivalent and not by_label["x 2"].equivalent


def test_matches_names_the_injected_slip():
    assert matches(Expected("factor", factor="2"), Diagnosis("factor", "constant factor 2", factor="2"))
    assert not matches(Expected("factor", factor="2"), Diagnosis("factor", "constant factor 1/2", factor="1/2"))
    assert matches(Expected("power", exponents=(("M", "-3/2"),)), Diagnosis("power", "", exponents={"M": "-3/2"}))
    assert not matches(Expected("power", exponents=(("M", "1"),)), Diagnosis("power", "", exponents={"M": "2"}))
    assert not matches(None, Diagnosis("sign", ""))


# -- running -----------------------------------------------------------------------------------
class _Counting:
    """A route wrapper that counts the route work (an independent check of MemoRoute)."""

    def __init__(self, route):
        self.route, self.calls = route, 0

    def __getattr__(self, name):
        return getattr(self.route, name)

    def symbolic(self, problem):
        self.calls += 1
        return self.route.symbolic(problem)

    def numeric(self, problem, point, digits):
        self.calls += 1
        return self.route.numeric(problem, point, digits)


def test_route_work_is_done_once_for_all_mutants():
    claim = _claim(SCHWARZSCHILD_T)
    route = _routes()["killing-horizon"]
    options = RunOptions(samples=3)
    alone = _Counting(route)
    route_variants_task([claim], alone, options)
    variants = [claim, *(m.claim for m in rhs_mutants(claim))]
    many = _Counting(route)
    results = route_variants_task(variants, many, options)
    assert many.calls == alone.calls and len(results) == len(variants)
    assert isinstance(MemoRoute(route).name, str)


@pytest.fixture(scope="module")
def small_audit() -> Audit:
    claims = [_claim(SCHWARZSCHILD_T), _claim(BTZ_T)]
    labels = {"x 2", "x 1/2", "x pi", "x 1/(4 pi)", "sign flipped", "swap M, l"}
    return run_audit(claims, _routes(), RunOptions(samples=4), InlineExecutor(), only=lambda m: m.label in labels)


def test_factor_mutants_are_caught_and_diagnosed_with_the_injected_factor(small_audit):
    assert small_audit.complete and len(small_audit.claims) == 2
    for claim in small_audit.claims:
        assert claim.original.status == "confirmed"  # no false contradiction of the correct claims
        by_label = {m.label: m for m in claim.mutants}
        for label, factor in (("x 2", "2"), ("x 1/2", "1/2"), ("x pi", "pi"), ("x 1/(4 pi)", "1/(4*pi)")):
            mutant = by_label[label]
            assert mutant.caught and mutant.status == "contradicted"
            assert mutant.diagnosed
            assert any(f"constant factor {factor}:" in text for text in mutant.diagnoses.values())
        assert by_label["sign flipped"].caught
    # BTZ with M and l swapped (4 points fit 2 exponents and a constant): claim/route = (sqrt(l)/(2 pi M)) / (sqrt(M)/(2 pi l)) = M^(-3/2) l^(3/2).
    swap = {m.label: m for m in small_audit.claims[1].mutants}["swap M, l"]
    assert swap.caught and swap.diagnosed
    assert any("M^(-3/2) * l^(3/2)" in text for text in swap.diagnoses.values())
    totals = small_audit.totals()
    assert totals["false_contradictions"] == [] and totals["caught"] <= totals["mutants"]
    assert totals["caught_fraction"] == totals["caught"] / totals["mutants"]


def test_json_round_trip(small_audit):
    data = json.loads(json.dumps(audit_to_data(small_audit, {"command": "test"})))
    assert data["schema"] == SCHEMA
    again = audit_from_data(data)
    assert again.totals() == small_audit.totals()
    assert again.claims[1].original.routes == small_audit.claims[1].original.routes
    assert audit_to_data(again, {"command": "test"}) == data
    with pytest.raises(ValueError):
        audit_from_data({"schema": "crosscheck-result/1"})


def test_html_audit_section_is_present_and_escaped(small_audit):
    first = small_audit.claims[0]
    hostile = dataclasses.replace(first.mutants[0], label="<script>alert(1)</script>", caught=False, status="weak")
    audit = dataclasses.replace(small_audit, claims=(dataclasses.replace(first, mutants=(hostile, *first.mutants[1:])),
                                                     *small_audit.claims[1:]))
    page = to_html([], {"command": "crosscheck mutate"}, audit=audit)  # the claim sections are test_html's
    assert 'id="audit"' in page and "Audit of the checks" in page
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in page and "<script>alert" not in page
    assert "Survivors" in page
    assert 'id="audit"' not in to_html([], {"command": "crosscheck run"})


@pytest.mark.slow
def test_cli_mutate_and_run_audit(tmp_path):
    path = tmp_path / "claim.yaml"
    path.write_text(SCHWARZSCHILD_T, encoding="utf-8")
    report, page = tmp_path / "audit.json", tmp_path / "report.html"
    common = ["--routes", ",".join(FAST_ROUTES), "--jobs", "0", "--samples", "3", "--no-cache"]
    assert main(["mutate", str(path), *common, "--json", str(report)]) == 0
    data = json.loads(report.read_text(encoding="utf-8"))
    assert data["schema"] == SCHEMA and data["totals"]["caught_fraction"] >= 0.99
    assert main(["run", str(path), *common, "--audit", "--html", str(page)]) == 0
    assert "Audit of the checks" in page.read_text(encoding="utf-8")
