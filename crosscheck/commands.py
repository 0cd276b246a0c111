"""The work behind each command-line command (cli.py only parses arguments)."""

from __future__ import annotations

import html
import platform
import shlex
import signal
import sys
import time
from collections.abc import Sequence

from crosscheck import __version__
from crosscheck.claimfile import load_paths
from crosscheck.cli import ExitCode
from crosscheck.errors import ClaimError
from crosscheck.oneoff import one_off_claim
from crosscheck.report import terminal
from crosscheck.report.files import write_report
from crosscheck.results import ClaimOutcome
from crosscheck.routes.registry import load_routes, select
from crosscheck.runner import RunOptions, invalid_outcome


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


def _run_info(options: RunOptions, args=None, result=None) -> dict:
    info = {
        "command": "crosscheck " + " ".join(shlex.quote(a) for a in sys.argv[1:]),
        "versions": _versions(),
        "options": {"samples": options.samples, "digits": options.digits, "seed": options.seed, "timeout": options.timeout},
    }
    if args is not None:
        info["options"].update(memory_mb=args.memory, jobs=_jobs(args), scheduler=args.scheduler)
    if result is not None:
        info.update(complete=result.complete, unfinished=list(result.unfinished), stopped_by=result.stopped_by,
                    cache={"path": None if args.no_cache else _cache_path(args), "hits": result.cached,
                           "computed": result.computed})
    return info


def _jobs(args) -> int:
    from crosscheck.workers import default_jobs

    return default_jobs() if args.jobs is None else args.jobs


def _cache_path(args) -> str:
    from crosscheck.cache import DEFAULT_PATH

    return args.cache or DEFAULT_PATH


class _StartError(Exception):
    """The workers could not be started (a usage problem: exit code 2)."""


def _execute(claims, routes, options: RunOptions, args, on_result=None):
    """Run the claims with the executor, cache and progress display the options ask for."""
    from crosscheck.cache import Cache
    from crosscheck.progress import Progress
    from crosscheck.scheduler import make_executor, run_all
    from crosscheck.workers import Limits

    try:
        executor = make_executor(_jobs(args), Limits(timeout=options.timeout, memory_mb=args.memory), args.scheduler)
    except (RuntimeError, OSError, ValueError) as exc:  # no Dask installed, or its scheduler unreachable
        raise _StartError(str(exc)) from exc
    cache = None if args.no_cache else Cache(_cache_path(args))
    try:
        return run_all(claims, routes, options, executor, cache=cache, progress=Progress(len(claims), 0),
                       on_result=on_result)
    finally:
        executor.shutdown(wait=True)
        if cache is not None:
            cache.close()
            for note in cache.notes:
                print(f"warning: {note}", file=sys.stderr)


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


def _load(args):
    """(routes, loaded claims) for `run` and `mutate`, or an exit code once the reason is
    printed (an unknown route, or no claim file at all); each file error is printed."""
    try:
        all_routes, routes = _routes(args)
    except KeyError as exc:
        print(f"crosscheck: {exc.args[0]}", file=sys.stderr)
        return ExitCode.INPUT_ERROR
    loaded = load_paths(args.paths, known_routes=all_routes)
    for error in loaded.errors:
        print(str(error), file=sys.stderr)
    if not loaded.claims and not loaded.errors:
        print(f"crosscheck: no claim files found in {' '.join(args.paths)}", file=sys.stderr)
        return ExitCode.INPUT_ERROR
    return routes, loaded


