"""Formulas for reports: result text back to sympy (safely), then MathML or LaTeX.

Results carry formulas as sympy `sstr` text (they must stay JSON- and
cache-friendly), so the reports rebuild a sympy object from that text with an
allowlist walk over Python's `ast` -- never `sympify`, `parse_expr` or `eval`
(PITFALLS.md).  sympy's automatic canonicalisation applies on the way back
(so the printers see the forms they are tested on; sstr text comes back as it
was), calculus stays unevaluated, and a number raised to a large power is kept
as a power, so a hostile `3**1500000000` costs nothing.

sympy's presentation printer writes symbol names unescaped, so names are only
accepted when they match a plain identifier pattern, and the printed MathML is
then parsed as XML and checked against an allowlist of elements and
attributes before it is marked safe.  Anything that fails becomes escaped
text: a formula is never dropped and never becomes markup.
"""

from __future__ import annotations

import ast
import functools
import html.entities
import re
import xml.etree.ElementTree as ET

import sympy
from markupsafe import Markup, escape
from sympy.printing.mathml import mathml as _sympy_mathml

MAX_NUMERIC_EXPONENT = 64  # a number to a larger power is printed, not computed
MAX_TEXT = 6000  # longer formulas are shown as text: no reader follows them as mathematics
_NAME = re.compile(r"_?[A-Za-z][A-Za-z0-9_]{0,39}")
_CONSTANTS: dict[str, sympy.Basic] = {
    "pi": sympy.pi, "E": sympy.E, "I": sympy.I, "oo": sympy.oo, "zoo": sympy.zoo, "nan": sympy.nan,
}
_FUNCTIONS: dict[str, object] = {
    "sqrt": sympy.sqrt,
    "exp": sympy.exp, "log": sympy.log, "sin": sympy.sin, "cos": sympy.cos, "tan": sympy.tan,
    "sinh": sympy.sinh, "cosh": sympy.cosh, "tanh": sympy.tanh, "asinh": sympy.asinh,
    "acosh": sympy.acosh, "atanh": sympy.atanh, "atan": sympy.atan, "asin": sympy.asin, "acos": sympy.acos,
    "abs": sympy.Abs, "Abs": sympy.Abs, "Min": sympy.Min, "Max": sympy.Max, "sign": sympy.sign,
    "diff": sympy.Derivative, "Derivative": sympy.Derivative,
    "limit": sympy.Limit, "Limit": sympy.Limit,
    "integrate": sympy.Integral, "Integral": sympy.Integral,
}
_MATHML_TAGS = frozenset({
    "math", "mrow", "mi", "mn", "mo", "mfrac", "msqrt", "mroot", "msup", "msub", "msubsup",
    "munder", "mover", "munderover", "mfenced", "mtable", "mtr", "mtd", "mtext", "mspace", "mstyle",
})
_MATHML_ATTRIBUTES = frozenset({
    "display", "xmlns", "mathvariant", "open", "close", "separators", "stretchy", "fence",
    "linethickness", "columnalign", "width", "lspace", "rspace", "form",
})


class NotAFormula(ValueError):
    """The text is not an expression this module reads back (it is shown as text instead)."""


# -- text to sympy ------------------------------------------------------------------------------
def formula_from_text(text: str) -> sympy.Basic:
    """`sstr`-style text (or a claim line `LHS = RHS`) to an unevaluated sympy object."""
    if len(text) > MAX_TEXT:
        raise NotAFormula("too long to typeset")
    sides = _split_equation(text)
    try:
        trees = [ast.parse(side.strip(), mode="eval").body for side in sides]
        built = [_build(tree, 0) for tree in trees]
    except (SyntaxError, ValueError, TypeError, RecursionError, MemoryError) as exc:
        raise NotAFormula(str(exc)) from None
    if len(built) == 2:
        return sympy.Eq(built[0], built[1], evaluate=False)
    return built[0]


def _split_equation(text: str) -> list[str]:
    """A claim line has exactly one '=' (the expression language has no comparisons)."""
    plain = text.replace("==", "\0")
    if plain.count("=") == 1:
        left, right = plain.split("=")
        return [left.replace("\0", "=="), right.replace("\0", "==")]
    return [text]


def _build(node: ast.AST, depth: int) -> sympy.Basic:
    if depth > 200:
        raise NotAFormula("nested too deeply")
    depth += 1
    if isinstance(node, ast.Constant) and type(node.value) in (int, float):
        return sympy.Integer(node.value) if isinstance(node.value, int) else sympy.Float(repr(node.value))
    if isinstance(node, ast.Name):
        return _name(node.id)
    if isinstance(node, ast.UnaryOp) and isinstance(node.op, (ast.USub, ast.UAdd)):
        operand = _build(node.operand, depth)
        return -operand if isinstance(node.op, ast.USub) else operand
    if isinstance(node, ast.BinOp):
        return _binary(node, depth)
    if isinstance(node, ast.Call) and isinstance(node.func, ast.Name) and not node.keywords:
        return _call(node.func.id, [_build(a, depth) for a in node.args])
    if isinstance(node, (ast.Tuple, ast.List)):
        return sympy.Tuple(*(_build(e, depth) for e in node.elts))
    if isinstance(node, ast.Compare) and len(node.ops) == 1 and isinstance(node.ops[0], ast.Eq):
        return sympy.Eq(_build(node.left, depth), _build(node.comparators[0], depth), evaluate=False)
    raise NotAFormula(f"unsupported syntax {type(node).__name__}")


