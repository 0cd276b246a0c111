"""Fuzzing the command line with generated claim files (common practice: property tests).

Generated files are valid claims, claims with random expressions and ranges, and
broken YAML (random edits of a valid file, random text).  Whatever the input:
no traceback reaches the user, the exit code is 0, 1 or 2, and every error names
the file and line (`path:line:`).  The CLI runs in this process with cheap
options (one sample, 15 digits, one route, no cache, no workers) to stay fast.
"""

from __future__ import annotations

import re

import pytest
import yaml
from hypothesis import HealthCheck, event, given, settings
from hypothesis import strategies as st

from crosscheck.cli import main

FAST = ["--jobs", "0", "--no-cache", "--samples", "1", "--digits", "15", "--routes", "killing-horizon", "--timeout", "5"]
FUZZ = settings(max_examples=60, deadline=None,
                suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow])

NAMES = st.sampled_from(["M", "Q", "a", "r", "r_h", "T", "kappa", "S", "A", "pi", "E", "x", "F", "__class__", "oo"])
NUMBERS = st.one_of(
    st.integers(-10**6, 10**6).map(str),
    st.floats(-1e6, 1e6, allow_nan=False).map(repr),
    st.sampled_from(["1e-12", "0.5", "10**400", "9**9**9", "1/0", "0", "2.0e3"]),
)
FUNCTIONS = st.sampled_from(["sqrt", "exp", "log", "sin", "atanh", "abs", "Max", "diff", "limit", "evil", "__import__"])
JUNK = st.sampled_from(["(", ")", "**", "lambda x: x", "'text'", "x.y", "[1]", "x if y else z", ";", "=", "==", "@"])


def expressions(depth: int = 3) -> st.SearchStrategy[str]:
    """Arithmetic over names, numbers and calls, with some junk thrown in."""
    leaves = st.one_of(NAMES, NUMBERS)
    return st.recursive(
        leaves,
        lambda inner: st.one_of(
            st.tuples(inner, st.sampled_from(["+", "-", "*", "/", "**"]), inner).map(lambda t: f"({t[0]} {t[1]} {t[2]})"),
            st.tuples(FUNCTIONS, st.lists(inner, min_size=1, max_size=3)).map(lambda t: f"{t[0]}({', '.join(t[1])})"),
            st.tuples(inner, JUNK).map(lambda t: f"{t[0]} {t[1]}"),
        ),
        max_leaves=8,
    )


RANGES = st.one_of(
    st.tuples(st.floats(-5, 50, allow_nan=False), st.floats(-5, 50, allow_nan=False)).map(list),
    st.lists(st.integers(-3, 30), max_size=3),
    st.sampled_from(["[0.5, 20]", "wide", None, {"lo": 1}]),
)
SPACETIMES = st.one_of(
    st.sampled_from(["schwarzschild", "reissner-nordstrom", "kerr", "rindler", "de-sitter", "btz", "nowhere"]).map(
        lambda name: {"name": name}),
    expressions().map(lambda f: {"static": {"F": f}}),
    st.just("schwarzschild"),
)


@st.composite
def claim_documents(draw) -> dict:
    """A claim mapping: mostly well-formed keys with random values, sometimes extra keys."""
    document = {
        "id": draw(st.one_of(st.just("fuzz/claim"), st.text(max_size=12))),
        "spacetime": draw(SPACETIMES),
        "parameters": draw(st.dictionaries(NAMES, RANGES, max_size=3)),
        "claim": draw(st.one_of(st.tuples(expressions(), expressions()).map(lambda t: f"{t[0]} = {t[1]}"),
                                expressions(), st.just("T = 1/(8*pi*M)"))),
    }
    if draw(st.booleans()):
        document["tolerance"] = draw(st.one_of(st.sampled_from(["1e-9", "1.0e-9", "tight"]), st.floats(-1, 1)))
    if draw(st.booleans()):
        document[draw(st.sampled_from(["agreement", "routes", "units", "extra", "horizon"]))] = draw(
            st.one_of(st.text(max_size=8), st.integers(), st.lists(st.text(max_size=5), max_size=2)))
    return document


