"""The safe parser: exact parses, equations, hostile input, fuzzing.  Expected values are
sympy objects built directly here: the parser is checked against sympy's own construction."""

from __future__ import annotations

import ast
import builtins
import string
import time
from decimal import Decimal
from pathlib import Path

import pytest
import sympy
from hypothesis import given, settings
from hypothesis import strategies as st

from crosscheck.errors import ExprError
from crosscheck.expr import (
    CONSTANT_NAMES,
    DEFAULT_LIMITS,
    FUNCTION_NAMES,
    ExprLimits,
    is_valid_name,
    parse_equation,
    parse_expression,
)
from crosscheck.observables import observable_function

M, r, q, x, R = sympy.symbols("M r q x R", positive=True)
NAMES = {"M": M, "r": r, "q": q, "x": x, "R": R, "Q": q * M}  # Q: a derived name
GUARD_SECONDS = 5.0  # sanity guard only; the hostile inputs below take milliseconds


def parse(text: str, **kwargs):
    return parse_expression(text, NAMES, **kwargs)


def rejected(text: str, **kwargs) -> ExprError:
    """Parse `text`, demand an ExprError, and that it came fast."""
    start = time.perf_counter()
    with pytest.raises(ExprError) as info:
        parse(text, **kwargs)
    assert time.perf_counter() - start < GUARD_SECONDS
    return info.value


# -- correct parses

# Source: the arithmetic is ordinary algebra (common practice); expected objects built by sympy.
@pytest.mark.parametrize(
    ("text", "expected"),
    [
        ("1 - 2*M/r", 1 - 2 * M / r),
        ("M + sqrt(M**2 - q**2)", M + sympy.sqrt(M**2 - q**2)),
        ("1/(8*pi*M)", 1 / (8 * sympy.pi * M)),
        ("-x", -x), ("+x", x), ("--x", x), ("2**-3", sympy.Rational(1, 8)), ("r**(M - 3)", r ** (M - 3)),
        ("x**2**3", x**8),  # ** is right-associative, as in Python
        ("exp(-x) * log(x, 2)", sympy.exp(-x) * sympy.log(x) / sympy.log(2)),
        ("sin(x)**2 + cos(x)**2", sympy.sin(x) ** 2 + sympy.cos(x) ** 2),
        ("tanh(x) + asinh(x) + acosh(x) + atanh(x) + atan(x)",
         sympy.tanh(x) + sympy.asinh(x) + sympy.acosh(x) + sympy.atanh(x) + sympy.atan(x)),
        ("sinh(x)/cosh(x) - tan(x)", sympy.sinh(x) / sympy.cosh(x) - sympy.tan(x)),
        ("abs(M - r)", sympy.Abs(M - r)),
        ("Min(M, r) + Max(M, r, q)", sympy.Min(M, r) + sympy.Max(M, r, q)),
        ("E**x * pi", sympy.E**x * sympy.pi),
        ("1 +\n  2*x", 1 + 2 * x),  # a YAML block scalar may span lines
        ("\tx * 3 ", 3 * x), ("10**999 / 10**998", sympy.Integer(10)), ("1_000", sympy.Integer(1000)),
    ],
)
def test_parses_match_sympy(text, expected):
    assert parse(text) == expected


def test_names_with_underscores():
    r_h = sympy.Symbol("r_h")
    assert parse_expression("2*r_h", {"r_h": r_h}) == 2 * r_h


# Source: exact decimal arithmetic (common practice): 0.5 = 1/2, 1e-9 = 10**-9.
@pytest.mark.parametrize(
    ("text", "expected"),
    [("0.5", sympy.Rational(1, 2)), ("1e-9", sympy.Rational(1, 10**9)), ("2.5e3", sympy.Integer(2500)),
     (".25", sympy.Rational(1, 4)), ("3.", sympy.Integer(3)), ("1E+3", sympy.Integer(1000)),
     ("0.1 + 0.2", sympy.Rational(3, 10)),  # exact, unlike binary floats
     ("6.674e-11", sympy.Rational(6674, 10**14))],
)
def test_decimals_are_exact_rationals(text, expected):
    value = parse(text)
    assert value == expected
    assert isinstance(value, sympy.Rational)


