"""The HTML report in a real browser: MathML and SVG in the DOM, no network request, a screenshot.

Runs headless Chromium (Debian's `chromium` package).  Skipped when it is
absent, unless CROSSCHECK_REQUIRE_BROWSER=1 (CI sets it, so a missing browser
fails there).  The screenshot goes to $CROSSCHECK_SCREENSHOT (default: the
test's temporary directory) for docs/report.png.

Network: the browser runs with every host name mapped to "not found" and a
proxy on a closed local port, so nothing can leave the machine; its net log
(`--log-net-log`) still records every request a page starts (initiator "null"
for a file:// page, while the browser's own background requests carry
"not an origin").  A control page with an <img> from the network checks that
this detection works.  Common practice: Chromium's NetLog documentation.
"""

from __future__ import annotations

import dataclasses
import json
import os
import shutil
import struct
import subprocess
from pathlib import Path

import pytest

from crosscheck.claimfile import load_claim_text, load_paths
from crosscheck.report.html import to_html
from crosscheck.routes.registry import load_routes
from crosscheck.runner import RunOptions, run_claims

pytestmark = pytest.mark.browser
ROOT = Path(__file__).resolve().parent.parent
FLAGS = [
    "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
    "--disable-background-networking", "--disable-component-update", "--disable-sync", "--disable-extensions",
    "--disable-default-apps", "--no-default-browser-check", "--disable-domain-reliability", "--no-pings",
    "--disable-breakpad", "--host-resolver-rules=MAP * ~NOTFOUND", "--proxy-server=127.0.0.1:9",
]
WRONG = """
id: demo/schwarzschild-temperature-wrong
title: A Schwarzschild temperature off by a factor of two
spacetime: {name: schwarzschild}
parameters: {M: [0.5, 20]}
claim: T = 1/(4*pi*M)
sources: ["demonstration: the correct value is 1/(8 pi M) (S. W. Hawking, Commun. Math. Phys. 43, 199 (1975))"]
"""
LIBRARY = ["claims/horizons/schwarzschild-temperature.yaml", "claims/horizons/schwarzschild-surface-gravity.yaml",
           "claims/horizons/de-sitter-temperature.yaml"]


@pytest.fixture(scope="module")
def chromium() -> str:
    found = shutil.which("chromium") or shutil.which("chromium-browser")
    if found is None:
        if os.environ.get("CROSSCHECK_REQUIRE_BROWSER") == "1":
            pytest.fail("CROSSCHECK_REQUIRE_BROWSER=1 but no chromium on PATH (apt-get install chromium)")
        pytest.skip("no chromium on PATH")
    return found


@pytest.fixture(scope="module")
def report(tmp_path_factory) -> Path:
    routes, _ = load_routes()
    claims, errors = load_claim_text(WRONG, "claims/demo/wrong-temperature.yaml", known_routes=routes)
    loaded = load_paths([str(ROOT / p) for p in LIBRARY], known_routes=routes)
    assert not errors and not loaded.errors
    outcomes = run_claims([*claims, *loaded.claims], routes, RunOptions(samples=4))
    outcomes = [dataclasses.replace(o, file=os.path.relpath(o.file, ROOT)) if os.path.isabs(o.file) else o for o in outcomes]
    import jinja2
    import mpmath
    import sympy

    from crosscheck import __version__

    run = {"command": "python -m pytest tests/test_browser.py  (a demonstration: three library claims and a wrong one)",
           "versions": {"crosscheck": __version__, "sympy": sympy.__version__, "mpmath": mpmath.__version__,
                        "jinja2": jinja2.__version__},
           "options": {"samples": 4, "digits": 30, "seed": 0, "timeout": 60.0}}
    path = tmp_path_factory.mktemp("report") / "index.html"
    path.write_text(to_html(outcomes, run), encoding="utf-8")
    return path


def browse(chromium: str, page: Path, tmp: Path, *extra: str) -> tuple[str, list[str]]:
    """Open the page; return the DOM (when dumped) and the URLs the page itself requested."""
    netlog = tmp / "netlog.json"
    profile = tmp / "profile"
    result = subprocess.run(
        [chromium, *FLAGS, f"--user-data-dir={profile}", f"--log-net-log={netlog}", *extra, page.as_uri()],
        capture_output=True, text=True, timeout=120,
    )
    assert result.returncode == 0, result.stderr[-2000:]
    return result.stdout, page_requests(netlog)


def page_requests(netlog: Path) -> list[str]:
    log = json.loads(netlog.read_text())
    start = log["constants"]["logEventTypes"]["URL_REQUEST_START_JOB"]
    return [
        e["params"]["url"] for e in log["events"]
        if e["type"] == start and "url" in e.get("params", {}) and e["params"].get("initiator") != "not an origin"
    ]


def test_formulas_are_mathml_plots_are_svg_and_nothing_is_fetched(chromium, report, tmp_path):
    dom, requested = browse(chromium, report, tmp_path, "--dump-dom")
    source = report.read_text()
    assert dom.count("<math") == source.count("<math") >= 10  # the parser kept every formula as MathML
    assert "<mfrac>" in dom and "<msup>" in dom
    assert dom.count("<svg") == source.count("<svg") >= 1 and 'aria-label="ratio claim/route"' in dom
    assert "CONTRADICTED" in dom and "constant factor 2" in dom
    assert all(url.startswith(("file:", "data:")) for url in requested), requested


def test_the_network_check_sees_a_page_that_fetches(chromium, tmp_path):
    leak = tmp_path / "leak.html"
    leak.write_text('<!DOCTYPE html><p>x</p><img src="http://example.invalid/x.png">', encoding="utf-8")
    _, requested = browse(chromium, leak, tmp_path, "--dump-dom")
    assert "http://example.invalid/x.png" in requested


def test_screenshot(chromium, report, tmp_path):
    target = Path(os.environ.get("CROSSCHECK_SCREENSHOT") or tmp_path / "report.png")
    target.parent.mkdir(parents=True, exist_ok=True)
    _, requested = browse(chromium, report, tmp_path, f"--screenshot={target}", "--window-size=1280,2000",
                          "--hide-scrollbars")
    header = target.read_bytes()[:24]
    assert header[:8] == b"\x89PNG\r\n\x1a\n"  # Source: PNG specification (W3C 2003), sec. 5.2 and 11.2.2
    assert struct.unpack(">II", header[16:24]) == (1280, 2000)
    assert all(url.startswith(("file:", "data:")) for url in requested), requested