def _name(name: str) -> sympy.Basic:
    if name in _CONSTANTS:
        return _CONSTANTS[name]
    if not _NAME.fullmatch(name):
        raise NotAFormula(f"not a plain name: {name!r}")
    return sympy.Symbol(name)


def _binary(node: ast.BinOp, depth: int) -> sympy.Basic:
    left, right = _build(node.left, depth), _build(node.right, depth)
    if isinstance(node.op, ast.Add):
        return left + right
    if isinstance(node.op, ast.Sub):
        return left - right
    if isinstance(node.op, ast.Mult):
        return left * right
    if isinstance(node.op, ast.Div):
        return left / right
    if isinstance(node.op, ast.Pow):
        if left.is_Number and right.is_Number and abs(right) > MAX_NUMERIC_EXPONENT:
            return sympy.Pow(left, right, evaluate=False)  # 3**1500000000 stays a formula
        return left**right
    raise NotAFormula(f"unsupported operator {type(node.op).__name__}")


def _call(name: str, args: list[sympy.Basic]) -> sympy.Basic:
    if not args:
        raise NotAFormula(f"{name}() without arguments")
    known = _FUNCTIONS.get(name)
    if known is not None:
        if name in ("diff", "Derivative", "limit", "Limit", "integrate", "Integral"):
            return _calculus(name, args)
        return known(*args)  # type: ignore[operator]
    if not _NAME.fullmatch(name):
        raise NotAFormula(f"not a plain function name: {name!r}")
    return sympy.Function(name)(*args)


def _calculus(name: str, args: list[sympy.Basic]) -> sympy.Basic:
    if name in ("limit", "Limit"):
        if len(args) != 3:
            raise NotAFormula("limit(expr, var, point)")
        return sympy.Limit(args[0], args[1], args[2])
    cls = sympy.Derivative if name in ("diff", "Derivative") else sympy.Integral
    return cls(*args, evaluate=False) if cls is sympy.Derivative else cls(*args)


# -- printing -----------------------------------------------------------------------------------
def mathml_of(expr: sympy.Basic, display: str = "inline") -> Markup:
    """Presentation MathML for a sympy object, checked against the allowlist."""
    body = _numeric_entities(_sympy_mathml(expr, printer="presentation"))
    page = f'<math display="{display}">{body}</math>'
    _check_markup(page)
    return Markup(page)


@functools.lru_cache(maxsize=4096)
def text_mathml(text: str, display: str = "inline") -> Markup:
    """MathML for formula text, or the text escaped inside <code> when it cannot be read back.

    Cached: routes repeat their steps across claims (a library report has about
    three formulas for each distinct one) and sympy's printer is the slow part.
    """
    try:
        return mathml_of(formula_from_text(text), display)
    except (NotAFormula, ET.ParseError, ValueError, TypeError, RecursionError, AttributeError):
        return Markup('<code class="formula-text">') + escape(text) + Markup("</code>")


@functools.lru_cache(maxsize=4096)
def latex_of_text(text: str) -> str | None:
    """LaTeX for formula text, or None when the text is not read back (callers escape it)."""
    try:
        return sympy.latex(_without_leading_underscores(formula_from_text(text)))
    except (NotAFormula, ValueError, TypeError, RecursionError, AttributeError):
        return None


def _without_leading_underscores(expr: sympy.Basic) -> sympy.Basic:
    """Routes name internal placeholders `_r_h`; LaTeX reads the leading `_` as a subscript
    of nothing (a 'Double subscript' error), so print them as `r_h`."""
    renamed = {s: sympy.Symbol(s.name.lstrip("_") or "x", **s.assumptions0)
               for s in expr.free_symbols if isinstance(s, sympy.Symbol) and s.name.startswith("_")}
    return expr.xreplace(renamed) if renamed else expr


def _numeric_entities(markup: str) -> str:
    """HTML named entities (&pi;, &InvisibleTimes;) as numeric ones, so the MathML is also XML."""

    def replace(match: re.Match) -> str:
        name = match.group(1) + ";"
        if name in html.entities.html5:
            return "".join(f"&#{ord(c)};" for c in html.entities.html5[name])
        raise ValueError(f"unknown entity &{name}")

    return re.sub(r"&([A-Za-z][A-Za-z0-9]*);", replace, markup)


def _check_markup(page: str) -> None:
    """Refuse anything but plain presentation MathML (defence in depth behind the name pattern)."""
    root = ET.fromstring(page)
    for element in root.iter():
        if element.tag not in _MATHML_TAGS:
            raise ValueError(f"unexpected element <{element.tag}> in MathML")
        extra = set(element.attrib) - _MATHML_ATTRIBUTES
        if extra:
            raise ValueError(f"unexpected attribute {sorted(extra)} in MathML")