def test_derived_name_is_substituted():
    # Source: definition of the derived name Q = q*M in NAMES (common practice).
    assert parse("Q**2 / M**2") == q**2


def test_declared_names_win_over_constants():
    energy = sympy.Symbol("E")
    assert parse_expression("E + 1", {"E": energy}) == energy + 1
    assert parse_expression("E", {}) == sympy.E


def test_oo_is_infinity():
    assert parse("oo") is sympy.oo
    assert CONSTANT_NAMES == {"pi", "E", "oo"}


def test_extra_functions_are_called_with_parsed_arguments():
    a_loc = observable_function("a_loc")
    assert parse("a_loc(2*M) * r", functions={"a_loc": a_loc}) == a_loc(2 * M) * r


def test_extra_function_errors_point_at_the_call():
    def one_argument(*args):
        if len(args) != 1:
            raise ExprError("a_loc takes one argument")
        return sympy.Function("a_loc")(*args)

    with pytest.raises(ExprError) as info:
        parse("1 + a_loc(r, M)", functions={"a_loc": one_argument})
    assert info.value.column == 4


def test_extra_functions_cannot_replace_builtins():
    with pytest.raises(ValueError):
        parse("sqrt(x)", functions={"sqrt": sympy.exp})


# -- calculus stays unevaluated

def test_diff_is_unevaluated_and_correct():
    value = parse("diff(1 - 2*M/r, r)")
    assert isinstance(value, sympy.Derivative)
    # Source: elementary calculus (common practice): d/dr (1 - 2M/r) = 2M/r**2.
    assert sympy.simplify(value.doit() - 2 * M / r**2) == 0


def test_diff_with_order():
    value = parse("diff(r**3, r, 2)")
    assert value == sympy.Derivative(r**3, (r, 2))
    # Source: elementary calculus (common practice): d2/dr2 r**3 = 6 r.
    assert value.doit() == 6 * r


def test_schwarzschild_surface_gravity_from_diff():
    value = parse("diff(1 - 2*M/r, r) / 2")
    # Source: Wald 1984, section 12.5 (from memory): kappa = 1/(4M) for Schwarzschild, f = 1 - 2M/r.
    assert sympy.simplify(value.doit().subs(r, 2 * M) - 1 / (4 * M)) == 0


def test_diff_of_observable_placeholder_stays_symbolic():
    entropy = observable_function("S")(M, q)
    value = parse_expression("1/diff(S, M)", {"S": entropy, "M": M})
    assert value == 1 / sympy.Derivative(entropy, M)


def test_limit_is_unevaluated_and_correct():
    value = parse("limit(sin(x)/x, x, 0)")
    assert isinstance(value, sympy.Limit)
    # Source: elementary calculus (common practice): sin(x)/x -> 1 as x -> 0.
    assert value.doit() == 1
    # Source: elementary calculus (common practice): 1 - 2M/r -> 1 as r -> oo.
    assert parse("limit(1 - 2*M/r, r, oo)").doit() == 1


def test_integrate_definite_and_indefinite():
    definite = parse("integrate(r**2, r, 0, R)")
    assert definite == sympy.Integral(r**2, (r, 0, R))
    # Source: elementary calculus (common practice): integral of r**2 from 0 to R is R**3/3.
    assert definite.doit() == R**3 / 3
    # Source: elementary calculus (common practice): integral of exp(-r) over [0, oo) is 1.
    assert parse("integrate(exp(-r), r, 0, oo)").doit() == 1
    indefinite = parse("integrate(cos(x), x)")
    assert indefinite == sympy.Integral(sympy.cos(x), x)
    # Source: elementary calculus (common practice): an antiderivative of cos is sin.
    assert sympy.diff(indefinite.doit() - sympy.sin(x), x) == 0


