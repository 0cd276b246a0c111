"""The work behind each command-line command (cli.py only parses arguments)."""

from __future__ import annotations

import platform
import shlex
import sys
import time
from collections.abc import Sequence

from crosscheck import __version__
from crosscheck.claimfile import load_paths
from crosscheck.cli import ExitCode
from crosscheck.errors import ClaimError
from crosscheck.oneoff import one_off_claim
from crosscheck.report import terminal
from crosscheck.report.files import write_atomic
from crosscheck.results import ClaimOutcome
from crosscheck.routes.registry import load_routes, select
from crosscheck.runner import RunOptions, invalid_outcome, run_claims


def _options(args) -> RunOptions:
    return RunOptions(samples=args.samples, digits=args.digits, seed=args.seed, timeout=args.timeout)


def _routes(args):
    routes, failures = load_routes()
    for failure in failures:
        print(f"warning: route plugin {failure.name} ({failure.target}) not loaded: {failure.message}", file=sys.stderr)
    names = [n.strip() for n in args.routes.split(",") if n.strip()] if getattr(args, "routes", None) else None
    return routes, select(routes, names)


def _versions() -> dict[str, str]:
    import jinja2
    import mpmath
    import sympy
    import yaml

    return {
        "crosscheck": __version__, "python": platform.python_version(), "sympy": sympy.__version__,
        "mpmath": mpmath.__version__, "pyyaml": yaml.__version__, "jinja2": jinja2.__version__,
    }


def _run_info(options: RunOptions) -> dict:
    return {
        "command": "crosscheck " + " ".join(shlex.quote(a) for a in sys.argv[1:]),
        "versions": _versions(),
        "options": {"samples": options.samples, "digits": options.digits, "seed": options.seed, "timeout": options.timeout},
    }


def _print_outcome(outcome: ClaimOutcome) -> None:
    print(terminal.claim_line(outcome), flush=True)
    for line in terminal.detail_lines(outcome):
        print(line)


def exit_code(outcomes: Sequence[ClaimOutcome], strict: bool) -> ExitCode:
    if any(o.status == "invalid" for o in outcomes):
        return ExitCode.INPUT_ERROR
    failing = {"contradicted"} | ({"weak", "unchecked"} if strict else set())
    if any(o.status in failing for o in outcomes):
        return ExitCode.CONTRADICTED
    if any(r.status in ("error", "timeout") for o in outcomes for r in o.routes):
        return ExitCode.CONTRADICTED
    return ExitCode.OK


def run_command(args, started: float) -> ExitCode:
    try:
        all_routes, routes = _routes(args)
    except KeyError as exc:
        print(f"crosscheck: {exc.args[0]}", file=sys.stderr)
        return ExitCode.INPUT_ERROR
    loaded = load_paths(args.paths, known_routes=all_routes)
    outcomes: list[ClaimOutcome] = []
    for error in loaded.errors:
        print(str(error), file=sys.stderr)
        outcomes.append(invalid_outcome(error))
    if not loaded.claims and not loaded.errors:
        print(f"crosscheck: no claim files found in {' '.join(args.paths)}", file=sys.stderr)
        return ExitCode.INPUT_ERROR
    options = _options(args)
    outcomes.extend(run_claims(loaded.claims, routes, options, on_result=_print_outcome))
    seconds = time.perf_counter() - started
    print(terminal.summary(outcomes, seconds))
    info = _run_info(options)
    if args.json:
        from crosscheck.report.json_report import to_json

        write_atomic(args.json, to_json(outcomes, info))
    if args.html:
        from crosscheck.report.html import to_html

        write_atomic(args.html, to_html(outcomes, info))
        print(f"HTML report: {args.html}")
    return exit_code(outcomes, args.strict)


def check_command(args, started: float) -> ExitCode:
    try:
        all_routes, routes = _routes(args)
        claim = one_off_claim(
            args.equation, args.spacetime, args.param, units=args.units, dim=args.dim,
            horizon=args.horizon, known_routes=all_routes,
        )
    except KeyError as exc:
        print(f"crosscheck: {exc.args[0]}", file=sys.stderr)
        return ExitCode.INPUT_ERROR
    except ClaimError as exc:
        print(str(exc), file=sys.stderr)
        return ExitCode.INPUT_ERROR
    [outcome] = run_claims([claim], routes, _options(args))
    print(terminal.claim_line(outcome))
    for route in outcome.routes:
        if route.status == "not-applicable":
            continue
        values = ", ".join(f"{k} = {v}" for k, v in route.values.items() if k in claim.observables)
        print(f"  {route.route}: {route.status}" + (f"  [{values}]" if values else ""))
        if route.diagnosis:
            print(f"    diagnosis: {route.diagnosis.text}")
        elif route.status in ("error", "timeout", "inconclusive") and route.reason:
            print(f"    {route.reason}")
    print(f"({time.perf_counter() - started:.1f} s)")
    return exit_code([outcome], strict=False)


def routes_command(args, started: float) -> ExitCode:
    routes, failures = load_routes()
    for name, route in routes.items():
        observables = ", ".join(sorted(route.observables))
        print(f"{name:20} {route.grade:8} {route.title}\n{'':29} computes: {observables}")
    for failure in failures:
        print(f"{failure.name:20} NOT LOADED: {failure.message}")
    return ExitCode.OK


def spacetimes_command(args, started: float) -> ExitCode:
    from crosscheck.spacetimes import describe_families

    for info in describe_families():
        options = f"  options: {info['options']}" if info.get("options") else ""
        print(f"{info['name']}  ({info['symbols'] or 'no parameters'}){options}")
        print(f"    ds^2 = {info['line_element']}")
        print(f"    horizon: {info['default_horizon']}")
    return ExitCode.OK
