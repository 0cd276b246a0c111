"""Safe expression parser: claim text -> sympy, never evaluating the text.

`sympify` ends in `eval`, and no restricted globals stop `x.__class__.__mro__`.
So `ast.parse(mode="eval")` (which runs nothing) builds a tree that we walk
against an allowlist.  Numeric powers, sums and products are sized *before*
sympy computes them, so `9**9**9` fails at once.  Calculus stays unevaluated.
"""

from __future__ import annotations

import ast
import difflib
import keyword
import math
import re
import unicodedata
import warnings
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from fractions import Fraction

import sympy

from crosscheck.errors import ExprError

Functions = Mapping[str, Callable[..., sympy.Basic]]


@dataclass(frozen=True)
class ExprLimits:
    """Bounds keeping parsing and sympy's evaluation fast.  `max_argument_digits` (added)
    bounds numbers given to functions or fractional powers, which sympy factors."""

    max_length: int = 4000
    max_depth: int = 60
    max_nodes: int = 3000
    max_int_digits: int = 40
    max_exponent: int = 1000
    max_result_digits: int = 1000
    max_argument_digits: int = 100


DEFAULT_LIMITS = ExprLimits()
_MAX_DECIMAL_EXPONENT, _MAX_DIFF_ORDER = 300, 4
# sympy compares abs/Min/Max arguments by assumption queries (seconds for long ones)
_EXPENSIVE, _EXPENSIVE_BUDGET = frozenset({"abs", "Min", "Max"}), 400

_ONE = ("sqrt", "exp", "sin", "cos", "tan", "sinh", "cosh", "tanh", "asinh", "acosh", "atanh", "atan")
# name -> (sympy callable, fewest arguments, most arguments or None)
_BUILTINS = {
    **{name: (getattr(sympy, name), 1, 1) for name in _ONE},
    "abs": (sympy.Abs, 1, 1), "log": (sympy.log, 1, 2), "Min": (sympy.Min, 2, None), "Max": (sympy.Max, 2, None),
}
_CALCULUS = {"diff": ((2, 3), "diff(f, x) or diff(f, x, n)"), "limit": ((3,), "limit(f, x, point)"),
             "integrate": ((2, 4), "integrate(f, x) or integrate(f, x, lo, hi)")}
FUNCTION_NAMES: frozenset[str] = frozenset(_BUILTINS) | frozenset(_CALCULUS)
_CONSTANTS: dict[str, sympy.Basic] = {"pi": sympy.pi, "E": sympy.E, "oo": sympy.oo}
CONSTANT_NAMES: frozenset[str] = frozenset(_CONSTANTS)

_NAME_RE = re.compile(r"[A-Za-z](?:_?[A-Za-z0-9])*")  # no leading, trailing or double '_'
_FORBIDDEN: dict[type, str] = {
    ast.Attribute: "attribute access (a '.' after a name)", ast.Subscript: "indexing with [...]",
    ast.Lambda: "a lambda", ast.JoinedStr: "an f-string", ast.Compare: "a comparison (==, <, ...)",
    ast.BoolOp: "'and' / 'or'", ast.IfExp: "'... if ... else ...'", ast.Starred: "a starred argument (*x)",
    ast.NamedExpr: "':='", ast.Tuple: "a comma-separated list (write one expression)",
} | dict.fromkeys((ast.ListComp, ast.SetComp, ast.DictComp, ast.GeneratorExp), "a comprehension")
_OPERATORS = {ast.BitXor: "'^' is not a power; use ** (x**2)", ast.FloorDiv: "use / to divide"}
_UNDEFINED = (sympy.S.NaN, sympy.S.ComplexInfinity)


def is_valid_name(name: str) -> bool:
    """Whether `name` may be declared (keywords such as lambda could not be read back)."""
    valid = isinstance(name, str) and len(name) <= 40 and _NAME_RE.fullmatch(name)
    return bool(valid) and not keyword.iskeyword(name)


