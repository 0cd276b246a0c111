"""The HTML report escapes everything from claim files and loads nothing from the network.

Common practice (OWASP guidance on output encoding): untrusted text is
escaped where it is written into markup.
"""

from __future__ import annotations

import re

from crosscheck.claimfile import load_claim_text
from crosscheck.report.html import to_html
from crosscheck.routes.registry import load_routes
from crosscheck.runner import RunOptions, run_claim

HOSTILE = """
id: test/html
title: "<script>alert('title')</script>"
spacetime: {name: schwarzschild}
parameters: {M: [0.5, 20]}
claim: T = 1/(8*pi*M)
sources: ["<img src=x onerror=alert(1)>"]
notes: "</pre><b>bold</b>"
"""
RUN = {"command": "crosscheck run <x>", "versions": {"crosscheck": "<v>"}, "options": {"samples": 2, "digits": 30, "seed": 0}}


def test_claim_text_is_escaped_and_page_is_self_contained():
    routes, _ = load_routes()
    claims, errors = load_claim_text(HOSTILE, "hostile.yaml", known_routes=routes)
    assert not errors
    page = to_html([run_claim(claims[0], routes, RunOptions(samples=2))], RUN)
    assert "<script>" not in page and "<img" not in page
    assert "&lt;script&gt;" in page and "&lt;img src=x" in page
    assert "Content-Security-Policy" in page and "default-src 'none'" in page
    assert not re.search(r"(src|href)=\"(https?:)?//", page)
    assert "CONFIRMED" in page


def test_reports_are_written_atomically_and_readable(tmp_path):
    import os
    import stat

    from crosscheck.report.files import write_atomic

    target = tmp_path / "sub" / "report.html"
    write_atomic(str(target), "first")
    write_atomic(str(target), "second")
    assert target.read_text() == "second"
    assert [p.name for p in target.parent.iterdir()] == ["report.html"]  # no temporary left
    umask = os.umask(0)
    os.umask(umask)
    assert stat.S_IMODE(os.stat(target).st_mode) == 0o666 & ~umask  # as an ordinary file, not 0600
