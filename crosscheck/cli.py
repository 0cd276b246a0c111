"""Command line: argument parsing and exit codes only; the work is elsewhere."""

from __future__ import annotations

import argparse
import signal
import sys
import time
from collections.abc import Sequence
from enum import IntEnum

from crosscheck import __version__


class ExitCode(IntEnum):
    """What the process exit status means (CI reads it)."""

    OK = 0
    CONTRADICTED = 1  # a claim contradicted, or a route errored (or, with --strict, weak/unchecked)
    INPUT_ERROR = 2  # usage errors and invalid claim files
    INTERRUPTED = 130  # Ctrl-C (128 + SIGINT); SIGTERM gives 143; a partial report is written


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="crosscheck",
        description="Check horizon and detector results by independent derivations.",
    )
    parser.add_argument("--version", action="version", version=f"crosscheck {__version__}")
    commands = parser.add_subparsers(dest="command", required=True, metavar="COMMAND")

    run = commands.add_parser("run", help="check claim files (directories are searched for *.yaml)")
    run.add_argument("paths", nargs="*", default=["claims"], metavar="PATH")
    _add_run_options(run)
    run.add_argument("--json", metavar="FILE", help="write the JSON result (schema crosscheck-result/1)")
    run.add_argument("--html", metavar="FILE", help="write the HTML report")
    run.add_argument("--junit", metavar="FILE", help="write JUnit XML (a testsuite per claim file, a testcase per claim and route)")
    run.add_argument("--strict", action="store_true", help="also fail on weak and unchecked claims")
    run.add_argument("--audit", action="store_true",
                     help="also run the mutation audit (see `crosscheck mutate`); the HTML report gets its section")

    mutate = commands.add_parser(
        "mutate", help="mutation audit: corrupt each claim (x2, x pi, powers, signs, swaps, other horizon) "
                       "and count how many the checks catch (fails below 99%%)")
    mutate.add_argument("paths", nargs="*", default=["claims"], metavar="PATH")
    _add_run_options(mutate)
    mutate.add_argument("--json", metavar="FILE", help="write the audit (schema crosscheck-mutation/1)")
    mutate.add_argument("--html", metavar="FILE", help="write the HTML report with the audit section")

    check = commands.add_parser("check", help="check one claim typed on the command line")
    check.add_argument("equation", metavar="CLAIM", help='for example "T = 1/(8*pi*M)"')
    check.add_argument("--spacetime", required=True, metavar="NAME", help="a built-in family (see `crosscheck spacetimes`)")
    check.add_argument("--param", action="append", default=[], metavar="NAME=LO:HI", help="parameter range")
    check.add_argument("--units", choices=("geometric", "si"), default="geometric")
    check.add_argument("--dim", type=int, default=None, help="spacetime dimension (families that take one)")
    check.add_argument("--horizon", default=None, metavar="EXPR", help="horizon radius, if not the family's default")
    _add_run_options(check)

    explain = commands.add_parser("explain", help="write a claim file's check as a LaTeX or Markdown section")
    explain.add_argument("path", metavar="CLAIM_FILE")
    form = explain.add_mutually_exclusive_group()
    form.add_argument("--latex", dest="format", action="store_const", const="latex", help="a LaTeX document (default)")
    form.add_argument("--markdown", dest="format", action="store_const", const="markdown", help="Markdown")
    explain.set_defaults(format="latex")
    explain.add_argument("-o", "--output", metavar="FILE", help="write to FILE instead of standard output")
    _add_run_options(explain)

    new = commands.add_parser("new", help="print a claim file to fill in")
    new.add_argument("--spacetime", required=True, metavar="NAME", help="a built-in family (see `crosscheck spacetimes`)")
    new.add_argument("--observable", required=True, metavar="NAME", help="T, kappa, A, S, Omega, Phi, r_h, a_loc, T_loc, T_eff or rate")
    new.add_argument("-o", "--output", metavar="FILE", help="write to FILE instead of standard output")

    schema = commands.add_parser("schema", help="write the JSON Schema of the claim format (for editors)")
    schema.add_argument("-o", "--output", metavar="FILE", help="write to FILE instead of standard output")

    commands.add_parser("routes", help="list the routes")
    commands.add_parser("spacetimes", help="list the built-in spacetime families")

    cache = commands.add_parser("cache", help="manage the result cache")
    cache.add_argument("action", choices=("clear",), help="clear: delete the cache file")
    _add_cache_option(cache)
    return parser


