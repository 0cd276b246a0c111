"""JUnit XML: parses, counts match the JSON result, ids are unique, text stays text.

Common practice: the JUnit shape CI systems read (testsuites > testsuite >
testcase with failure/error/skipped; see PITFALLS.md "CI output").
"""

from __future__ import annotations

import json
import xml.etree.ElementTree as ET

import pytest

from crosscheck.claimfile import load_claim_text
from crosscheck.errors import ClaimError
from crosscheck.report.json_report import to_json
from crosscheck.report.junit import to_junit, write_junit
from crosscheck.results import ClaimOutcome, RouteOutcome
from crosscheck.routes.registry import load_routes
from crosscheck.runner import RunOptions, invalid_outcome, run_claim

GOOD = """
id: junit/good
title: "<script>alert(1)</script> & co"
spacetime: {name: schwarzschild}
parameters: {M: [0.5, 20]}
claim: T = 1/(8*pi*M)
sources: ["S. W. Hawking, Commun. Math. Phys. 43, 199 (1975)"]
"""
WRONG = GOOD.replace("junit/good", "junit/wrong").replace("8*pi*M", "4*pi*M")
# Source: Wald 1984, sec. 12.5 (from memory): Phi_H = 0 for an uncharged hole; one route computes Phi.
PHI = GOOD.replace("junit/good", "junit/phi").replace("T = 1/(8*pi*M)", "Phi = 0")
RUN = {"command": "crosscheck run", "versions": {}, "options": {}}


@pytest.fixture(scope="module")
def outcomes():
    routes, _ = load_routes()
    result = []
    for text, path in ((GOOD, "claims/a.yaml"), (WRONG, "claims/a.yaml"), (PHI, "claims/b.yaml")):
        claims, errors = load_claim_text(text, path, known_routes=routes)
        assert not errors
        result.append(run_claim(claims[0], routes, RunOptions(samples=2)))
    result.append(invalid_outcome(ClaimError("claims/c.yaml", 3, 5, "parameters.M", "expected [lo, hi]")))
    return result


def test_junit_parses_and_counts_match_the_json(outcomes):
    root = ET.fromstring(to_junit(outcomes))
    claims = json.loads(to_json(outcomes, RUN))["claims"]
    statuses = [r["status"] for c in claims for r in c["routes"]]
    invalid = sum(1 for c in claims if c["status"] == "invalid")
    assert root.tag == "testsuites"
    assert int(root.get("tests")) == len(statuses) + invalid == len(root.findall(".//testcase"))
    assert int(root.get("failures")) == statuses.count("disagree") == len(root.findall(".//failure")) > 0
    assert int(root.get("skipped")) == statuses.count("not-applicable") + statuses.count("inconclusive") > 0
    assert int(root.get("errors")) == statuses.count("error") + statuses.count("timeout") + invalid == 1
    suites = root.findall("testsuite")
    assert [s.get("name") for s in suites] == ["claims/a.yaml", "claims/b.yaml", "claims/c.yaml"]  # one per file
    assert sum(int(s.get("tests")) for s in suites) == int(root.get("tests"))
    keys = [(c.get("classname"), c.get("name")) for c in root.iter("testcase")]
    assert len(keys) == len(set(keys))


def test_failure_carries_the_diagnosis_and_the_numbers(outcomes):
    root = ET.fromstring(to_junit(outcomes))
    case = root.find(".//testcase[@name='junit/wrong [killing-horizon]']")
    failure = case.find("failure")
    assert "constant factor 2" in failure.get("message")
    assert failure.text.startswith("claims/a.yaml:2: junit/wrong")  # the text starts with a blank line
    assert "claim: T = 1/(4*pi*M)" in failure.text and "relative difference" in failure.text
    phi = next(o for o in outcomes if o.claim_id == "junit/phi")
    quiet = [r for r in phi.routes if r.status in ("not-applicable", "inconclusive")]
    assert quiet
    for route in quiet:
        skipped = root.find(f".//testcase[@name='junit/phi [{route.route}]']/skipped")
        assert skipped.get("message").startswith(f"{route.status}: {route.reason[:40]}")
    error = root.find(".//testcase[@classname='claims/c.yaml']/error")
    assert "claims/c.yaml:3:5" in error.text


def test_text_from_claims_stays_text(outcomes):
    text = to_junit(outcomes)
    assert "<script>" not in text and "&lt;script&gt;" in text
    root = ET.fromstring(text)
    assert not list(root.iter("script"))
    hostile = RouteOutcome("r", "t", "exact", "error", reason="bad \x01\x1b byte </failure><x>")
    claim = ClaimOutcome("x/y", "t", "f.yaml", 1, "contradicted", routes=(hostile,))
    error = ET.fromstring(to_junit([claim])).find(".//error")
    assert error.get("message") == "bad \ufffd\ufffd byte </failure><x>"  # XML 1.0 forbids the controls


def test_write_junit_writes_the_file(outcomes, tmp_path):
    target = tmp_path / "out" / "junit.xml"
    write_junit(outcomes, str(target))
    assert ET.parse(target).getroot().get("tests") == ET.fromstring(to_junit(outcomes)).get("tests")
