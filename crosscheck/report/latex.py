"""LaTeX for `crosscheck explain --latex`: a complete article a referee can compile or \\input.

The document needs only packages of every TeX installation (amsmath,
fontenc, inputenc).  The body between the `% crosscheck section` markers can
be pasted into a paper's appendix.  Every piece of text from a claim file or
a route goes through `escape`; formulas are sympy's LaTeX of the formula
text read back by `mathml.formula_from_text` (names there are plain
identifiers, so they cannot carry TeX commands), and a formula that cannot be
read back, or is too long to break across lines, is set as escaped
typewriter text instead.
"""

from __future__ import annotations

from collections.abc import Sequence

from crosscheck.explain import Explanation
from crosscheck.report.mathml import latex_of_text

MAX_MATH = 400  # longer formulas (sstr characters) do not fit a page line as mathematics
_SPECIALS = {
    "\\": r"\textbackslash{}", "&": r"\&", "%": r"\%", "$": r"\$", "#": r"\#", "_": r"\_", "{": r"\{",
    "}": r"\}", "~": r"\textasciitilde{}", "^": r"\textasciicircum{}", "<": r"\textless{}",
    ">": r"\textgreater{}", "|": r"\textbar{}", '"': r"\textquotedbl{}",
}
_UNICODE_OK = set("\u2013\u2014\u2018\u2019\u201c\u201d\u2026")  # dashes, quotes, ellipsis: in utf8.def with T1


def escape(text: str) -> str:
    """Text safe in a LaTeX paragraph: specials escaped, characters pdflatex cannot set named."""
    out = []
    for char in str(text):
        if char in _SPECIALS:
            out.append(_SPECIALS[char])
        elif char == "\n" or char == "\t":
            out.append(" ")
        elif ord(char) < 32 or ord(char) == 127:
            continue
        elif ord(char) < 128 or 0xA0 <= ord(char) <= 0xFF or char in _UNICODE_OK:
            out.append(char)
        else:
            out.append(f"[U+{ord(char):04X}]")
    return "".join(out)


def formula(text: str, display: bool = False) -> str:
    """A formula as LaTeX mathematics, or as escaped typewriter text when it cannot be."""
    latex = latex_of_text(text) if len(text) <= MAX_MATH else None
    if latex is None:
        return r"{\small\texttt{" + escape(text).replace(" ", r" \allowbreak ") + "}}"
    return (r"\[ " + latex + r" \]") if display else (r"\( \displaystyle " + latex + r" \)")


def section(item: Explanation) -> str:
    """One claim's section."""
    lines = [
        r"\section{" + escape(item.title) + "}",
        r"\label{claim:" + _label(item.claim_id) + "}",
        r"\noindent Claim \texttt{" + escape(item.claim_id) + r"} (\texttt{" + escape(item.location) + "}): "
        + escape(item.status) + ".",
    ]
    if item.error:
        lines += ["", r"\noindent The file could not be read: \texttt{" + escape(item.error) + "}"]
    if item.claim_text:
        lines += ["", r"\noindent The claim:", formula(item.claim_text, display=True)]
    if item.sources:
        lines += ["", r"\noindent Sources: " + "; ".join(escape(s) for s in item.sources) + "."]
    for route in item.routes:
        lines += ["", r"\subsection*{Route \texttt{" + escape(route.name) + "}}", escape(route.method)]
        if route.diagnosis:
            lines += ["", r"\noindent\textbf{Diagnosis:} " + escape(route.diagnosis)]
        if route.steps:
            lines += [r"\begin{enumerate}"]
            lines += [r"\item " + escape(label) + r"\\ " + formula(expr) for label, expr in route.steps]
            lines += [r"\end{enumerate}"]
    if item.table:
        lines += ["", r"\subsection*{Agreement}", _table(item)]
    if item.not_applicable:
        lines += ["", r"\noindent Not applicable: " + "; ".join(escape(n) for n in item.not_applicable) + "."]
    lines += [
        "", r"\subsection*{Reproduce}", r"\noindent\texttt{" + escape(item.command) + "}",
        "", r"\noindent Versions: " + escape(item.versions) + ".",
    ]
    return "\n".join(lines)


def _table(item: Explanation) -> str:
    rows = [r"\begin{tabular}{llllll}", r"\hline",
            r"route & grade & verdict & symbolic & numeric (largest rel.\ diff.) & time (s)\\", r"\hline"]
    for row in item.table:
        cells = (row.route, row.grade, row.status, row.symbolic, row.numeric, row.seconds)
        rows.append(" & ".join(escape(c) for c in cells) + r"\\")
    rows += [r"\hline", r"\end{tabular}"]
    return "\n".join(rows)


def _label(claim_id: str) -> str:
    return "".join(c if c.isalnum() or c in "-/" else "-" for c in claim_id)


def to_latex(explanations: Sequence[Explanation]) -> str:
    """A complete document; the sections sit between markers for pasting into a paper."""
    body = "\n\n".join(section(e) for e in explanations)
    return "\n".join([
        r"\documentclass[11pt]{article}",
        r"\usepackage[T1]{fontenc}",
        r"\usepackage[utf8]{inputenc}",
        r"\usepackage{amsmath}",
        r"\setlength{\emergencystretch}{3em}",
        r"\title{Independent checks by crosscheck}",
        r"\date{}",
        r"\begin{document}",
        r"\maketitle",
        r"\sloppy",
        "% crosscheck section begins",
        body,
        "% crosscheck section ends",
        r"\end{document}",
        "",
    ])
