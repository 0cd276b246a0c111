"""The command line end to end on temporary claim files, exit codes included.

Runs `python -m crosscheck` in a subprocess, as a user or CI would.
"""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

GOOD = """
id: cli/schwarzschild
spacetime: {name: schwarzschild}
parameters: {M: [0.5, 20]}
claim: T = 1/(8*pi*M)
sources: ["S. W. Hawking, Commun. Math. Phys. 43, 199 (1975)"]
"""
WRONG = GOOD.replace("cli/schwarzschild", "cli/wrong").replace("8*pi*M", "4*pi*M")


def crosscheck(*args: str, cwd: Path | None = None) -> subprocess.CompletedProcess:
    return subprocess.run(
        [sys.executable, "-m", "crosscheck", *args], capture_output=True, text=True, timeout=300, cwd=cwd,
    )


def test_run_confirmed_claim_exits_zero_and_writes_json(claim_file, tmp_path):
    path = claim_file(GOOD)
    out = tmp_path / "out.json"
    html = tmp_path / "report.html"
    result = crosscheck("run", path, "--json", str(out), "--html", str(html), "--samples", "3")
    assert result.returncode == 0, result.stdout + result.stderr
    assert "CONFIRMED" in result.stdout and "cli/schwarzschild" in result.stdout
    document = json.loads(out.read_text())
    assert document["schema"] == "crosscheck-result/1"
    [claim] = document["claims"]
    assert claim["id"] == "cli/schwarzschild" and claim["status"] == "confirmed" and claim["line"] == 1
    routes = {r["route"]: r for r in claim["routes"]}
    assert routes["killing-horizon"]["status"] == "agree"
    assert routes["killing-horizon"]["numeric"]["max_rel_diff"] < 1e-20
    assert {"symbolic", "diagnosis", "seconds", "provenance"} <= set(routes["near-horizon"])
    page = html.read_text()
    assert "cli/schwarzschild" in page and "Content-Security-Policy" in page


def test_contradicted_claim_exits_one_with_diagnosis(claim_file):
    result = crosscheck("run", claim_file(WRONG), "--samples", "3")
    assert result.returncode == 1
    assert "CONTRADICTED" in result.stdout and "constant factor 2" in result.stdout


def test_invalid_file_exits_two_with_position(claim_file):
    path = claim_file(GOOD.replace("[0.5, 20]", "[3, 1]"))
    result = crosscheck("run", path)
    assert result.returncode == 2
    assert f"{path}:3:" in result.stderr and "parameters.M" in result.stderr


def test_bad_file_does_not_stop_the_good_one(claim_file, tmp_path):
    claim_file(GOOD, "a.yaml")
    claim_file("id: [unclosed\n", "b.yaml")
    result = crosscheck("run", str(tmp_path), "--samples", "2")
    assert result.returncode == 2
    assert "CONFIRMED" in result.stdout and "b.yaml:" in result.stderr


def test_unknown_route_is_a_usage_error(claim_file):
    result = crosscheck("run", claim_file(GOOD), "--routes", "killing-horizon,no-such-route")
    assert result.returncode == 2 and "valid routes" in result.stderr


def test_check_one_off_claim():
    ok = crosscheck("check", "kappa = 1/(4*M)", "--spacetime", "schwarzschild", "--samples", "3")
    assert ok.returncode == 0 and "CONFIRMED" in ok.stdout
    wrong = crosscheck("check", "T = 1/(2*M)", "--spacetime", "schwarzschild", "--samples", "3")
    assert wrong.returncode == 1 and "4*pi" in wrong.stdout
    bad = crosscheck("check", "T = 1/(8*pi*M", "--spacetime", "schwarzschild")
    assert bad.returncode == 2 and "<command line>" in bad.stderr


def test_strict_fails_on_weak_claims(claim_file):
    path = claim_file(GOOD + "routes: [killing-horizon]\n")
    assert crosscheck("run", path, "--samples", "2").returncode == 0
    assert crosscheck("run", path, "--samples", "2", "--strict").returncode == 1


def test_listing_commands():
    routes = crosscheck("routes")
    assert routes.returncode == 0 and "killing-horizon" in routes.stdout and "near-horizon" in routes.stdout
    families = crosscheck("spacetimes")
    assert families.returncode == 0
    for name in ("minkowski", "rindler", "schwarzschild", "reissner-nordstrom", "kerr", "kerr-newman",
                 "de-sitter", "schwarzschild-de-sitter", "schwarzschild-anti-de-sitter", "btz",
                 "tangherlini", "charged-dilaton"):
        assert name in families.stdout
