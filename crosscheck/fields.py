"""Typed readers for located YAML values: each failure names file, line, column, field.

These are the small building blocks of the claim loader.  Every reader takes
the node and the dotted field name (for messages such as
`parameters.M: expected [lo, hi] with lo < hi, got [3, 1]`).
"""

from __future__ import annotations

import difflib
from collections.abc import Callable, Collection, Mapping

import sympy

from crosscheck.errors import ExprError
from crosscheck.expr import parse_expression
from crosscheck.yamlnodes import Loc, YMap, YNode, YScalar, YSeq


def expect_map(node: YNode, field: str) -> YMap:
    if not isinstance(node, YMap):
        raise node.loc.error(field, f"expected a mapping of keys, got {node.describe()}")
    return node


def expect_seq(node: YNode, field: str) -> YSeq:
    if not isinstance(node, YSeq):
        raise node.loc.error(field, f"expected a list, got {node.describe()}")
    return node


def expect_scalar(node: YNode, field: str) -> YScalar:
    if not isinstance(node, YScalar):
        raise node.loc.error(field, f"expected a single value, got {node.describe()}")
    return node


def check_keys(
    mapping: YMap, field: str, allowed: Collection[str], required: Collection[str] = ()
) -> None:
    """Unknown keys are errors, with the nearest valid key suggested."""
    for key in mapping.items:
        if key not in allowed:
            close = difflib.get_close_matches(key, sorted(allowed), n=1)
            hint = f"; did you mean '{close[0]}'?" if close else f"; valid keys: {', '.join(sorted(allowed))}"
            raise mapping.key_loc(key).error(_join(field, key), f"unknown key{hint}")
    for key in required:
        if key not in mapping.items:
            raise mapping.loc.error(field or key, f"missing required key '{key}'")


def _join(field: str, key: str) -> str:
    return f"{field}.{key}" if field else key


def text_of(node: YNode, field: str) -> str:
    scalar = expect_scalar(node, field)
    if scalar.tag == "tag:yaml.org,2002:null":
        raise scalar.loc.error(field, "value is empty")
    return scalar.text


def choice(node: YNode, field: str, options: Collection[str]) -> str:
    value = text_of(node, field)
    if value not in options:
        close = difflib.get_close_matches(value, sorted(options), n=1)
        hint = f" (did you mean '{close[0]}'?)" if close else ""
        raise node.loc.error(field, f"expected one of {', '.join(sorted(options))}, got '{value}'{hint}")
    return value


def expr_loc(scalar: YScalar, column: int | None) -> Loc:
    """Position of character `column` of a scalar's text (single-line scalars exactly)."""
    if column is None:
        return scalar.loc
    offset = 1 if scalar.quoted else 0
    return Loc(scalar.loc.path, scalar.loc.line, scalar.loc.column + offset + column)


def expression(
    node: YNode,
    field: str,
    names: Mapping[str, sympy.Basic],
    functions: Mapping[str, Callable[..., sympy.Basic]] | None = None,
) -> sympy.Expr:
    """Parse an expression field with our safe parser; errors point into the text."""
    scalar = expect_scalar(node, field)
    text = text_of(scalar, field)
    try:
        return parse_expression(text, names, functions=functions)
    except ExprError as exc:
        raise expr_loc(scalar, exc.column).error(field, exc.message) from None


def number(node: YNode, field: str, names: Mapping[str, sympy.Basic] | None = None) -> sympy.Expr:
    """A constant: a number or a closed expression in constants (pi, ...), exact."""
    value = expression(node, field, names or {})
    if value.free_symbols:
        raise node.loc.error(field, f"expected a number, got an expression in {sorted(map(str, value.free_symbols))}")
    if not value.is_real or value.is_infinite:
        raise node.loc.error(field, f"expected a finite real number, got {value}")
    return value


def positive_float(node: YNode, field: str, upper: float | None = None) -> float:
    """A positive number such as a tolerance; YAML 1.1 reads `1e-9` as text, we accept it."""
    value = float(number(node, field))
    if not value > 0 or (upper is not None and value >= upper):
        bound = f" and below {upper}" if upper is not None else ""
        raise node.loc.error(field, f"expected a number above 0{bound}, got {text_of(node, field)}")
    return value


def integer(node: YNode, field: str, lo: int, hi: int) -> int:
    text = text_of(node, field).strip()
    if not text.lstrip("-").isdigit() or not lo <= int(text) <= hi:
        raise node.loc.error(field, f"expected a whole number from {lo} to {hi}, got '{text}'")
    return int(text)


def string_list(node: YNode, field: str) -> tuple[str, ...]:
    if isinstance(node, YScalar):
        return (text_of(node, field),)
    return tuple(text_of(item, f"{field}[{i}]") for i, item in enumerate(expect_seq(node, field).items))


def pair(node: YNode, field: str, reader: Callable[[YNode, str], sympy.Expr]) -> tuple[sympy.Expr, sympy.Expr]:
    seq = expect_seq(node, field)
    if len(seq.items) != 2:
        raise seq.loc.error(field, f"expected [lo, hi], got a list of {len(seq.items)}")
    return reader(seq.items[0], f"{field}[0]"), reader(seq.items[1], f"{field}[1]")

