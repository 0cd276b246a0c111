"""`crosscheck explain`: LaTeX and Markdown that compile, escape claim text, and say what was checked.

Escaping rules are common practice (the LaTeX special characters of
Lamport's manual, CommonMark's backslash escapes and HTML entities).
"""

from __future__ import annotations

import re
import shutil
import subprocess

import pytest
import sympy

from crosscheck.claimfile import load_claim_text
from crosscheck.explain import explain, render, run_explain
from crosscheck.report import latex, markdown
from crosscheck.routes.registry import load_routes
from crosscheck.runner import RunOptions, run_claim

TITLE = "50% of #1 & $x_2$ {} <script>alert(1)</script> ~^\\"
CLAIM = f"""
id: explain/schwarzschild
title: '{TITLE}'
spacetime: {{name: schwarzschild}}
parameters: {{M: [0.5, 20]}}
claim: T = 1/(8*pi*M)
sources: ["S. W. Hawking, Commun. Math. Phys. 43, 199 (1975) [see *eq. 2*] | `x`"]
"""
WRONG = CLAIM.replace("explain/schwarzschild", "explain/wrong").replace("8*pi*M", "4*pi*M")
RUN = {"command": "crosscheck explain x", "versions": {"crosscheck": "0"}, "options": {"samples": 2, "digits": 30, "seed": 0}}


@pytest.fixture(scope="module")
def explanations():
    routes, _ = load_routes()
    result = []
    for text in (CLAIM, WRONG):
        claims, errors = load_claim_text(text, "claims/explain.yaml", known_routes=routes)
        assert not errors, errors
        result.append(explain(run_claim(claims[0], routes, RunOptions(samples=2)), RUN))
    return result


def _without_escaped_braces(text: str) -> str:
    return text.replace(r"\{", "").replace(r"\}", "").replace(r"\\", "")


def test_latex_escapes_every_special_character():
    # Source: Lamport, LaTeX (1994), sec. 2.2.1 (from memory): # $ % & ~ _ ^ \ { } are special.
    assert latex.escape("50% of #1 & $x_2$ {}") == r"50\% of \#1 \& \$x\_2\$ \{\}"
    assert latex.escape("<a> ~^\\") == r"\textless{}a\textgreater{} \textasciitilde{}\textasciicircum{}\textbackslash{}"
    assert latex.escape("\u03ba \u2713") == "[U+03BA] [U+2713]"  # pdflatex has no glyphs for these in T1 text


def test_latex_document_structure(explanations):
    document = render(explanations, "latex")
    assert document.startswith(r"\documentclass") and document.rstrip().endswith(r"\end{document}")
    begins = re.findall(r"\\begin\{(\w+\*?)\}", document)
    ends = re.findall(r"\\end\{(\w+\*?)\}", document)
    assert sorted(begins) == sorted(ends) and "tabular" in begins and "enumerate" in begins
    plain = _without_escaped_braces(document)
    assert plain.count("{") == plain.count("}")
    assert document.count(r"\[") == document.count(r"\]") and document.count(r"\(") == document.count(r"\)")
    assert r"\section{50\% of \#1 \& \$x\_2\$ \{\} \textless{}script\textgreater{}" in document
    # Independent: sympy's LaTeX printer on the expression built directly.
    T, M = sympy.symbols("T M")
    assert sympy.latex(sympy.Eq(T, 1 / (8 * sympy.pi * M))) in document
    for needle in (r"\subsection*{Route \texttt{killing-horizon}}", r"\subsection*{Agreement}",
                   r"\subsection*{Reproduce}", "crosscheck run claims/explain.yaml --samples 2", "constant factor 2"):
        assert needle in document, needle


@pytest.mark.skipif(shutil.which("pdflatex") is None, reason="no TeX installation (apt-get install texlive-latex-base)")
def test_latex_compiles(explanations, tmp_path):
    source = tmp_path / "explain.tex"
    source.write_text(render(explanations, "latex"), encoding="utf-8")
    result = subprocess.run(
        ["pdflatex", "-interaction=nonstopmode", "-halt-on-error", "-no-shell-escape", source.name],
        cwd=tmp_path, capture_output=True, text=True, timeout=120,
    )
    assert result.returncode == 0, result.stdout[-3000:]
    assert (tmp_path / "explain.pdf").stat().st_size > 1000


def test_markdown_escapes_and_keeps_the_maths(explanations):
    document = render(explanations, "markdown")
    assert "<script>" not in document and "&lt;script&gt;" in document
    assert r"## 50% of \#1 &amp; \$x\_2\$ \{\}" in document
    assert r"\[see \*eq. 2\*\] \| \`x\`" in document  # no link, emphasis, table cell or code span
    T, M = sympy.symbols("T M")
    assert "$$\n" + sympy.latex(sympy.Eq(T, 1 / (8 * sympy.pi * M))) + "\n$$" in document
    assert "| killing-horizon | exact | disagree |" in document
    assert "```\ncrosscheck run claims/explain.yaml --samples 2 --digits 30 --seed 0\n```" in document
    assert markdown.escape("- item") == r"\- item" and markdown.escape("3. x") == r"3\. x"
    assert markdown.code_block("a ``` b").startswith("````\n")


def test_run_explain_writes_and_exits_like_run(claim_file, tmp_path, capsys):
    good = claim_file(CLAIM, "good.yaml")
    out = tmp_path / "out" / "explain.tex"
    assert run_explain(good, "latex", str(out), RunOptions(samples=2)) == 0
    assert r"\begin{document}" in out.read_text()
    assert run_explain(claim_file(WRONG, "wrong.yaml"), "markdown", None, RunOptions(samples=2)) == 1
    assert "constant factor 2" in capsys.readouterr().out
    bad = claim_file(CLAIM.replace("[0.5, 20]", "[3, 1]"), "bad.yaml")
    assert run_explain(bad, "markdown", None, RunOptions(samples=2)) == 2
    assert f"{bad}:" in capsys.readouterr().err
    with pytest.raises(ValueError):
        render([], "rtf")
