"""Command line: argument parsing and exit codes only; the work is elsewhere."""

from __future__ import annotations

import argparse
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
    run.add_argument("--strict", action="store_true", help="also fail on weak and unchecked claims")

    check = commands.add_parser("check", help="check one claim typed on the command line")
    check.add_argument("equation", metavar="CLAIM", help='for example "T = 1/(8*pi*M)"')
    check.add_argument("--spacetime", required=True, metavar="NAME", help="a built-in family (see `crosscheck spacetimes`)")
    check.add_argument("--param", action="append", default=[], metavar="NAME=LO:HI", help="parameter range")
    check.add_argument("--units", choices=("geometric", "si"), default="geometric")
    check.add_argument("--dim", type=int, default=None, help="spacetime dimension (families that take one)")
    check.add_argument("--horizon", default=None, metavar="EXPR", help="horizon radius, if not the family's default")
    _add_run_options(check)

    commands.add_parser("routes", help="list the routes")
    commands.add_parser("spacetimes", help="list the built-in spacetime families")
    return parser


def _add_run_options(command: argparse.ArgumentParser) -> None:
    command.add_argument("--routes", metavar="LIST", help="comma-separated route names (default: all)")
    command.add_argument("--samples", type=_positive_int, default=5, metavar="N", help="numeric sample points (default 5)")
    command.add_argument("--digits", type=_positive_int, default=30, metavar="D", help="working precision (default 30)")
    command.add_argument("--seed", type=int, default=0, metavar="S", help="seed of the sample points (default 0)")
    command.add_argument("--timeout", type=float, default=60.0, metavar="S", help="seconds per claim and route (default 60)")


def _positive_int(text: str) -> int:
    value = int(text)
    if not 1 <= value <= 200:
        raise argparse.ArgumentTypeError(f"expected a whole number from 1 to 200, got {text}")
    return value


def main(argv: Sequence[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    from crosscheck import commands  # deferred: `--help` should not import sympy

    started = time.perf_counter()
    handlers = {
        "run": commands.run_command,
        "check": commands.check_command,
        "routes": commands.routes_command,
        "spacetimes": commands.spacetimes_command,
    }
    try:
        code = handlers[args.command](args, started)
    except KeyboardInterrupt:
        print("interrupted", file=sys.stderr)
        return 130
    return int(code)


if __name__ == "__main__":
    raise SystemExit(main())