def parse_expression(text: str, names: Mapping[str, sympy.Basic], *, functions: Functions | None = None,
                     limits: ExprLimits = DEFAULT_LIMITS) -> sympy.Expr:
    """Parse `text` with `names` (Symbols, or expressions put in their place; they win
    over pi, E, oo), the function table and extra `functions`."""
    clean = _check_text(text, limits)
    return _Walker(clean, names, functions, limits).parse_span(0, len(clean))


def parse_equation(text: str, names: Mapping[str, sympy.Basic], *, functions: Functions | None = None,
                   limits: ExprLimits = DEFAULT_LIMITS) -> tuple[sympy.Expr, sympy.Expr, int]:
    """Split at the single top-level '='; return (lhs, rhs, column where the rhs starts)."""
    clean = _check_text(text, limits)
    split = _find_equals(clean)
    walker = _Walker(clean, names, functions, limits)
    lhs = walker.parse_span(0, split)
    return lhs, walker.parse_span(split + 1, len(clean)), walker.base


def _check_text(text: object, limits: ExprLimits) -> str:
    """Reject what must not reach Python's parser; line breaks become spaces (same columns)."""
    if not isinstance(text, str):
        raise ExprError(f"expected text, got {type(text).__name__}")
    if len(text) > limits.max_length:
        raise ExprError(f"the expression has {len(text)} characters; at most {limits.max_length} are allowed")
    depth = 0
    for column, char in enumerate(text):
        if not (" " <= char <= "~" or char in "\t\n\r"):
            label = unicodedata.name(char, "a control character")
            raise ExprError(f"character U+{ord(char):04X} ({label}) is not allowed; use plain ASCII", column)
        depth = max(depth + (char in "([{") - (char in ")]}"), 0)
        if depth > limits.max_depth:
            raise ExprError(f"brackets are nested more than {limits.max_depth} deep", column)
    for bad, message in (("__", "'__' is not allowed"), ("#", "'#' is not allowed (Python skips the rest)")):
        if bad in text:
            raise ExprError(message, text.index(bad))
    return text.translate(str.maketrans("\t\n\r", "   "))


def _find_equals(text: str) -> int:
    """Offset of the one top-level '=' (one inside brackets is left to the parser)."""
    found, depth = [], 0
    for column, char in enumerate(text):
        depth += (char in "([{") - (char in ")]}")
        pair = text[column : column + 2]
        if char in "<>" or pair == "!=":
            raise ExprError("inequalities are not allowed; write lhs = rhs", column)
        if pair == "==":
            raise ExprError("use a single '=' between the sides ('==' compares)", column)
        if char == "=" and depth == 0:
            found.append(column)
    if len(found) != 1:
        raise ExprError("an equation has exactly one '=' between its sides, e.g. T = 1/(8*pi*M)",
                        found[1] if found else None)
    return found[0]


def _log10(n: int) -> float:
    return math.log10(abs(n)) if n else 0.0


def _digits(value: sympy.Basic) -> float:
    """Decimal size of the number sympy keeps in front (the 2 of 2*x)."""
    if isinstance(value, sympy.Expr) and not value.is_Number:
        value = value.as_coeff_Mul()[0]
    return max(_log10(value.p), _log10(value.q)) if isinstance(value, sympy.Rational) else 0.0


def _unknown(kind: str, word: str, candidates: list[str], listing: str) -> str:
    match = difflib.get_close_matches(word, candidates, n=1, cutoff=0.6)
    return f"unknown {kind} '{word:.40}'; {listing}" + (f"; did you mean '{match[0]}'?" if match else "")