@pytest.mark.parametrize(  # Q is a derived name, pi a constant: neither is a variable
    "text", ["diff(x**2, Q)", "diff(x**2, pi)", "diff(x**2, 2*x)", "diff(x, x, 5)", "diff(x, x, 0)",
             "diff(x, x, 2.0)", "diff(x, x, True)", "diff(x, x, M)", "diff(x)", "limit(x, x)",
             "integrate(x, x, 0)", "integrate(x)"],
)
def test_calculus_misuse_rejected(text):
    rejected(text)


# -- equations

T = observable_function("T")(M)
EQ_NAMES = {**NAMES, "T": T}


def test_equation_split_with_column():
    lhs, rhs, column = parse_equation("T = 1/(8*pi*M)", EQ_NAMES)
    assert lhs == T
    assert rhs == 1 / (8 * sympy.pi * M)
    assert column == 4


def test_equation_column_skips_blanks():
    text = "  T   =   M  "
    assert parse_equation(text, EQ_NAMES) == (T, M, text.index("M"))


def test_equation_error_columns_are_offsets_into_whole_text():
    text = "T = 1/(8*pi*y)"
    with pytest.raises(ExprError) as info:
        parse_equation(text, EQ_NAMES)
    assert info.value.column == text.index("y")
    text = "T*z = 1"
    with pytest.raises(ExprError) as info:
        parse_equation(text, EQ_NAMES)
    assert info.value.column == text.index("z")


@pytest.mark.parametrize(
    ("text", "column"),
    [
        ("T == 1", 2), ("T = 1 = 2", 6), ("T < 1", 2), ("T <= 1", 2), ("T >= 1", 2), ("T != 1", 2),
        ("T + 1", None), ("T = ", 3), (" = 1", 0),
    ],
)
def test_bad_equations_rejected(text, column):
    with pytest.raises(ExprError) as info:
        parse_equation(text, EQ_NAMES)
    assert info.value.column == column


def test_equals_inside_brackets_is_a_keyword_error():
    with pytest.raises(ExprError, match="keyword"):
        parse_equation("sqrt(x=1) = 2", EQ_NAMES)


# -- hostile input

HOSTILE = [
    ("x.__class__.__mro__[-1]", "__"), ("().__class__", "__"), ("x.real", "attribute"),
    ("().real", "attribute"), ("__import__", "__"), ("__builtins__", "__"), ("lambda: 1", "lambda"),
    ("(lambda: 1)()", "called"), ("'abc'", "string"), ("b'x'", "string"), ("f'{x}'", "f-string"),
    ("[x for x in r]", "comprehension"), ("{x: 1 for x in r}", "comprehension"), ("x[0]", "indexing"),
    ("x[1:2]", "indexing"), ("sqrt(x=1)", "keyword"), ("sqrt(**x)", "keyword"), ("sqrt(*x)", "starred"),
    ("x if r else M", "if"), ("x and r", "and"), ("not x", "not"), ("~x", "~"), ("(x := 1)", ":="),
    ("x, r", "comma"), ("[1, 2]", "List"), ("{1: 2}", "Dict"), ("await x", "Await"), ("x == r", "comparison"),
    ("3**1500000000", "exponent"), ("9**9**9", "exponent"), ("10**10**10", "exponent"),
    ("(2**64)**64**64", "exponent"), ("2**(1/10**30)", "exponent"), ("x**(10**9)", "exponent"),
    ("factorial(10**7)", "unknown function"), ("gamma(x)", "unknown function"),
    ("eval('1')", "unknown function"), ("open('f')", "unknown function"),
    ("getattr(x, 'y')", "unknown function"), ("Symbol('x')", "unknown function"), ("x^2", "**"),
    ("x // 2", "/"), ("x % 2", "%"), ("x @ r", "@"), ("\u03c0*r", "ASCII"), ("r\u202e", "ASCII"),
    ("r\x00", "ASCII"), ("x # comment", "#"), ("1j", "1j"), ("True", "True"), ("None", "None"), ("...", "..."),
    ("0x10", "decimal"), ("1" * 41, "digits"), ("1e400", "exponent"), ("0." + "0" * 1500 + "1", "digits"),
    ("sqrt(10**999 + 7)", "digits"), ("(10**999 + 7)**(1/2)", "digits"), ("log(10**999 + 7)", "digits"),
    ("*".join(["10**999"] * 10), "digits"), ("+".join(f"1/(10**999 + {i})" for i in range(3)), "digits"),
    ("10**999 * (10**999 + x)", "digits"), ("(10**999 * x)**2", "digits"), ("1/0", "division by zero"),
    ("x/(r - r)", "division by zero"), ("0**-1", "division by zero"), ("log(0)", "undefined"),
    ("oo - oo", "undefined"), ("2x", "2*x"), ("3 x", "well formed"), ("(x", "well formed"),
    ("x)", "well formed"), ("", "empty"), ("   ", "empty"), ("y", "unknown name"), ("sqrt", "function"),
    ("M(x)", "not a function"), ("x(1)(2)", "called"), ("Max(x)", "Max"), ("log(x, 2, 3)", "log"),
    ("sqrt(x, r)", "sqrt"), ("(" * 5000 + "x" + ")" * 5000, "characters"), ("x + " * 2000 + "x", "characters"),
    ("abs(" + "+".join(f"sin({i}*x)" for i in range(100)) + ")", "abs"),
    ("Max(" + ",".join(f"{i}*x" for i in range(40)) + ")", "Max"),
]


