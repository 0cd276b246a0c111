"""`crosscheck new`: print a claim file to fill in, for a built-in family and an observable.

The printed file is a valid claim (it loads with `claimfile`) so that an
editor with the JSON Schema and `crosscheck run` both accept it from the
first keystroke; the right-hand side of the claim line is the number 1, to be
replaced by the result being checked (a comment says so).  Parameter ranges
are the ones `crosscheck check` uses for the family, chosen so that every
sampled point is a non-extremal black hole.
"""

from __future__ import annotations

import sys

from crosscheck.observables import FUNCTION_OBSERVABLES, SCALAR_OBSERVABLES
from crosscheck.oneoff import DEFAULT_RANGES
from crosscheck.spacetimes import family

ID_WORDS = {
    "T": "temperature", "kappa": "surface-gravity", "A": "area", "S": "entropy", "Omega": "angular-velocity",
    "Phi": "potential", "r_h": "horizon-radius", "a_loc": "local-acceleration", "T_loc": "local-temperature",
    "T_eff": "detector-temperature", "rate": "detector-rate",
}
DETECTOR_OBSERVABLES = frozenset({"T_eff", "rate"})  # functions of the gap w, on a detector's worldline
DETECTOR_FAMILIES = frozenset({"minkowski"})  # where a uniformly accelerated detector is scaffolded
FALLBACK_RANGE = ("0.5", "2")  # a family without default ranges: positive and of order one


def observables() -> list[str]:
    """The observables a claim line may name (scaffolding accepts exactly these)."""
    return [*SCALAR_OBSERVABLES, *FUNCTION_OBSERVABLES]


def render_claim(spacetime: str, observable: str) -> str:
    """The claim file text; ValueError names the valid choices when one is unknown."""
    fam = family(spacetime)  # raises ValueError with the known families
    if observable not in observables():
        raise ValueError(f"unknown observable '{observable}'; known: {', '.join(observables())}")
    if observable in DETECTOR_OBSERVABLES:
        if fam.name not in DETECTOR_FAMILIES:
            raise ValueError(
                f"'{observable}' is a detector observable: scaffolded for {', '.join(sorted(DETECTOR_FAMILIES))} "
                "(uniform acceleration); write other worldlines by hand (DESIGN.md section 3)"
            )
        return _detector_claim(fam, observable)
    ranges = DEFAULT_RANGES.get(fam.name, {})
    meaning = {**SCALAR_OBSERVABLES, **FUNCTION_OBSERVABLES}[observable]
    left = f"{observable}(2*r_h)" if observable in FUNCTION_OBSERVABLES else observable
    lines = [
        f"# A claim about the {meaning}, {fam.title}.",
        f"# ds^2 = {fam.line_element}",
        f"# default horizon: {fam.default_horizon}",
        "# Fill in the claim line and the sources, then run: crosscheck run THIS_FILE",
        f"id: {fam.name}/{_word(observable)}",
        f"title: {_word(observable).replace('-', ' ').capitalize()}, {fam.title}",
        "spacetime:",
        f"  name: {fam.name}",
    ]
    if "dim" in fam.options:
        lines.append("  # dim: 5          # spacetime dimension, if not the family's default")
    lines.append("parameters:        # sampled over [lo, hi] for the numeric checks")
    if fam.symbols:
        for symbol in fam.symbols:
            lo, hi = ranges.get(symbol, FALLBACK_RANGE)
            lines.append(f"  {symbol}: [{lo}, {hi}]")
    else:
        lines[-1] = "parameters: {}     # this family has no parameters; add your own if the claim needs them"
    lines += [
        f"claim: {left} = 1   # replace 1 with the result to check (names: {', '.join(fam.symbols) or 'none'}, pi, E)",
        "sources:",
        '  - "where the result is published (mark from memory if so)"',
        "",
    ]
    return "\n".join(lines)


def _word(observable: str) -> str:
    return ID_WORDS.get(observable, observable.lower().replace("_", "-"))


def _detector_claim(fam, observable: str) -> str:
    """A uniformly accelerated detector (Unruh's setting) with the gap equal to the acceleration."""
    meaning = FUNCTION_OBSERVABLES[observable]
    return "\n".join([
        f"# A claim about {meaning}.",
        "# The detector is uniformly accelerated in Minkowski space; the argument of "
        f"{observable}(...) is the gap w.",
        "# Fill in the claim line and the sources, then run: crosscheck run THIS_FILE",
        f"id: {fam.name}/{_word(observable)}",
        f"title: {_word(observable).replace('-', ' ').capitalize()} of a uniformly accelerated detector",
        "spacetime:",
        f"  name: {fam.name}",
        "detector:",
        "  trajectory: uniform-acceleration",
        "  acceleration: a",
        "parameters:        # sampled over [lo, hi] for the numeric checks",
        "  a: [0.1, 10]",
        "band: [0.1, 3]     # gaps, in units of the acceleration, over which thermality is judged",
        f"claim: {observable}(a) = 1   # replace 1 with the result to check (names: a, pi, E)",
        "sources:",
        '  - "where the result is published (mark from memory if so)"',
        "",
    ])


def run_new(spacetime: str, observable: str, output: str | None = None) -> int:
    """The `crosscheck new` command: print (or write) the claim; 2 for an unknown name."""
    try:
        text = render_claim(spacetime, observable)
    except ValueError as exc:
        print(f"crosscheck: {exc}", file=sys.stderr)
        return 2
    if output:
        from crosscheck.report.files import write_atomic

        write_atomic(output, text)
    else:
        sys.stdout.write(text)
    return 0
