"""pytest plugin: `pytest claims/` checks every claim file as test items.

Registered through the `pytest11` entry point, so it is active wherever
crosscheck is installed; it must therefore never change an ordinary test run.
A `.yaml` file becomes a test file only when both hold:

- it lies under a path named on the command line (`pytest claims/`,
  `pytest claims/horizons/kerr-temperature.yaml`) or given with
  `--claims PATH`; paths that pytest took from `testpaths` do not count, so a
  plain `pytest` in a repository collects its usual tests and nothing else;
- it looks like a claim file (a top-level `id:` with `claim:` or `spectrum:`,
  or a top-level `claims:` list), so YAML test data and CI configs are left alone.

One item per claim, named by its id (so `-k schwarzschild` selects claims).
An item fails when the claim is contradicted, a route errors or times out,
or the file is invalid (and, with `--claims-strict`, when the claim is weak or
unchecked); the failure shows file:line, the claim, each failing route's
values at the sample points and the diagnosis.  Exit codes are pytest's own.
"""

from __future__ import annotations

import re
from pathlib import Path
from typing import TYPE_CHECKING

import pytest

if TYPE_CHECKING:  # the plugin loads with every pytest run: sympy only when a claim is collected
    from crosscheck.claim import Claim
    from crosscheck.errors import ClaimError

_CLAIM_ID = re.compile(r"^id:\s*\S", re.M)
_CLAIM_LINE = re.compile(r"^(claim|spectrum):", re.M)
_CLAIM_LIST = re.compile(r"^claims:\s*(#.*)?$", re.M)
_LIST_ID = re.compile(r"^\s*-\s+id:\s*\S", re.M)
_SNIFF_BYTES = 65536
_ROUTES = pytest.StashKey[dict]()


def pytest_addoption(parser: pytest.Parser) -> None:
    group = parser.getgroup("crosscheck", "crosscheck claim files")
    group.addoption("--claims", action="append", default=[], metavar="PATH",
                    help="check the claim files under PATH (claim files under paths named on the command line are checked too)")
    group.addoption("--claims-samples", type=int, default=5, metavar="N", help="numeric sample points per claim (default 5)")
    group.addoption("--claims-digits", type=int, default=20, metavar="D", help="working precision in digits (default 20)")
    group.addoption("--claims-timeout", type=float, default=60.0, metavar="S", help="seconds per claim and route (default 60)")
    group.addoption("--claims-strict", action="store_true", help="also fail weak and unchecked claims")


def pytest_configure(config: pytest.Config) -> None:
    extra = [p for p in config.getoption("claims", default=[]) or [] if p not in config.args]
    if extra:
        config.args.extend(extra)  # so that pytest visits them even when it took its paths from testpaths


def pytest_collect_file(file_path: Path, parent: pytest.Collector):
    if file_path.suffix not in (".yaml", ".yml"):
        return None
    if not _requested(file_path, parent.config) or not looks_like_claim_file(file_path):
        return None
    return ClaimFile.from_parent(parent, path=file_path)


def _requested(path: Path, config: pytest.Config) -> bool:
    """Whether the file lies under a path the user named (not one pytest took from testpaths)."""
    roots = [str(p) for p in config.getoption("claims", default=[]) or []]
    source = getattr(config, "args_source", None)
    if source is not None and source == pytest.Config.ArgsSource.ARGS:
        roots += [a.split("::")[0] for a in config.args]
    base = Path(config.invocation_params.dir)
    resolved = path.resolve()
    for root in roots:
        where = (base / root).resolve()
        if resolved == where or where in resolved.parents:
            return True
    return False


def looks_like_claim_file(path: Path) -> bool:
    """A cheap look at the text: claim files have a top-level id and claim, or a claims list."""
    try:
        with open(path, encoding="utf-8", errors="replace") as stream:
            text = stream.read(_SNIFF_BYTES)
    except OSError:
        return False
    if _CLAIM_ID.search(text) and _CLAIM_LINE.search(text):
        return True
    return bool(_CLAIM_LIST.search(text) and _LIST_ID.search(text))


def _routes(config: pytest.Config) -> dict:
    if _ROUTES not in config.stash:
        from crosscheck.routes.registry import load_routes

        config.stash[_ROUTES] = load_routes()[0]
    return config.stash[_ROUTES]


class ClaimFile(pytest.File):
    """A claim file: one item per claim, one failing item per claim that cannot be read."""

    def collect(self):
        from crosscheck.claimfile import load_claim_file

        claims, errors = load_claim_file(str(self.path), known_routes=_routes(self.config))
        for error in errors:
            yield InvalidClaimItem.from_parent(self, name=f"invalid:{error.line}", error=error)
        for claim in claims:
            yield ClaimItem.from_parent(self, name=claim.id, claim=claim)


class ClaimFailed(Exception):
    """Raised by a claim item whose outcome is a failure; carries the outcome for the report."""

    def __init__(self, outcome) -> None:
        super().__init__(outcome.claim_id)
        self.outcome = outcome


class ClaimItem(pytest.Item):
    """One claim, checked by every route that applies."""

    def __init__(self, *, claim: Claim, **kwargs) -> None:
        super().__init__(**kwargs)
        self.claim = claim
        self.outcome = None

    def runtest(self) -> None:
        from crosscheck.runner import RunOptions, run_claim

        config = self.config
        options = RunOptions(
            samples=config.getoption("claims_samples"), digits=config.getoption("claims_digits"),
            timeout=config.getoption("claims_timeout"),
        )
        self.outcome = run_claim(self.claim, _routes(config), options)
        failing = {"contradicted", "invalid"} | ({"weak", "unchecked"} if config.getoption("claims_strict") else set())
        crashed = any(r.status in ("error", "timeout") for r in self.outcome.routes)
        if self.outcome.status in failing or crashed:
            raise ClaimFailed(self.outcome)

    def repr_failure(self, excinfo, style=None):
        if isinstance(excinfo.value, ClaimFailed):
            return failure_text(excinfo.value.outcome)
        return super().repr_failure(excinfo, style=style)

    def reportinfo(self):
        return self.path, self.claim.line - 1, f"claim {self.claim.id}"


class InvalidClaimItem(pytest.Item):
    """A claim that could not be loaded fails with its `path:line:col: message`."""

    def __init__(self, *, error: ClaimError, **kwargs) -> None:
        super().__init__(**kwargs)
        self.error = error

    def runtest(self) -> None:
        raise self.error

    def repr_failure(self, excinfo, style=None):
        return f"invalid claim file\n{self.error}"

    def reportinfo(self):
        return self.path, self.error.line - 1, f"invalid claim at line {self.error.line}"


def failure_text(outcome) -> str:
    """file:line, the claim, then each failing route's values and diagnosis."""
    from crosscheck.report.junit import failure_body

    lines = [f"{outcome.file}:{outcome.line}: {outcome.claim_id} is {outcome.status.upper()}: {outcome.title}"]
    if outcome.claim_text:
        lines.append(f"  claim: {outcome.claim_text}")
    marks = ", ".join(f"{r.route} {r.status}" for r in outcome.routes if r.status != "not-applicable")
    lines.append(f"  routes: {marks or 'none applies'}")
    for route in outcome.routes:
        if route.status in ("disagree", "error", "timeout"):
            body = failure_body(outcome, route).splitlines()[2:]  # location and claim are printed above
            lines.extend("  " + line for line in body)
    return "\n".join(lines)