@pytest.mark.parametrize(("text", "fragment"), HOSTILE, ids=[t[:30] for t, _ in HOSTILE])
def test_hostile_input_rejected_quickly(text, fragment):
    error = rejected(text)
    assert fragment in error.message
    assert error.column is None or 0 <= error.column <= len(text)


@pytest.mark.parametrize(
    "text",
    [
        "(" * 5000 + "x" + ")" * 5000,  # brackets deeper than max_depth
        "-" * 3000 + "x",  # unary chain: Python's parser itself gives up
        "-" * 70 + "x",  # deeper than max_depth, within Python's reach
        "2**" * 1000 + "2",
        "x+" * 19999 + "x",  # beyond max_nodes
        "sqrt(" * 70 + "x" + ")" * 70,
        "1" * 5000,
    ],
)
def test_deep_or_huge_input_rejected_even_with_a_long_length_limit(text):
    rejected(text, limits=ExprLimits(max_length=100_000))


def test_long_but_legitimate_sum_parses():
    # Source: arithmetic (common practice): 400 terms r**0 + ... + r**399.
    text = " + ".join(f"r**{i}" for i in range(400))
    start = time.perf_counter()
    assert parse(text) == sympy.Add(*[r**i for i in range(400)])
    assert time.perf_counter() - start < GUARD_SECONDS


@pytest.mark.parametrize(
    ("text", "column"),
    [("x + y", 4), ("x^2", 1), ("(x) ^ 2", 4), ("1 + 2x", 4), ("sqrt(x=1)", 5), ("r \u03c0", 2),
     ("x + 1/0", 6), ("M * factorial(3)", 4), ("  x.real", 2), ("diff(x, Q)", 8)],
)
def test_error_columns(text, column):
    assert rejected(text).column == column


def test_error_messages_help():
    assert "did you mean 'M'" in rejected("MM + 1").message
    message = rejected("y").message
    assert all(name in message for name in NAMES)
    assert "sqrt" in rejected("sqr(x)").message


def test_non_text_rejected():
    with pytest.raises(ExprError):
        parse_expression(2, NAMES)  # type: ignore[arg-type]


