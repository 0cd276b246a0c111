"""A one-off claim from the command line (`crosscheck check`), built without YAML text.

The pieces a student types become located nodes exactly like a claim file's,
so the same validation and error messages apply (positions refer to the
command line).  Family parameters get default ranges chosen so that every
sampled point is a non-extremal black hole.
"""

from __future__ import annotations

from collections.abc import Sequence

from crosscheck.claim import Claim
from crosscheck.claimfile import read_claim
from crosscheck.errors import ClaimError
from crosscheck.spacetimes import family
from crosscheck.yamlnodes import Loc, YMap, YNode, YScalar, YSeq

COMMAND_LINE = "<command line>"
DEFAULT_RANGES: dict[str, dict[str, tuple[str, str]]] = {
    "rindler": {"a": ("0.1", "10")},
    "schwarzschild": {"M": ("0.5", "20")},
    "reissner-nordstrom": {"M": ("1", "2"), "Q": ("0", "0.95")},
    "kerr": {"M": ("1", "2"), "a": ("0", "0.95")},
    "kerr-newman": {"M": ("1", "2"), "a": ("0", "0.6"), "Q": ("0", "0.6")},
    "de-sitter": {"H": ("0.1", "10")},
    "schwarzschild-de-sitter": {"M": ("0.5", "1"), "Lambda": ("0.01", "0.1")},
    "schwarzschild-anti-de-sitter": {"M": ("0.5", "20"), "L": ("1", "10")},
    "btz": {"M": ("0.1", "10"), "l": ("1", "10")},
    "tangherlini": {"mu": ("0.5", "20")},
    "charged-dilaton": {"M": ("1", "2"), "Q": ("0", "1.3")},
}


def _scalar(text: str, column: int = 1) -> YScalar:
    return YScalar(text, Loc(COMMAND_LINE, 1, column), "tag:yaml.org,2002:str", False)


def _node(value: object) -> YNode:
    here = Loc(COMMAND_LINE, 1, 1)
    if isinstance(value, dict):
        return YMap({k: _node(v) for k, v in value.items()}, here, {k: here for k in value})
    if isinstance(value, (list, tuple)):
        return YSeq(tuple(_node(v) for v in value), here)
    return _scalar(str(value))


def parse_param(text: str) -> tuple[str, tuple[str, str]]:
    """NAME=LO:HI -> (NAME, (LO, HI))."""
    name, sep, rest = text.partition("=")
    lo, sep2, hi = rest.partition(":")
    if not sep or not sep2 or not name or not lo or not hi:
        raise ClaimError(COMMAND_LINE, 1, 1, "--param", f"expected NAME=LO:HI, got '{text}'")
    return name.strip(), (lo.strip(), hi.strip())


def one_off_claim(
    equation: str,
    spacetime: str,
    params: Sequence[str] = (),
    *,
    units: str = "geometric",
    dim: int | None = None,
    horizon: str | None = None,
    known_routes=None,
) -> Claim:
    """Build and validate the claim; raises ClaimError on bad input."""
    try:
        fam = family(spacetime)
    except ValueError as exc:
        raise ClaimError(COMMAND_LINE, 1, 1, "--spacetime", str(exc)) from None
    ranges = dict(DEFAULT_RANGES.get(fam.name, {}))
    ranges.update(parse_param(p) for p in params)
    section: dict[str, object] = {"name": fam.name}
    if dim is not None:
        section["dim"] = dim
    if horizon is not None:
        section["horizon"] = horizon
    body: dict[str, object] = {
        "id": "command-line/claim",
        "title": f"{equation} ({fam.name})",
        "units": units,
        "spacetime": section,
        "parameters": {k: list(v) for k, v in ranges.items()},
        "claim": equation,
    }
    return read_claim(_node(body), known_routes)