def run_command(args, started: float) -> ExitCode:
    prepared = _load(args)
    if isinstance(prepared, ExitCode):
        return prepared
    routes, loaded = prepared
    outcomes: list[ClaimOutcome] = [invalid_outcome(error) for error in loaded.errors]
    options = _options(args)
    if getattr(args, "audit", False):
        return _audited_run(args, loaded.claims, routes, options, outcomes, started)
    try:
        result = _execute(loaded.claims, routes, options, args, on_result=_print_outcome)
    except _StartError as exc:
        print(f"crosscheck: cannot start the workers: {exc}", file=sys.stderr)
        return ExitCode.INPUT_ERROR
    outcomes.extend(result.outcomes)
    seconds = time.perf_counter() - started
    print(" ".join(filter(None, [terminal.summary(outcomes, seconds), terminal.cache_note(result.cached, result.computed)])))
    if not result.complete:
        print(terminal.incomplete_line(result.stopped_by, result.unfinished), file=sys.stderr)
    _write_reports(args, outcomes, _run_info(options, args, result), result.complete)
    if not result.complete:
        return 128 + getattr(signal.Signals, result.stopped_by or "SIGINT", signal.SIGINT)
    return exit_code(outcomes, args.strict)


# -- the mutation audit ----------------------------------------------------------------------------
def _execute_audit(claims, routes, options: RunOptions, args, on_claim=None):
    """Run the audit (originals and mutants, no cache) on the executor the options ask for."""
    from crosscheck.audit import run_audit, task_limit
    from crosscheck.progress import Progress
    from crosscheck.scheduler import make_executor
    from crosscheck.workers import Limits

    try:
        executor = make_executor(_jobs(args), Limits(timeout=task_limit(options), memory_mb=args.memory), args.scheduler)
    except (RuntimeError, OSError, ValueError) as exc:
        raise _StartError(str(exc)) from exc
    try:
        return run_audit(claims, routes, options, executor, progress=Progress(len(claims), 0), on_claim=on_claim)
    finally:
        executor.shutdown(wait=True)


def _audit_info(options: RunOptions, args, audit) -> dict:
    info = _run_info(options, args)
    info.update(complete=audit.complete, audit=audit.totals())
    return info


def _audited_run(args, claims, routes, options: RunOptions, outcomes: list, started: float) -> ExitCode:
    """`run --audit`: the audit's unmutated outcomes are the run's results (computed once)."""
    from crosscheck.audit_io import claim_line, summary

    def show(claim_audit) -> None:
        _print_outcome(claim_audit.original)
        print("  audit: " + claim_line(claim_audit))

    try:
        audit = _execute_audit(claims, routes, options, args, on_claim=show)
    except _StartError as exc:
        print(f"crosscheck: cannot start the workers: {exc}", file=sys.stderr)
        return ExitCode.INPUT_ERROR
    outcomes.extend(audit.outcomes)
    seconds = time.perf_counter() - started
    print(terminal.summary(outcomes, seconds))
    print(summary(audit, seconds))
    _write_reports(args, outcomes, _audit_info(options, args, audit), audit.complete, audit)
    if not audit.complete:
        return ExitCode.INTERRUPTED
    code = exit_code(outcomes, args.strict)
    return code if code != ExitCode.OK or audit.passed() else ExitCode.CONTRADICTED


def mutate_command(args, started: float) -> ExitCode:
    """`crosscheck mutate PATH`: how many corrupted claims the checks catch (target 99%)."""
    from crosscheck.audit_io import claim_line, summary, survivor_lines, to_json

    prepared = _load(args)
    if isinstance(prepared, ExitCode):
        return prepared
    routes, loaded = prepared
    if loaded.errors:  # an audit of a partly unreadable library would be misleading
        return ExitCode.INPUT_ERROR
    options = _options(args)

    def show(claim_audit) -> None:
        print(claim_line(claim_audit), flush=True)
        for line in survivor_lines(claim_audit):
            print(line)

    try:
        audit = _execute_audit(loaded.claims, routes, options, args, on_claim=show)
    except _StartError as exc:
        print(f"crosscheck: cannot start the workers: {exc}", file=sys.stderr)
        return ExitCode.INPUT_ERROR
    info = _audit_info(options, args, audit)
    print(summary(audit, time.perf_counter() - started))
    if args.json:
        write_report(args.json, to_json(audit, info), audit.complete)
    if args.html:
        from crosscheck.report.html import to_html

        write_report(args.html, to_html(audit.outcomes, info, audit=audit), audit.complete)
        print(f"HTML report: {args.html}")
    if not audit.complete:
        return ExitCode.INTERRUPTED
    return ExitCode.OK if audit.passed() else ExitCode.CONTRADICTED