def _add_run_options(command: argparse.ArgumentParser) -> None:
    command.add_argument("--routes", metavar="LIST", help="comma-separated route names (default: all)")
    command.add_argument("--samples", type=_positive_int, default=5, metavar="N", help="numeric sample points (default 5)")
    command.add_argument("--digits", type=_positive_int, default=20, metavar="D", help="working precision in digits (default 20)")
    command.add_argument("--seed", type=int, default=0, metavar="S", help="seed of the sample points (default 0)")
    command.add_argument("--timeout", type=_seconds, default=60.0, metavar="S", help="seconds per claim and route (default 60)")
    command.add_argument("--memory", type=_memory, default=4096, metavar="MB",
                         help="address space each worker may add, in MB (default 4096; 0: no limit)")
    command.add_argument("--jobs", "-j", type=_jobs, default=None, metavar="N",
                         help="parallel workers (default: this machine's cores; 0: run in this process, for debugging)")
    command.add_argument("--scheduler", metavar="ADDRESS",
                         help="run the tasks on a Dask cluster, e.g. tcp://host:8786 (needs crosscheck[cluster])")
    _add_cache_option(command)
    command.add_argument("--no-cache", action="store_true", help="neither read nor write the cache")


def _add_cache_option(command: argparse.ArgumentParser) -> None:
    command.add_argument("--cache", metavar="FILE", default=None,
                         help="result cache file (default: .crosscheck-cache in the current directory)")


def _bounded_int(text: str, lo: int, hi: int) -> int:
    try:
        value = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected a whole number, got {text}") from None
    if not lo <= value <= hi:
        raise argparse.ArgumentTypeError(f"expected a whole number from {lo} to {hi}, got {text}")
    return value


def _jobs(text: str) -> int:
    return _bounded_int(text, 0, 1024)


def _memory(text: str) -> int:
    value = _bounded_int(text, 0, 1 << 24)
    if 0 < value < 256:
        raise argparse.ArgumentTypeError(f"{value} MB is too little to import sympy; give at least 256 (or 0)")
    return value


def _seconds(text: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected a number of seconds, got {text}") from None
    if not 0 < value <= 86400:
        raise argparse.ArgumentTypeError(f"expected seconds between 0 and 86400, got {text}")
    return value


def _positive_int(text: str) -> int:
    value = int(text)
    if not 1 <= value <= 200:
        raise argparse.ArgumentTypeError(f"expected a whole number from 1 to 200, got {text}")
    return value


def main(argv: Sequence[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    from crosscheck import commands  # deferred: `--help` should not import sympy
    from crosscheck.scheduler import signals_interrupt

    started = time.perf_counter()
    handlers = {
        "run": commands.run_command,
        "check": commands.check_command,
        "routes": commands.routes_command,
        "spacetimes": commands.spacetimes_command,
        "cache": commands.cache_command,
        "explain": commands.explain_command,
        "new": commands.new_command,
        "schema": commands.schema_command,
        "mutate": commands.mutate_command,
    }
    try:
        with signals_interrupt():
            code = handlers[args.command](args, started)
    except KeyboardInterrupt as exc:  # Ctrl-C, or SIGTERM (scheduler.Interrupted) outside a run
        print("interrupted", file=sys.stderr)
        return 128 + getattr(exc, "signum", signal.SIGINT)
    return int(code)


if __name__ == "__main__":
    raise SystemExit(main())