class _Walker:
    """Turns allowed AST nodes into sympy objects, for one text."""

    def __init__(self, text: str, names: Mapping[str, sympy.Basic], functions: Functions | None,
                 limits: ExprLimits) -> None:
        if set(functions or ()) & FUNCTION_NAMES:
            raise ValueError("extra functions may not replace built-in ones")
        self.text, self.names, self.limits = text, names, limits
        self.functions = dict(functions or {})
        self.segment, self.base, self.expensive_cost = "", 0, 0

    def fail(self, message: str, node: ast.AST | None = None) -> ExprError:
        return ExprError(message, self.base + (node.col_offset if node is not None else 0))

    def parse_span(self, start: int, end: int) -> sympy.Expr:
        """Parse text[start:end] past leading blanks (Python would read an indent)."""
        piece = self.text[start:end]
        self.segment = piece.lstrip(" ")
        self.base = start + len(piece) - len(self.segment)
        if not self.segment.strip():
            raise ExprError("the expression is empty", start)
        try:
            with warnings.catch_warnings():  # '1if x' warns; it is rejected anyway
                warnings.simplefilter("ignore")
                tree = ast.parse(self.segment, mode="eval")
        except SyntaxError as error:
            column = self.base + min(max((error.offset or 1) - 1, 0), len(self.segment))
            hint = " (write 2*x, not 2x)" if "decimal literal" in error.msg else ""
            raise ExprError(f"the expression is not well formed: {error.msg}{hint}", column) from None
        except (RecursionError, MemoryError, ValueError):
            raise ExprError("the expression is too deeply nested to read", self.base) from None
        count = sum(1 for n in ast.walk(tree) if isinstance(n, (ast.expr, ast.keyword)))
        if count > self.limits.max_nodes:
            raise ExprError(f"the expression has {count} parts; at most {self.limits.max_nodes} are allowed")
        result = self.node(tree.body, 1)
        if not isinstance(result, sympy.Expr):
            raise self.fail("this is not an arithmetic expression")
        return result

    def node(self, node: ast.AST, depth: int) -> sympy.Basic:
        if depth > self.limits.max_depth:
            raise self.fail(f"the expression is nested over {self.limits.max_depth} levels deep", node)
        if isinstance(node, ast.BinOp):
            result = self._binary(node, depth)
        elif isinstance(node, ast.UnaryOp) and isinstance(node.op, (ast.UAdd, ast.USub)):
            result = self.node(node.operand, depth + 1)
            result = self.build(node, sympy.Mul, -1, result) if isinstance(node.op, ast.USub) else result
        elif isinstance(node, ast.UnaryOp):
            raise self.fail("'not' and '~' are not allowed; use + - * / **", node)
        elif isinstance(node, ast.Constant):
            result = self._number(node)
        elif isinstance(node, ast.Name):
            result = self._name(node)
        elif isinstance(node, ast.Call):
            result = self._call(node, depth)
        else:
            raise self.fail(f"{_FORBIDDEN.get(type(node), type(node).__name__)} is not allowed", node)
        # every nan/zoo is born at some node (1/0, log(0), oo - oo): report it there
        if result in _UNDEFINED or isinstance(result, (sympy.Add, sympy.Mul)) and any(
                arg in _UNDEFINED for arg in result.args):
            raise self.fail("this part is undefined (division by zero, or a form like oo - oo)", node)
        return result

    def build(self, node: ast.AST, function: Callable[..., sympy.Basic], *args: object) -> sympy.Basic:
        try:
            return function(*args)
        except ExprError as error:  # from an extra function: place it at the call
            raise error if error.column is not None else self.fail(error.message, node) from None
        except (TypeError, ValueError, ArithmeticError, NotImplementedError, AttributeError) as error:
            raise self.fail(f"this cannot be built: {error}", node) from None

    def check(self, digits: float, limit: int, what: str, node: ast.AST) -> None:
        if digits > limit:
            raise self.fail(f"{what} has about {digits:.0f} digits; at most {limit} are allowed", node)

    def _binary(self, node: ast.BinOp, depth: int) -> sympy.Basic:
        if isinstance(node.op, (ast.Add, ast.Sub, ast.Mult, ast.Div)):
            return self._chain(node, depth)
        if isinstance(node.op, ast.Pow):
            base, exponent = self.node(node.left, depth + 1), self.node(node.right, depth + 1)
            self._check_power(base, exponent, node)
            return self.build(node, sympy.Pow, base, exponent)
        between = self.segment[node.left.end_col_offset : node.right.col_offset]  # holds the operator
        column = node.left.end_col_offset + len(between) - len(between.lstrip(" )"))
        message = _OPERATORS.get(type(node.op), f"'{between.strip(' ()')}' is not allowed; use + - * / **")
        raise ExprError(message, self.base + column)

    def _chain(self, node: ast.BinOp, depth: int) -> sympy.Basic:
        """a+b-c... or a*b/c...: flattened (no recursion for long sums), sized, built at once."""
        sums = isinstance(node.op, (ast.Add, ast.Sub))
        kinds = (ast.Add, ast.Sub) if sums else (ast.Mult, ast.Div)
        parts, current = [], node
        while isinstance(current, ast.BinOp) and isinstance(current.op, kinds):
            parts.append((current.op, current.right))
            current = current.left
        values = []
        for op, operand in [(None, current), *parts[::-1]]:
            value = self.node(operand, depth + 1)
            if isinstance(op, ast.Sub):
                value = self.build(operand, sympy.Mul, -1, value)
            elif isinstance(op, ast.Div):
                if isinstance(value, sympy.Expr) and value.is_Number and value.is_zero:
                    raise self.fail("division by zero", operand)
                value = self.build(operand, sympy.Pow, value, -1)
            values.append(value)
        numbers = [v.as_coeff_Add()[0] if sums else v.as_coeff_Mul()[0] for v in values if isinstance(v, sympy.Expr)]
        numbers = [n for n in numbers if isinstance(n, sympy.Rational) and n != 0] or [sympy.S.One]
        below, tops = sum(_log10(n.q) for n in numbers), [_log10(n.p) for n in numbers]
        # a sum's numerator is at most count * max|p| * prod(q); a product's is prod(p)
        above = math.log10(len(tops)) + max(tops) + below if sums else sum(tops)
        digits = self.limits.max_result_digits
        self.check(max(above, below), digits, "this number", node)
        result = self.build(node, sympy.Add if sums else sympy.Mul, *values)
        if isinstance(result, sympy.Expr):  # sympy distributes numbers: 10*(x+3) -> 10*x+30
            self.check(max(_digits(result), _digits(result.as_coeff_Add()[0])), digits, "this number", node)
        return result

    def _check_power(self, base: sympy.Basic, exponent: sympy.Basic, node: ast.AST) -> None:
        if not isinstance(exponent, sympy.Rational):
            return
        limit = self.limits.max_exponent
        if abs(exponent) > limit or exponent.q > limit:
            raise self.fail(f"the exponent {str(exponent):.40} is beyond {limit} (or 1/{limit})", node)
        if base == 0 and exponent < 0:
            raise self.fail("0 raised to a negative power is a division by zero", node)
        size = _digits(base)
        self.check(size * abs(float(exponent)), self.limits.max_result_digits, "this power", node)
        if exponent.q != 1:
            self.check(size, self.limits.max_argument_digits, "the number under a fractional power", node)

    def _number(self, node: ast.Constant) -> sympy.Rational:
        value = node.value
        # the literal's own text, not the float; slicing the one ASCII line is linear
        source = self.segment[node.col_offset : node.end_col_offset].replace("_", "")
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            shown = "a string (text in quotes)" if isinstance(value, (str, bytes)) else f"'{source:.40}'"
            raise self.fail(f"{shown} cannot be used here; only real numbers and names", node)
        mantissa, _, exponent = source.lower().partition("e")  # Python's grammar checked the form
        whole, _, fraction = mantissa.partition(".")
        if isinstance(value, int) and not source.isdigit():
            raise self.fail(f"write numbers in decimal digits (found '{source:.40}')", node)
        if len(whole.lstrip("0")) > self.limits.max_int_digits:
            raise self.fail(f"numbers have at most {self.limits.max_int_digits} digits; write e.g. 10**50", node)
        if isinstance(value, int):
            return sympy.Integer(value)
        if len(exponent) > 6 or abs(int(exponent or 0)) > _MAX_DECIMAL_EXPONENT:
            raise self.fail(f"the exponent of {source:.40} is beyond e+-{_MAX_DECIMAL_EXPONENT}", node)
        self.check(len(fraction) + abs(int(exponent or 0)), self.limits.max_result_digits, "this number", node)
        exact = Fraction(source)
        return sympy.Rational(exact.numerator, exact.denominator)

    def _name(self, node: ast.Name) -> sympy.Basic:
        if node.id in self.names:
            return self.names[node.id]
        if node.id in _CONSTANTS:
            return _CONSTANTS[node.id]
        if node.id in FUNCTION_NAMES or node.id in self.functions:
            raise self.fail(f"'{node.id}' is a function; write {node.id}(...)", node)
        listing = f"declared names: {', '.join(sorted(self.names)) or '(none)'}; constants: E, oo, pi"
        raise self.fail(_unknown("name", node.id, [*self.names, *_CONSTANTS], listing), node)

    def _call(self, node: ast.Call, depth: int) -> sympy.Basic:
        if not isinstance(node.func, ast.Name):
            raise self.fail("only named functions can be called, e.g. sqrt(x)", node)
        if node.keywords:  # f(x=1) or f(**d)
            raise self.fail("keyword arguments are not allowed; pass arguments by position", node.keywords[0])
        name = node.func.id
        if name in _CALCULUS:
            return self._calculus(name, node, depth)
        if name in self.functions:
            return self.build(node, self.functions[name], *[self.node(a, depth + 1) for a in node.args])
        if name in _BUILTINS:
            return self._builtin(name, node, depth)
        if name in self.names or name in _CONSTANTS:
            raise self.fail(f"'{name}' is not a function; write {name}*(...) to multiply", node.func)
        known = sorted([*FUNCTION_NAMES, *self.functions])
        raise self.fail(_unknown("function", name, known, f"available functions: {', '.join(known)}"), node.func)

    def _builtin(self, name: str, node: ast.Call, depth: int) -> sympy.Basic:
        function, low, high = _BUILTINS[name]
        count = len(node.args)
        if count < low or (high is not None and count > high):
            wanted = f"{low}" if low == high else f"{low} to {high}" if high else f"{low} or more"
            raise self.fail(f"{name} takes {wanted} argument(s), got {count}", node)
        if name in _EXPENSIVE:
            self.expensive_cost += count * sum(1 for a in node.args for n in ast.walk(a) if isinstance(n, ast.expr))
            if self.expensive_cost > _EXPENSIVE_BUDGET:
                raise self.fail("abs, Min and Max need short arguments; introduce a derived name", node)
        args = [self.node(a, depth + 1) for a in node.args]
        for argument in args:
            self.check(_digits(argument), self.limits.max_argument_digits, f"the number given to {name}", node)
        if name == "sqrt":
            self._check_power(args[0], sympy.Rational(1, 2), node)
        return self.build(node, function, *args)

    def _calculus(self, name: str, node: ast.Call, depth: int) -> sympy.Basic:
        """diff / limit / integrate, all built unevaluated."""
        args, (counts, usage) = node.args, _CALCULUS[name]
        if len(args) not in counts:
            raise self.fail(f"{name} takes {' or '.join(map(str, counts))} arguments: write {usage}", node)
        body = self.node(args[0], depth + 1)
        value = self._name(args[1]) if isinstance(args[1], ast.Name) else None
        if not isinstance(value, sympy.Symbol) or args[1].id not in self.names:
            raise self.fail(f"the variable of {name} must be a declared name, not a constant or derived", args[1])
        if name == "diff":
            order = 1 if len(args) == 2 else args[2].value if isinstance(args[2], ast.Constant) else None
            if type(order) is not int or not 1 <= order <= _MAX_DIFF_ORDER:
                raise self.fail(f"the order of diff must be a whole number from 1 to {_MAX_DIFF_ORDER}", args[2])
            return self.build(node, sympy.Derivative, body, (value, order))
        rest = [self.node(a, depth + 1) for a in args[2:]]
        if name == "limit":  # sympy itself turns '+' into '-' when the point is oo
            return self.build(node, sympy.Limit, body, value, rest[0], "+")
        return self.build(node, sympy.Integral, body, (value, *rest) if rest else value)