HTML_INCOMPLETE_MARK = "data-crosscheck-incomplete"


def _write_reports(args, outcomes: Sequence[ClaimOutcome], info: dict, complete: bool, audit=None) -> None:
    """JSON and HTML, each atomically; an incomplete report keeps a complete earlier one aside."""
    if args.json:
        from crosscheck.report.json_report import INCOMPLETE_MARK, to_json

        _note_kept(write_report(args.json, to_json(outcomes, info, complete=complete), complete, INCOMPLETE_MARK))
    if args.html:
        from crosscheck.report.html import to_html

        page = to_html(outcomes, info, audit=audit)
        if not complete:
            page = _mark_incomplete_html(page, info)
        _note_kept(write_report(args.html, page, complete, HTML_INCOMPLETE_MARK))
        print(f"HTML report: {args.html}")
    if getattr(args, "junit", None):
        from crosscheck.report.junit import write_junit

        write_junit(outcomes, args.junit)


def _note_kept(kept: str | None) -> None:
    if kept:
        print(f"the earlier complete report is kept as {kept}", file=sys.stderr)


def _mark_incomplete_html(page: str, info: dict) -> str:
    """A banner at the top of the page (our own text, escaped): the run was stopped early."""
    unfinished = info.get("unfinished") or []
    text = terminal.incomplete_line(info.get("stopped_by"), unfinished)
    banner = (f'<p {HTML_INCOMPLETE_MARK} style="background:#f8dcdc;padding:.5rem;font-weight:bold">'
              f"{html.escape(text)}. This report is incomplete.</p>")
    head, found, tail = page.partition("<body>")
    return head + found + "\n" + banner + tail if found else banner + page


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
    try:
        result = _execute([claim], routes, _options(args), args)
    except _StartError as exc:
        print(f"crosscheck: cannot start the workers: {exc}", file=sys.stderr)
        return ExitCode.INPUT_ERROR
    if not result.complete:
        print(terminal.incomplete_line(result.stopped_by, result.unfinished), file=sys.stderr)
        return 128 + getattr(signal.Signals, result.stopped_by or "SIGINT", signal.SIGINT)
    [outcome] = result.outcomes
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


def cache_command(args, started: float) -> ExitCode:
    from crosscheck.cache import CacheUnusable, clear_cache

    path = _cache_path(args)
    try:
        print(clear_cache(path))
    except CacheUnusable as exc:
        print(f"crosscheck: {path} {exc}; not a crosscheck cache, so it is left alone", file=sys.stderr)
        return ExitCode.INPUT_ERROR
    except OSError as exc:
        print(f"crosscheck: cannot clear {path}: {exc}", file=sys.stderr)
        return ExitCode.INPUT_ERROR
    return ExitCode.OK


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


def explain_command(args, started: float) -> int:
    """`crosscheck explain FILE --latex|--markdown`: a section a referee can read."""
    from crosscheck.explain import run_explain

    names = [n.strip() for n in args.routes.split(",") if n.strip()] if args.routes else None
    return run_explain(args.path, args.format, args.output, _options(args), names)


def new_command(args, started: float) -> int:
    """`crosscheck new --spacetime NAME --observable OBS`: a claim file to fill in."""
    from crosscheck.scaffold import run_new

    return run_new(args.spacetime, args.observable, args.output)


def schema_command(args, started: float) -> int:
    """`crosscheck schema`: the JSON Schema of the claim format."""
    from crosscheck.schema import write_schema

    return write_schema(args.output)
