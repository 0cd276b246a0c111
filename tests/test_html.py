"""The HTML report escapes everything from claim files and loads nothing from the network.

Common practice (OWASP guidance on output encoding): untrusted text is
escaped where it is written into markup.
"""

from __future__ import annotations

import re

from crosscheck.claimfile import load_claim_text
from crosscheck.report.html import to_html
from crosscheck.routes.registry import load_routes
from crosscheck.runner import RunOptions, run_claim

HOSTILE = """
id: test/html
title: "<script>alert('title')</script>"
spacetime: {name: schwarzschild}
parameters: {M: [0.5, 20]}
claim: T = 1/(8*pi*M)
sources: ["<img src=x onerror=alert(1)>"]
notes: "</pre><b>bold</b>"
"""
RUN = {"command": "crosscheck run <x>", "versions": {"crosscheck": "<v>"}, "options": {"samples": 2, "digits": 30, "seed": 0}}


def test_claim_text_is_escaped_and_page_is_self_contained():
    routes, _ = load_routes()
    claims, errors = load_claim_text(HOSTILE, "hostile.yaml", known_routes=routes)
    assert not errors
    page = to_html([run_claim(claims[0], routes, RunOptions(samples=2))], RUN)
    assert "<script>alert" not in page and "<img" not in page
    assert page.count("<script") == 1  # only the report's own print script, allowed by its CSP hash (below)
    assert "&lt;script&gt;" in page and "&lt;img src=x" in page
    assert "Content-Security-Policy" in page and "default-src 'none'" in page
    assert not re.search(r"(src|href)=\"(https?:)?//", page)
    assert "CONFIRMED" in page


def test_reports_are_written_atomically_and_readable(tmp_path):
    import os
    import stat

    from crosscheck.report.files import write_atomic

    target = tmp_path / "sub" / "report.html"
    write_atomic(str(target), "first")
    write_atomic(str(target), "second")
    assert target.read_text() == "second"
    assert [p.name for p in target.parent.iterdir()] == ["report.html"]  # no temporary left
    umask = os.umask(0)
    os.umask(umask)
    assert stat.S_IMODE(os.stat(target).st_mode) == 0o666 & ~umask  # as an ordinary file, not 0600


# -- issue 5: MathML, plots, filter, notebook display -----------------------------------------
import base64  # noqa: E402
import hashlib  # noqa: E402
import sys  # noqa: E402
import xml.etree.ElementTree as ET  # noqa: E402

import pytest  # noqa: E402
import sympy  # noqa: E402
from sympy.printing.mathml import mathml  # noqa: E402

from crosscheck.report import mathml as report_mathml  # noqa: E402
from crosscheck.report import plots  # noqa: E402
from crosscheck.results import ClaimOutcome, NumericRow, RouteOutcome  # noqa: E402

GOOD = HOSTILE.replace("test/html", "test/good").replace("<script>alert('title')</script>", "Hawking temperature")
WRONG = GOOD.replace("test/good", "test/wrong").replace("8*pi*M", "4*pi*M")
NETWORK = re.compile(r"""(?:\b(?:src|href|action|poster|data|srcset)\s*=\s*["']?\s*(?:[a-z][a-z0-9+.-]*:)?//)"""
                     r"""|url\(\s*["']?\s*(?:[a-z][a-z0-9+.-]*:)?//|@import""", re.I)


def network_references(page: str) -> list[str]:
    """Attributes or CSS that would make a browser fetch something (common practice: CSP fetch directives)."""
    return NETWORK.findall(page)


def outcome_of(text: str, samples: int = 3) -> ClaimOutcome:
    routes, _ = load_routes()
    claims, errors = load_claim_text(text, "claims/test.yaml", known_routes=routes)
    assert not errors
    return run_claim(claims[0], routes, RunOptions(samples=samples))


@pytest.fixture(scope="module")
def good_and_wrong():
    return outcome_of(GOOD), outcome_of(WRONG)


def test_formulas_are_sympy_presentation_mathml():
    # Independent: sympy's own presentation printer on the expression built directly.
    T, M = sympy.symbols("T M")
    expected = mathml(sympy.Eq(T, 1 / (8 * sympy.pi * M), evaluate=False), printer="presentation")
    ours = str(report_mathml.text_mathml("T = 1/(8*pi*M)"))
    assert ours.startswith("<math") and ET.fromstring(ours).tag == "math"
    assert report_mathml._numeric_entities(expected) in ours
    # Calculus in a claim line stays a derivative (evaluating it would give 0).
    first_law = str(report_mathml.text_mathml("diff(S, M) = 1/T"))
    assert "<mfrac>" in first_law and "&#8518;" in first_law  # the differential d


def test_symbols_that_try_to_become_markup_are_refused_or_escaped():
    for hostile in ("<img src=x onerror=alert(1)>", "x.__class__", "a; b", "'text'"):
        out = str(report_mathml.text_mathml(hostile))
        assert out.startswith('<code class="formula-text">') and "<img" not in out
    with pytest.raises((ValueError, ET.ParseError)):
        report_mathml.mathml_of(sympy.Symbol("<b>x</b>"))  # sympy prints this name raw: the allowlist refuses it
    with pytest.raises((ValueError, ET.ParseError)):
        report_mathml.mathml_of(sympy.Symbol("<img src=x>"))
    assert "<msup><mn>3</mn><mn>1500000000</mn></msup>" in str(report_mathml.text_mathml("3**1500000000"))


