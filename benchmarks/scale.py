"""Scale benchmark: the cache, parallel workers and precision, printed as ratios in one run.

1. Cold vs warm run of the built-in library (`crosscheck run claims/`, a fresh cache
   file, then the same command again): wall time of the whole command, interpreter start
   included.  The warm run should be at least 10x faster.
2. `--jobs 1` vs `--jobs 2` on the first N claim files (no cache): the parallel speed-up;
   and `--jobs 1` vs `--jobs 0` (in-process): what isolation in forked workers costs.
3. Per-route cost growth from 15 to 50 digits: each applicable route on a few claims,
   each measurement in a fresh forked worker (so sympy's cache from one measurement does
   not speed up the next), ratio of the route's time at 50 digits to that at 15.

Usage: python benchmarks/scale.py [--claims claims] [--speedup-files 8] [--skip-library|-speedup|-growth]
Run it on a quiet machine: other load distorts every ratio.
"""

from __future__ import annotations

import argparse
import json
import os
import shutil
import subprocess
import sys
import tempfile
import time

ROOT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..")
sys.path.insert(0, ROOT)

from crosscheck.claimfile import load_paths  # noqa: E402
from crosscheck.routes.registry import load_routes  # noqa: E402
from crosscheck.runner import RunOptions, problem_for, route_precheck, run_route  # noqa: E402
from crosscheck.workers import Limits, WorkerFailure, run_isolated  # noqa: E402

GROWTH_CLAIMS = ("horizons/schwarzschild-temperature", "horizons/reissner-nordstrom-temperature", "horizons/kerr-temperature")


def snapshot(work: str) -> str:
    """A frozen copy of the package: the cache key includes a fingerprint of crosscheck's
    sources, so edits made while the benchmark runs would otherwise turn the warm run cold."""
    source = os.path.join(work, "src")
    shutil.copytree(os.path.join(ROOT, "crosscheck"), os.path.join(source, "crosscheck"),
                    ignore=shutil.ignore_patterns("__pycache__"))
    return source


def crosscheck(*args: str, cwd: str) -> tuple[float, dict]:
    """Wall time of one `python -m crosscheck run ...` (the snapshot in `cwd`/src) and its JSON."""
    report = os.path.join(cwd, "report.json")
    environment = {**os.environ, "PYTHONPATH": os.path.join(cwd, "src")}
    started = time.perf_counter()
    done = subprocess.run([sys.executable, "-m", "crosscheck", "run", *args, "--json", report], cwd=cwd,
                          capture_output=True, text=True, env=environment)
    seconds = time.perf_counter() - started
    if done.returncode not in (0, 1):
        raise SystemExit(f"crosscheck failed ({done.returncode}):\n{done.stderr}")
    with open(report, encoding="utf-8") as stream:
        return seconds, json.load(stream)


def library(claims: str, work: str) -> None:
    cache = os.path.join(work, "bench-cache")
    cold, document = crosscheck(os.path.abspath(claims), "--cache", cache, cwd=work)
    warm, again = crosscheck(os.path.abspath(claims), "--cache", cache, cwd=work)
    tasks = document["run"]["cache"]["computed"]
    print(f"library: {len(document['claims'])} claims, {tasks} computed tasks, jobs {document['run']['options']['jobs']}")
    print(f"  cold run {cold:7.2f} s   warm run {warm:5.2f} s   cold/warm = {cold / warm:5.1f}x"
          f"   (warm: {again['run']['cache']['hits']} cached, {again['run']['cache']['computed']} computed)")


def speedup(claims: str, files: int, work: str) -> None:
    folder = os.path.join(work, "subset")
    os.makedirs(folder, exist_ok=True)
    chosen = sorted(os.path.join(d, f) for d, _, names in os.walk(claims) for f in names if f.endswith(".yaml"))[:files]
    for path in chosen:
        shutil.copy(path, os.path.join(folder, os.path.basename(path)))
    inline, _ = crosscheck(folder, "--no-cache", "--jobs", "0", cwd=work)
    one, _ = crosscheck(folder, "--no-cache", "--jobs", "1", cwd=work)
    two, _ = crosscheck(folder, "--no-cache", "--jobs", "2", cwd=work)
    print(f"parallel: {len(chosen)} claim files, no cache")
    print(f"  --jobs 1 {one:7.2f} s   --jobs 2 {two:7.2f} s   speed-up = {one / two:4.2f}x (ideal 2.00x on 2 free cores)")
    print(f"  isolation cost: --jobs 1 (a long-lived forked worker) / --jobs 0 (in-process, {inline:.2f} s) = {one / inline:4.2f}x")


def growth(claims: str) -> None:
    loaded = {c.id: c for c in load_paths([claims]).claims}
    routes, _ = load_routes()
    print("precision: route time at 50 digits / at 15 digits (2 samples, best of 3, fresh worker each)")
    for claim_id in GROWTH_CLAIMS:
        claim = loaded.get(claim_id)
        if claim is None:
            continue
        for name, route in routes.items():
            if route_precheck(claim, route, problem_for(claim)) is not None:
                continue
            times = [_route_seconds(claim, route, digits) for digits in (15, 50)]
            if None in times:
                print(f"  {name:22} {claim_id:42} no result")
                continue
            low, high = times
            print(f"  {name:22} {claim_id:42} {low:6.2f} s -> {high:6.2f} s   x{high / low:5.2f}")


def _route_seconds(claim, route, digits: int, repeats: int = 3) -> float | None:
    """The best of `repeats` timings (the least disturbed by other load)."""
    times = [_route_seconds_once(claim, route, digits) for _ in range(repeats)]
    return None if None in times else min(times)


def _route_seconds_once(claim, route, digits: int) -> float | None:
    options = RunOptions(samples=2, digits=digits)

    def task():
        outcome = run_route(claim, route, problem_for(claim), options)
        return outcome.seconds if outcome.status not in ("error", "timeout", "not-applicable") else None

    try:
        return run_isolated(task, Limits(timeout=120))
    except WorkerFailure:
        return None


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("--claims", default=os.path.join(ROOT, "claims"))
    parser.add_argument("--speedup-files", type=int, default=8, help="claim files for the jobs 1 vs 2 comparison")
    parser.add_argument("--skip-library", action="store_true", help="skip the cold/warm run of the whole library")
    parser.add_argument("--skip-speedup", action="store_true", help="skip the jobs 1 vs 2 comparison")
    parser.add_argument("--skip-growth", action="store_true", help="skip the 15 vs 50 digits comparison")
    args = parser.parse_args()
    work = tempfile.mkdtemp(prefix="crosscheck-bench-")
    try:
        snapshot(work)
        if not args.skip_library:
            library(args.claims, work)
        if not args.skip_speedup:
            speedup(args.claims, args.speedup_files, work)
        if not args.skip_growth:
            growth(args.claims)
    finally:
        shutil.rmtree(work, ignore_errors=True)


if __name__ == "__main__":
    main()