def test_limits_are_configurable():
    tight = ExprLimits(max_length=10, max_depth=3, max_nodes=5, max_int_digits=2,
                       max_exponent=3, max_result_digits=5, max_argument_digits=2)
    rejected("x" * 11, limits=tight)
    rejected("((((x))))", limits=tight)
    rejected("x+x+x+x", limits=tight)
    rejected("123", limits=tight)
    rejected("x**4", limits=tight)
    rejected("99**3", limits=tight)
    rejected("sqrt(999)", limits=tight)
    assert parse("((x))", limits=tight) == x
    assert DEFAULT_LIMITS == ExprLimits()


PAYLOADS = ["__import__('os').system('touch {p}')", "open('{p}', 'w')", "eval(\"open('{p}', 'w')\")",
            "exec(\"open('{p}', 'w')\")", "(lambda: open('{p}', 'w'))()", "[open('{p}', 'w') for _ in r]",
            "x.real.conjugate(open('{p}', 'w'))", "sqrt(open('{p}', 'w'))", "diff(open('{p}', 'w'), x)"]


@pytest.mark.parametrize("payload", PAYLOADS)
def test_no_code_runs(payload, tmp_path: Path):
    target = tmp_path / "pwned"
    text = payload.format(p=target)
    with pytest.raises(ExprError):
        parse(text)
    with pytest.raises(ExprError):
        parse_equation(f"T = {text}", EQ_NAMES)
    assert not target.exists()


def test_no_eval_or_exec_during_parsing(monkeypatch):
    def forbidden(*args, **kwargs):
        raise AssertionError("eval/exec called")

    monkeypatch.setattr(builtins, "eval", forbidden)
    monkeypatch.setattr(builtins, "exec", forbidden)
    assert parse("sqrt(M**2 - q**2) + diff(r**2, r) + 0.5") == (
        sympy.sqrt(M**2 - q**2) + sympy.Derivative(r**2, r) + sympy.Rational(1, 2)
    )


def test_module_never_calls_text_evaluators():
    source = Path(__file__).parents[1].joinpath("crosscheck", "expr.py").read_text(encoding="utf-8")
    calls = [node.func for node in ast.walk(ast.parse(source)) if isinstance(node, ast.Call)]
    bare = {func.id for func in calls if isinstance(func, ast.Name)}
    attributes = {func.attr for func in calls if isinstance(func, ast.Attribute)}
    assert not bare & {"eval", "exec", "compile", "__import__", "S", "sympify", "parse_expr"}
    assert not attributes & {"sympify", "parse_expr", "S", "Symbol", "symbols", "eval", "exec", "parse_expression"}
    assert "parse" in attributes  # ast.parse: the tree is built by Python's parser, which runs nothing
    # the only getattr reads fixed sympy function names from a literal tuple, never text
    assert sum(isinstance(f, ast.Name) and f.id == "getattr" for f in calls) == 1


# -- names

@pytest.mark.parametrize("name", ["M", "r_h", "a1", "T_loc", "Omega", "x" * 40, "q2_b3"])
def test_valid_names(name):
    assert is_valid_name(name)


@pytest.mark.parametrize(
    "name",
    ["", "_a", "a_", "a__b", "__x__", "1a", "a-b", "a b", "x" * 41, "lambda", "None", "in",
     "\u03c0", "a.b", "a\n"],
)
def test_invalid_names(name):
    assert not is_valid_name(name)


def test_function_table():
    assert FUNCTION_NAMES == set("sqrt exp log sin cos tan sinh cosh tanh asinh acosh atanh atan abs Min Max "
                                 "diff limit integrate".split())


# -- fuzzing

TOKENS = ["x", "M", "r", "Q", "y", "0", "1", "2", "10", "0.5", "1e3", "9", "+", "-", "*", "/", "**", "^",
          "(", ")", ",", " ", "=", "==", ".", "_", "[", "]", "'", "sqrt", "log", "diff", "limit",
          "integrate", "exp", "sin", "Min", "abs", "oo", "pi", "E", "lambda", ":", "if", "else", "j"]