@st.composite
def broken_yaml(draw) -> str:
    """A valid claim's text with random characters deleted or inserted, or random text."""
    text = yaml.safe_dump(draw(claim_documents()), sort_keys=False)
    if draw(st.booleans()):
        return draw(st.text(alphabet=st.characters(codec="utf-8"), max_size=200))
    for _ in range(draw(st.integers(1, 4))):
        position = draw(st.integers(0, len(text)))
        if draw(st.booleans()):
            text = text[:position] + text[position + 1:]
        else:
            text = text[:position] + draw(st.sampled_from(["\t", ":", "[", "{", "'", "- ", "&a", "*a", "<<: ", "\n "])) + text[position:]
    return text


def plausible_expressions() -> st.SearchStrategy[str]:
    """Well-formed arithmetic in M: these claims load, so the routes, the comparison and the
    diagnosis all run on them."""
    leaves = st.one_of(st.sampled_from(["M", "pi", "2", "3", "1/2"]), st.integers(1, 9).map(str))
    return st.recursive(
        leaves,
        lambda inner: st.one_of(
            st.tuples(inner, st.sampled_from(["+", "-", "*", "/"]), inner).map(lambda t: f"({t[0]} {t[1]} {t[2]})"),
            st.tuples(inner, st.integers(-3, 3)).map(lambda t: f"{t[0]}**{t[1]}"),
            st.tuples(st.sampled_from(["sqrt", "exp", "log"]), inner).map(lambda t: f"{t[0]}({t[1]})"),
        ),
        max_leaves=5,
    )


@st.composite
def plausible_claims(draw) -> str:
    lo = draw(st.sampled_from([0.1, 0.5, 1, 2]))
    hi = lo + draw(st.sampled_from([0.5, 1, 10, 100]))
    observable = draw(st.sampled_from(["T", "kappa", "r_h", "A", "S"]))
    return yaml.safe_dump({
        "id": "fuzz/plausible", "spacetime": {"name": "schwarzschild"}, "parameters": {"M": [lo, hi]},
        "claim": f"{observable} = {draw(plausible_expressions())}",
    }, sort_keys=False)


CLAIM_FILES = st.one_of(
    claim_documents().map(lambda d: yaml.safe_dump(d, sort_keys=False, allow_unicode=True)),
    broken_yaml(),
    plausible_claims(),
    plausible_claims(),
    st.just("id: fuzz/good\nspacetime: {name: schwarzschild}\nparameters: {M: [0.5, 20]}\nclaim: T = 1/(8*pi*M)\n"),
)


@pytest.fixture(scope="module")
def claim_path(tmp_path_factory) -> str:
    return str(tmp_path_factory.mktemp("fuzz") / "claim.yaml")


def assert_user_facing(code: int, out: str, err: str, place: str) -> None:
    assert code in (0, 1, 2), (code, out, err)
    event(f"exit code {code}")
    assert "Traceback" not in out + err, out + err
    if code == 2:
        assert re.search(re.escape(place) + r":\d+:", err), err
    for line in out.splitlines():
        if re.search(r": (error|timeout|disagree): ", line):
            assert re.search(re.escape(place) + r":\d+:", line), line


@FUZZ
@given(text=CLAIM_FILES)
def test_generated_claim_files_never_crash_the_cli(text, claim_path, capsys):
    with open(claim_path, "w", encoding="utf-8") as stream:
        stream.write(text)
    code = main(["run", claim_path, *FAST])
    captured = capsys.readouterr()
    assert_user_facing(code, captured.out, captured.err, claim_path)


@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(left=st.one_of(expressions(), st.sampled_from(["T", "kappa"])), right=st.one_of(expressions(), plausible_expressions()))
def test_generated_one_off_claims_never_crash_the_cli(left, right, capsys):
    code = main(["check", f"{left} = {right}", "--spacetime", "schwarzschild", *FAST])
    captured = capsys.readouterr()
    assert_user_facing(code, captured.out, captured.err, "<command line>")
