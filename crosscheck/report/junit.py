"""JUnit XML for CI dashboards: a testsuite per claim file, a testcase per (claim, route).

JUnit XML has no single standard (PITFALLS.md); this writes the common
subset that CI systems read: `testsuites` > `testsuite` (name = claim file)
> `testcase` (classname = claim file, name = `claim id [route]`, time), with

- `failure` for a disagreement (message and body: the diagnosis and the numbers),
- `error` for a route that crashed or ran out of time, and for a claim file
  that could not be read (one testcase named after the file and line),
- `skipped` for not-applicable routes and for inconclusive ones (the route ran
  but could not decide: neither a pass nor a failure).

The dimension check is a testcase like a route.  Text goes through
ElementTree (which escapes it) after removing the characters XML 1.0 cannot
hold, so any message from a claim file or an exception stays well-formed.
"""

from __future__ import annotations

import re
import xml.etree.ElementTree as ET
from collections.abc import Sequence

from crosscheck.report.files import write_atomic
from crosscheck.results import ClaimOutcome, RouteOutcome

_NOT_XML = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f\ufffe\uffff]")


def _text(value: object) -> str:
    return _NOT_XML.sub("\ufffd", str(value))


def case_name(outcome: ClaimOutcome, route: RouteOutcome | None) -> str:
    """`claim-id [route]`: unique because claim ids are unique in a run and routes per claim."""
    return f"{outcome.claim_id} [{route.route}]" if route is not None else outcome.claim_id


def to_junit(outcomes: Sequence[ClaimOutcome], name: str = "crosscheck") -> str:
    """The XML document as text."""
    root = ET.Element("testsuites", name=name)
    files: dict[str, list[ClaimOutcome]] = {}
    for outcome in outcomes:
        files.setdefault(outcome.file, []).append(outcome)
    totals = dict.fromkeys(("tests", "failures", "errors", "skipped"), 0)
    seconds = 0.0
    seen: set[tuple[str, str]] = set()
    for index, (path, claims) in enumerate(files.items()):
        suite = ET.SubElement(root, "testsuite", name=_text(path), id=str(index))
        counts = dict.fromkeys(totals, 0)
        suite_seconds = 0.0
        for outcome in claims:
            for case, kind in _cases(outcome):
                key = (case.get("classname", ""), case.get("name", ""))
                if key in seen:  # a duplicate id in one run (the loader refuses them); keep names unique
                    case.set("name", f"{key[1]} #{len(seen)}")
                seen.add((case.get("classname", ""), case.get("name", "")))
                suite.append(case)
                counts["tests"] += 1
                if kind:
                    counts[kind] += 1
                suite_seconds += float(case.get("time", "0"))
        for key, value in counts.items():
            suite.set(key, str(value))
            totals[key] += value
        suite.set("time", f"{suite_seconds:.3f}")
        seconds += suite_seconds
    for key, value in totals.items():
        root.set(key, str(value))
    root.set("time", f"{seconds:.3f}")
    ET.indent(root)
    return '<?xml version="1.0" encoding="utf-8"?>\n' + ET.tostring(root, encoding="unicode") + "\n"


def _cases(outcome: ClaimOutcome) -> list[tuple[ET.Element, str]]:
    """(testcase element, 'failures' | 'errors' | 'skipped' | '') for each route of a claim."""
    classname = _text(outcome.file)
    if outcome.status == "invalid" or not outcome.routes:
        case = ET.Element("testcase", classname=classname, name=_text(case_name(outcome, None)), time="0.000")
        if outcome.status == "invalid":
            _child(case, "error", "invalid claim file", outcome.error or "could not be read", "ClaimError")
            return [(case, "errors")]
        _child(case, "skipped", "no route was run for this claim", "", "")
        return [(case, "skipped")]
    return [_route_case(outcome, route, classname) for route in outcome.routes]


def _route_case(outcome: ClaimOutcome, route: RouteOutcome, classname: str) -> tuple[ET.Element, str]:
    case = ET.Element(
        "testcase", classname=classname, name=_text(case_name(outcome, route)), time=f"{route.seconds:.3f}",
        file=classname, line=str(outcome.line),
    )
    if route.status == "disagree":
        message = route.diagnosis.text if route.diagnosis else route.reason
        _child(case, "failure", message, failure_body(outcome, route), "disagree")
        return case, "failures"
    if route.status in ("error", "timeout"):
        _child(case, "error", route.reason or route.status, failure_body(outcome, route), route.status)
        return case, "errors"
    if route.status in ("not-applicable", "inconclusive"):
        _child(case, "skipped", f"{route.status}: {route.reason}".rstrip(": "), "", "")
        return case, "skipped"
    if route.reason:
        ET.SubElement(case, "system-out").text = _text(route.reason)
    return case, ""


def _child(case: ET.Element, tag: str, message: str, body: str, kind: str) -> None:
    child = ET.SubElement(case, tag, message=_text(message))
    if kind:
        child.set("type", kind)
    if body:
        child.text = _text(body)


def failure_body(outcome: ClaimOutcome, route: RouteOutcome) -> str:
    """What a person needs to act on: where, the claim, the route's values, the diagnosis."""
    lines = [f"{outcome.file}:{outcome.line}: {outcome.claim_id}: {outcome.title}"]
    if outcome.claim_text:
        lines.append(f"claim: {outcome.claim_text}")
    lines.append(f"route {route.route} ({route.title}): {route.status}")
    if route.reason:
        lines.append(f"reason: {route.reason}")
    if route.diagnosis:
        lines.append(f"diagnosis: {route.diagnosis.text}")
    for name, value in route.values.items():
        lines.append(f"route value: {name} = {value}")
    for row in route.numeric:
        point = ", ".join(f"{k}={v}" for k, v in row.point.items())
        lines.append(
            f"at {point}: route {row.route_value:.12g}, claim {row.claim_value:.12g}, "
            f"relative difference {row.rel_diff:.2e} (bound {row.bound:.1e}){'' if row.agree else '  <- differs'}"
        )
    return "\n".join(lines)


def write_junit(outcomes: Sequence[ClaimOutcome], path: str) -> None:
    """Write the JUnit file atomically (CI may read it while a later run rewrites it)."""
    write_atomic(path, to_junit(outcomes))
