"""Markdown for `crosscheck explain --markdown` (CommonMark with `$...$` mathematics).

Text from claim files and routes is escaped: HTML's `< > &` as entities (a
renderer that allows inline HTML must still show `<script>` as text) and
Markdown's punctuation with backslashes (so a title cannot become a link,
emphasis, a heading or mathematics).  Formulas are sympy's LaTeX of the
read-back formula text, whose names are plain identifiers.
"""

from __future__ import annotations

import re
from collections.abc import Sequence

from crosscheck.explain import Explanation
from crosscheck.report.mathml import latex_of_text

MAX_MATH = 400
_PUNCTUATION = re.compile(r"([\\`*_{}\[\]#|~$])")  # emphasis, code, links, headings, tables, maths
_LINE_START = re.compile(r"^([-+=]|\d+(?=[.)]))")  # would start a list or a setext heading


def escape(text: str) -> str:
    """Inline text that renders as itself."""
    text = " ".join(str(text).split())
    text = text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
    text = _PUNCTUATION.sub(r"\\\1", text)
    return _LINE_START.sub(lambda m: "\\" + m.group(1) if not m.group(1).isdigit() else m.group(1) + "\\", text)


def code_block(text: str) -> str:
    """A fenced block whose fence is longer than any run of backticks inside."""
    longest = max((len(run) for run in re.findall(r"`+", text)), default=0)
    fence = "`" * max(3, longest + 1)
    return f"{fence}\n{text}\n{fence}"


def formula(text: str, display: bool = False) -> str:
    latex = latex_of_text(text) if len(text) <= MAX_MATH else None
    if latex is None:
        return code_block(text) if display else "`` " + text.replace("`", "'") + " ``"
    return f"$$\n{latex}\n$$" if display else f"${latex}$"


def section(item: Explanation) -> str:
    lines = [
        f"## {escape(item.title)}", "",
        f"Claim `{item.claim_id}` ({escape(item.location)}): {escape(item.status)}.",
    ]
    if item.error:
        lines += ["", "The file could not be read:", "", code_block(item.error)]
    if item.claim_text:
        lines += ["", "The claim:", "", formula(item.claim_text, display=True)]
    if item.sources:
        lines += ["", "Sources: " + "; ".join(escape(s) for s in item.sources) + "."]
    for route in item.routes:
        lines += ["", f"### Route {escape(route.name)}", "", escape(route.method)]
        if route.diagnosis:
            lines += ["", f"**Diagnosis:** {escape(route.diagnosis)}"]
        if route.steps:
            lines += [""] + [f"{n}. {escape(label)}: {formula(expr)}" for n, (label, expr) in enumerate(route.steps, 1)]
    if item.table:
        lines += ["", "### Agreement", "", "| route | grade | verdict | symbolic | numeric (largest rel. diff.) | time (s) |",
                  "|---|---|---|---|---|---|"]
        for row in item.table:
            cells = (row.route, row.grade, row.status, row.symbolic, row.numeric, row.seconds)
            lines.append("| " + " | ".join(escape(c) for c in cells) + " |")
    if item.not_applicable:
        lines += ["", "Not applicable: " + "; ".join(escape(n) for n in item.not_applicable) + "."]
    lines += ["", "### Reproduce", "", code_block(item.command), "", f"Versions: {escape(item.versions)}."]
    return "\n".join(lines)


def to_markdown(explanations: Sequence[Explanation]) -> str:
    return "# Independent checks by crosscheck\n\n" + "\n\n".join(section(e) for e in explanations) + "\n"