def _parse_or_error(text: str) -> None:
    try:
        result = parse(text)
    except ExprError as error:
        assert error.column is None or 0 <= error.column <= len(text)
    else:
        assert isinstance(result, sympy.Expr)


@settings(max_examples=200, deadline=None)
@given(st.lists(st.sampled_from(TOKENS), max_size=25).map("".join))
def test_fuzz_tokens_give_expression_or_expr_error(text):
    _parse_or_error(text)


@settings(max_examples=200, deadline=None)
@given(st.text(alphabet=string.printable + "\u03c0\u00e9", max_size=40))
def test_fuzz_characters_give_expression_or_expr_error(text):
    _parse_or_error(text)


@settings(max_examples=100, deadline=None)
@given(st.decimals(min_value=0, max_value=10**6, places=6, allow_nan=False, allow_infinity=False))
def test_fuzz_decimal_literals_exact(value):
    text = str(value)
    # Source: Python's decimal module gives the exact ratio of the written digits (common practice).
    numerator, denominator = Decimal(text).as_integer_ratio()
    assert parse(text) == sympy.Rational(numerator, denominator)


UNDEFINED = (sympy.nan, sympy.zoo)


def _leaf():
    symbols = st.sampled_from([("x", x), ("M", M), ("r", r), ("pi", sympy.pi)])
    integers = st.integers(0, 12).map(lambda n: (str(n), sympy.Integer(n)))
    decimals = st.decimals(min_value=0, max_value=100, places=2, allow_nan=False, allow_infinity=False).map(
        lambda d: (str(d), sympy.Rational(*Decimal(str(d)).as_integer_ratio()))
    )
    return st.one_of(symbols, integers, decimals).map(lambda pair: (*pair, False))


def _combine(children):
    """Render a node and build the same node with sympy; flag nan/zoo anywhere on the way."""
    binary = st.tuples(st.sampled_from("+-*/"), children, children)
    power = st.tuples(st.just("**"), children, st.sampled_from(["-2", "-1", "0", "2", "3", "(1/2)"]))
    unary = st.tuples(st.sampled_from("neg sqrt exp sin cos atan log".split()), children)

    def make_binary(item):
        op, (ta, a, ua), (tb, b, ub) = item
        value = {"+": sympy.Add, "-": lambda a, b: a - b, "*": sympy.Mul, "/": lambda a, b: a / b}[op](a, b)
        return f"({ta} {op} {tb})", value, ua or ub or value.has(*UNDEFINED)

    def make_power(item):
        _, (ta, a, ua), exponent = item
        value = a ** (sympy.Rational(1, 2) if exponent == "(1/2)" else sympy.Integer(int(exponent)))
        return f"({ta})**{exponent}", value, ua or value.has(*UNDEFINED)

    def make_unary(item):
        name, (ta, a, ua) = item
        if name == "neg":
            return f"(-{ta})", -a, ua
        value = getattr(sympy, name)(a)
        return f"{name}({ta})", value, ua or value.has(*UNDEFINED)

    return st.one_of(binary.map(make_binary), power.map(make_power), unary.map(make_unary))


EXPRESSIONS = st.recursive(_leaf(), _combine, max_leaves=6)


@settings(max_examples=150, deadline=None)
@given(EXPRESSIONS)
def test_fuzz_generated_expressions_match_sympy(item):
    text, expected, undefined = item
    if undefined:
        with pytest.raises(ExprError):
            parse(text)
        return
    parsed = parse(text)
    # Source: sympy builds the same tree directly (independent construction, common practice).
    assert parsed == expected or sympy.simplify(parsed - expected) == 0


@settings(max_examples=50, deadline=None)
@given(EXPRESSIONS, EXPRESSIONS)
def test_fuzz_equations_split_where_written(left, right):
    if left[2] or right[2]:
        return
    text = f"{left[0]} = {right[0]}"
    lhs, rhs, column = parse_equation(text, NAMES)
    assert column == len(left[0]) + 3
    assert lhs == parse(left[0]) and rhs == parse(right[0])
