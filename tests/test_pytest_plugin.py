"""The pytest plugin: `pytest claims/` collects claim files, fails the contradicted ones,
and leaves an ordinary test run alone.

Common practice: pytest's "Working with non-python tests" pattern, checked
through pytester as pytest's own plugin tests do.
"""

from __future__ import annotations

import pytest

pytest_plugins = ["pytester"]

GOOD = """\
id: plugin/good
title: Hawking temperature
spacetime: {name: schwarzschild}
parameters: {M: [0.5, 20]}
claim: T = 1/(8*pi*M)
sources: ["S. W. Hawking, Commun. Math. Phys. 43, 199 (1975)"]
"""
WRONG = GOOD.replace("plugin/good", "plugin/wrong").replace("8*pi*M", "4*pi*M")
OPTIONS = ("-p", "crosscheck.pytest_plugin", "-p", "no:cacheprovider", "--claims-samples", "2")


@pytest.fixture
def tree(pytester: pytest.Pytester, monkeypatch: pytest.MonkeyPatch) -> pytest.Pytester:
    # Load the plugin explicitly (not through an installed entry point), so it is loaded once.
    monkeypatch.setenv("PYTEST_DISABLE_PLUGIN_AUTOLOAD", "1")
    pytester.makefile(".yaml", **{"claims/good": GOOD, "claims/wrong": WRONG})
    pytester.makefile(".yaml", **{"claims/ci-config": "jobs:\n  test: {runs-on: linux}\n"})
    pytester.makefile(".yaml", **{"tests/data/claim-like": GOOD.replace("plugin/good", "data/good")})
    pytester.makepyfile(**{"tests/test_ordinary": "def test_one():\n    assert 1 + 1 == 2\n"})
    pytester.makeini("[pytest]\ntestpaths = tests\n")
    return pytester


def test_claims_directory_collects_claims_and_fails_the_wrong_one(tree):
    result = tree.runpytest(*OPTIONS, "claims")
    result.assert_outcomes(passed=1, failed=1)
    assert result.ret == pytest.ExitCode.TESTS_FAILED
    text = result.stdout.str()
    assert "claims/wrong.yaml:1: plugin/wrong is CONTRADICTED" in text
    assert "claim: T = 1/(4*pi*M)" in text and "constant factor 2" in text
    assert "route 0.0" in text and "relative difference 5.00e-01" in text  # the route values at the points
    assert "ci-config" not in text  # YAML that is not a claim file is left alone


def test_k_selects_claims_and_ids_are_claim_ids(tree):
    result = tree.runpytest(*OPTIONS, "claims", "-k", "good", "-v")
    result.assert_outcomes(passed=1, deselected=1)
    assert result.ret == pytest.ExitCode.OK
    result.stdout.fnmatch_lines(["*claims/good.yaml::plugin/good PASSED*"])


def test_an_ordinary_run_collects_no_claim_files(tree):
    result = tree.runpytest(*OPTIONS)  # paths from testpaths: claim-like test data stays data
    result.assert_outcomes(passed=1)
    assert "data/good" not in result.stdout.str()
    explicit = tree.runpytest(*OPTIONS, "tests/test_ordinary.py")
    explicit.assert_outcomes(passed=1)


def test_claims_option_adds_paths(tree):
    result = tree.runpytest(*OPTIONS, "--claims", "claims/good.yaml")
    result.assert_outcomes(passed=2)  # the ordinary test and the named claim file


def test_invalid_claim_file_fails_with_its_position(tree):
    tree.makefile(".yaml", **{"claims/bad": GOOD.replace("plugin/good", "plugin/bad").replace("[0.5, 20]", "[3, 1]")})
    result = tree.runpytest(*OPTIONS, "claims/bad.yaml")
    result.assert_outcomes(failed=1)
    assert "claims/bad.yaml:4:" in result.stdout.str() and "parameters.M" in result.stdout.str()


def test_strict_fails_weak_claims(tree):
    tree.makefile(".yaml", **{"claims/weak": GOOD.replace("plugin/good", "plugin/weak") + "routes: [killing-horizon]\n"})
    tree.runpytest(*OPTIONS, "claims/weak.yaml").assert_outcomes(passed=1)
    tree.runpytest(*OPTIONS, "claims/weak.yaml", "--claims-strict").assert_outcomes(failed=1)