def test_page_is_self_contained_with_a_hashed_print_script(good_and_wrong):
    page = to_html(list(good_and_wrong), RUN)
    assert network_references(page) == []
    assert "http://" not in page and "https://" not in page  # not even namespace URLs from the SVG writer
    csp = re.search(r'http-equiv="Content-Security-Policy" content="([^"]+)"', page).group(1)
    assert "default-src 'none'" in csp and "connect-src" not in csp
    [script] = re.findall(r"<script>(.*?)</script>", page, flags=re.S)
    digest = base64.b64encode(hashlib.sha256(script.encode()).digest()).decode()
    assert f"script-src 'sha256-{digest}'" in csp  # CSP Level 2 hash source: only this script may run


def test_matrix_filter_marks_and_sections(good_and_wrong):
    page = to_html(list(good_and_wrong), RUN)
    assert 'id="filter-all"' in page and 'id="filter-confirmed"' in page and 'id="filter-contradicted"' in page
    assert "#filter-contradicted:checked ~ main .claim:not(.claim-contradicted)" in page
    matrix = page[page.index('<table class="matrix">'):page.index("</table>")]
    assert "\u2717</span> disagree" in matrix and "\u2713</span> agree" in matrix  # words and marks, not colour only
    assert "CONTRADICTED" in matrix and "CONFIRMED" in matrix
    assert page.count("<math") >= 6  # claim lines, steps, closed forms
    for needle in ("Derivation steps", "Numeric comparison", "relative difference", "bound used",
                   "Provenance", "Sources:", "Reproduce this claim", "crosscheck run claims/test.yaml",
                   "Diagnosis (factor):", "constant factor 2"):
        assert needle in page, needle


def test_ratio_of_a_disagreement_is_plotted(good_and_wrong):
    wrong = good_and_wrong[1]
    route = next(r for r in wrong.routes if r.route == "killing-horizon")
    # Source: Hawking 1975, T = 1/(8 pi M); the wrong claim 1/(4 pi M) is twice that at every point.
    assert [round(ratio, 12) for _, ratio in plots.ratio_points(route)] == [2.0] * len(route.numeric)
    page = to_html([wrong], RUN)
    disagreeing = [r for r in wrong.routes if r.status == "disagree" and r.numeric]
    assert page.count("ratio claim/route at the sample points") == len(disagreeing) >= 2
    assert page.count("<svg") >= len(disagreeing)


SPECTRUM = [0.5 + 0.25 * i for i in range(12)]


def fabricated_route(name: str = "<script>alert('series')</script>") -> RouteOutcome:
    """A detector-like route with a Planck spectrum and its fit, as rules.md's evidence convention says."""
    import math

    planck = [w / (math.exp(2 * math.pi * w) - 1) for w in SPECTRUM]  # Source: Unruh 1976, T = a/(2 pi), a = 1
    series = {"name": name, "x_label": "omega / a", "y_label": "rate", "x": SPECTRUM, "y": planck,
              "y_error": [1e-3 * p for p in planck], "fit_x": SPECTRUM, "fit_y": planck,
              "fit_label": "Planck fit, T = a/(2 pi)", "log_y": True}
    row = NumericRow({"a": "1"}, 0.16, 0.16, 0.0, 1e-12, 1e-9, True)
    return RouteOutcome(route="detector-like", title="fabricated", grade="exact", status="agree",
                        numeric=(row,), evidence={"series": [series, {"name": "broken", "x": "nope", "y": []}]})


def test_evidence_series_become_inline_svg_with_unique_ids():
    import dataclasses

    route = fabricated_route()
    routes = (route, dataclasses.replace(route, route="other-route"))
    claim = ClaimOutcome("test/plot", "plot", "p.yaml", 1, "weak", "T = a/(2*pi)", routes=routes)
    page = to_html([claim, claim], RUN)
    svgs = re.findall(r"<svg\b.*?</svg>", page, flags=re.S)
    assert len(svgs) == 4  # the valid series of two routes in two claims; the malformed one is left out
    ids = re.findall(r'\bid="([^"]+)"', page)
    assert len(ids) == len(set(ids))
    assert "<script>alert" not in page and "&lt;script&gt;alert(&#x27;series&#x27;)" in page.replace("&#39;", "&#x27;")
    for svg in svgs:
        assert 'role="img"' in svg and "<?xml" not in svg and "DOCTYPE" not in svg
        for ref in re.findall(r'href="#([^"]+)"', svg) + re.findall(r"url\(#([^)]+)\)", svg):
            assert f'id="{ref}"' in svg  # every internal reference stays inside its own figure


def test_the_report_has_plots_without_matplotlib(monkeypatch):
    monkeypatch.setitem(sys.modules, "matplotlib", None)  # import matplotlib now raises ImportError
    assert plots.available()
    claim = ClaimOutcome("test/plot", "plot", "p.yaml", 1, "weak", "T = a/(2*pi)", routes=(fabricated_route("spectrum"),))
    page = to_html([claim], RUN)
    svgs = re.findall(r"<svg\b.*?</svg>", page, flags=re.S)
    assert len(svgs) == 1 and 'aria-label="spectrum"' in svgs[0] and "<circle" in svgs[0]
    assert "crosscheck[plots]" not in page and "own writer" in page


def test_notebook_display_uses_the_same_templates(good_and_wrong):
    good = good_and_wrong[0]
    html = good._repr_html_()
    assert "<math" in html and "Hawking temperature" in html and "<html" not in html
    assert "\nbody {" not in html  # a notebook's page keeps its own layout
    route_html = good.routes[1]._repr_html_()
    assert good.routes[1].route in route_html and "<section" in route_html
    hostile = ClaimOutcome("x/y", "<script>alert(1)</script>", "f.yaml", 1, "invalid", error="<b>bad</b>")
    assert "<script>alert" not in hostile._repr_html_() and "&lt;b&gt;bad" in hostile._repr_html_()
