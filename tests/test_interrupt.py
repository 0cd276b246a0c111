"""A run stopped mid-way (SIGTERM, Ctrl-C) writes a partial report marked incomplete and
keeps the earlier complete report; no half-written or temporary file is left behind.

Runs `python -m crosscheck run` in a subprocess, as CI would, and signals it once the
first claim has been printed.  The claims are Schwarzschild temperatures,
T = 1/(8 pi M) (Hawking 1975), checked by the killing-horizon route only.
"""

from __future__ import annotations

import json
import os
import signal
import subprocess
import sys
from pathlib import Path

import pytest

from crosscheck.cli import main

ROOT = Path(__file__).resolve().parents[1]
CLAIM = """id: interrupt/claim-{n}
spacetime: {{name: schwarzschild}}
parameters: {{M: [0.5, {hi}]}}
claim: T = 1/(8*pi*M)
routes: [killing-horizon]
"""
CHEAP = ["--jobs", "1", "--no-cache", "--samples", "1", "--digits", "15"]


def write_claims(folder: Path, count: int) -> None:
    folder.mkdir()
    for n in range(count):
        (folder / f"claim-{n:02d}.yaml").write_text(CLAIM.format(n=n, hi=20 + n))


def start(*args: str) -> subprocess.Popen:
    environment = {**os.environ, "PYTHONPATH": str(ROOT)}
    return subprocess.Popen([sys.executable, "-m", "crosscheck", "run", *args, *CHEAP], stdout=subprocess.PIPE,
                            stderr=subprocess.PIPE, text=True, env=environment)


@pytest.mark.parametrize("signum", [signal.SIGTERM, pytest.param(signal.SIGINT, marks=pytest.mark.slow)])
def test_signal_mid_run_writes_a_partial_report_and_keeps_the_earlier_one(tmp_path, signum):
    out_json, out_html = tmp_path / "out.json", tmp_path / "out.html"
    write_claims(tmp_path / "small", 1)
    # The earlier, complete report (written in this process: it saves an interpreter start).
    assert main(["run", str(tmp_path / "small"), "--json", str(out_json), "--html", str(out_html), *CHEAP]) == 0
    earlier_json, earlier_html = out_json.read_text(), out_html.read_text()
    assert json.loads(earlier_json)["complete"] is True

    write_claims(tmp_path / "big", 12)
    process = start(str(tmp_path / "big"), "--json", str(out_json), "--html", str(out_html))
    try:
        line = process.stdout.readline()  # the first claim is done
        assert "interrupt/claim-0" in line, line + process.stderr.read()
        process.send_signal(signum)
        code = process.wait(timeout=60)
    finally:
        process.kill()
    stderr = process.stderr.read()
    assert code == 128 + signum, stderr
    assert "Traceback" not in stderr and "INCOMPLETE" in stderr

    partial = json.loads(out_json.read_text())
    assert partial["complete"] is False
    done = [c["id"] for c in partial["claims"]]
    assert 1 <= len(done) < 12 and done[0] == "interrupt/claim-0"
    assert set(partial["run"]["unfinished"]) == {f"interrupt/claim-{n}" for n in range(len(done), 12)}
    assert "data-crosscheck-incomplete" in out_html.read_text()
    assert (tmp_path / "out.previous.json").read_text() == earlier_json
    assert (tmp_path / "out.previous.html").read_text() == earlier_html
    assert not [p.name for p in tmp_path.iterdir() if p.name.startswith(".tmp-")]


def test_incomplete_reports_keep_the_last_complete_one(tmp_path):
    from crosscheck.report.files import write_report

    target = tmp_path / "report.json"
    mark = '"complete": false'
    write_report(str(target), '{"complete": true, "n": 1}')
    assert write_report(str(target), '{"complete": false, "n": 2}', complete=False, incomplete_mark=mark) == str(
        tmp_path / "report.previous.json")
    # A second interrupted run replaces the partial report but not the kept complete one.
    assert write_report(str(target), '{"complete": false, "n": 3}', complete=False, incomplete_mark=mark) is None
    assert (tmp_path / "report.previous.json").read_text() == '{"complete": true, "n": 1}'
    assert target.read_text() == '{"complete": false, "n": 3}'
    assert sorted(p.name for p in tmp_path.iterdir()) == ["report.json", "report.previous.json"]
