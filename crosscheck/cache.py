"""The result cache: route outcomes keyed by what determines them, in SQLite.

A key is a hash of: the normalised claim (a canonical text of the *parsed*
claim -- sympy `srepr` of its expressions, spacetime, parameters and settings
-- so comments, whitespace and key order in the YAML do not matter, while
the claim's id, title and sources, which no route sees, do not count either),
the route's name, implementation and `version`, crosscheck's version and a
fingerprint of its source files (so an edited checkout never reuses stale
results), the sympy and mpmath versions, and the precision settings
(`RunOptions` without the time limit).

Timeouts and errors are never stored: they depend on the machine and the
moment, and a re-run is what the user wants after one.

The file is trusted only when it is SQLite, carries our application id and
schema version, passes `quick_check`, and each row's payload matches its
SHA-256.  Anything else is moved aside to `<file>.broken` and rebuilt; a row
that fails its check is deleted and counts as a miss.  Only the parent
process writes (workers return results to it); WAL journalling and a busy
timeout make two crosscheck runs sharing one file safe.
"""

from __future__ import annotations

import dataclasses
import functools
import hashlib
import inspect
import json
import os
import sqlite3
import time
from collections.abc import Mapping
from pathlib import Path

import mpmath
import sympy

from crosscheck import __version__
from crosscheck.claim import Claim
from crosscheck.results import RouteOutcome
from crosscheck.results_io import FORMAT, outcome_from_data, outcome_to_data

DEFAULT_PATH = ".crosscheck-cache"
APPLICATION_ID = 0x43524F53  # "CROS"
SCHEMA_VERSION = 1
SQLITE_MAGIC = b"SQLite format 3\x00"
CACHEABLE = frozenset({"agree", "disagree", "inconclusive", "not-applicable"})
# Claim fields that no route and no verdict reads: they label the claim, they do not define it.
LABEL_FIELDS = frozenset({"id", "title", "path", "line", "claim_line", "claim_column", "sources", "notes", "text", "routes"})
# RunOptions fields that change whether a result arrives, not what it is.
NOT_PRECISION = frozenset({"timeout"})
_COLUMNS = ("key", "claim", "route", "payload", "digest", "created")
_SCHEMA = (
    "CREATE TABLE IF NOT EXISTS results (key TEXT PRIMARY KEY, claim TEXT NOT NULL, route TEXT NOT NULL,"
    " payload TEXT NOT NULL, digest TEXT NOT NULL, created REAL NOT NULL)"
)


class CacheUnusable(Exception):
    """The cache file is not one of ours, or is damaged."""


# -- keys --------------------------------------------------------------------------------------
def canonical(value: object) -> str:
    """A text that is equal for equal values, whatever their origin (deterministic across runs)."""
    if isinstance(value, sympy.Basic):
        return "S:" + sympy.srepr(value)
    if dataclasses.is_dataclass(value) and not isinstance(value, type):
        skip = LABEL_FIELDS if isinstance(value, Claim) else frozenset()
        inner = ",".join(
            f"{f.name}={canonical(getattr(value, f.name))}" for f in dataclasses.fields(value) if f.name not in skip
        )
        if isinstance(value, Claim):  # the runner treats a claim without an equation (spectrum only) apart
            inner += f",has_equation={bool(value.text)}"
        return f"{type(value).__name__}({inner})"
    if isinstance(value, Mapping):
        items = sorted((canonical(k), canonical(v)) for k, v in value.items())
        return "{" + ",".join(f"{k}:{v}" for k, v in items) + "}"
    if isinstance(value, (list, tuple)):
        return "[" + ",".join(canonical(v) for v in value) + "]"
    if isinstance(value, (set, frozenset)):
        return "set(" + ",".join(sorted(canonical(v) for v in value)) + ")"
    if value is None or isinstance(value, (str, int, float, bool)):
        return repr(value)
    return f"{type(value).__module__}.{type(value).__qualname__}:{value!r}"


def claim_fingerprint(claim: Claim) -> str:
    return _sha(canonical(claim))


def task_key(claim_hash: str, route_name: str, route: object | None, options: object) -> str:
    """The cache key of one (claim, route) task; `route` None is the dimension check."""
    precision = {f.name: getattr(options, f.name) for f in dataclasses.fields(options) if f.name not in NOT_PRECISION}
    parts = {
        "format": FORMAT, "claim": claim_hash, "route": route_name, "implementation": _implementation(route),
        "version": str(getattr(route, "version", "")), "crosscheck": __version__, "code": code_fingerprint(),
        "sympy": sympy.__version__, "mpmath": mpmath.__version__, "options": precision,
    }
    return _sha(json.dumps(parts, sort_keys=True, default=str))


def _implementation(route: object | None) -> str:
    if route is None:
        return "crosscheck.dimcheck"
    kind = type(route)
    return f"{kind.__module__}:{kind.__qualname__}:{_module_file_hash(kind)}"


def _module_file_hash(kind: type) -> str:
    """A route outside crosscheck is fingerprinted by its module's source file."""
    if kind.__module__.split(".")[0] == "crosscheck":
        return ""  # covered by code_fingerprint()
    try:
        return _file_hash(inspect.getsourcefile(kind) or "")
    except (TypeError, OSError):
        return ""


@functools.cache
def _file_hash(path: str) -> str:
    return hashlib.sha256(Path(path).read_bytes()).hexdigest() if path else ""


@functools.lru_cache(maxsize=1)
def code_fingerprint() -> str:
    """SHA-256 over crosscheck's own Python sources (a few ms; once per process)."""
    root = Path(__file__).resolve().parent
    digest = hashlib.sha256()
    for path in sorted(root.rglob("*.py")):
        digest.update(str(path.relative_to(root)).encode() + b"\0" + path.read_bytes() + b"\0")
    return digest.hexdigest()


def _sha(text: str) -> str:
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


# -- the store ---------------------------------------------------------------------------------
class Cache:
    """An open cache file.  `notes` collects what the user should hear (rebuilds, failures)."""

    def __init__(self, path: str) -> None:
        self.path = path
        self.hits = 0
        self.misses = 0
        self.stored = 0
        self.notes: list[str] = []
        self._db: sqlite3.Connection | None = None
        try:
            self._db = _connect_checked(path)
        except CacheUnusable as exc:
            self._rebuild(str(exc))
        except (OSError, sqlite3.Error) as exc:  # e.g. a read-only directory: run without a cache
            self.notes.append(f"cache {path} cannot be used ({exc}); running without a cache")

    def _rebuild(self, problem: str) -> None:
        try:
            _move_aside(self.path)
            self._db = _connect_checked(self.path)
        except (CacheUnusable, OSError, sqlite3.Error) as exc:
            self.notes.append(f"cache {self.path} {problem}; cannot rebuild it ({exc}); running without a cache")
            return
        self.notes.append(f"cache {self.path} {problem}; moved to {self.path}.broken and rebuilt")

    def get(self, key: str) -> RouteOutcome | None:
        """The stored outcome, or None (a row that fails its checks is deleted)."""
        row = self._run("SELECT payload, digest FROM results WHERE key = ?", (key,))
        found = row.fetchone() if row is not None else None
        if found is not None:
            payload, digest = found
            try:
                if _sha(payload) != digest:
                    raise ValueError("digest mismatch")
                outcome = outcome_from_data(json.loads(payload))
                self.hits += 1
                return outcome
            except ValueError:
                self._run("DELETE FROM results WHERE key = ?", (key,))
        self.misses += 1
        return None

    def put(self, key: str, claim_id: str, outcome: RouteOutcome) -> None:
        if outcome.status not in CACHEABLE:
            return
        payload = json.dumps(outcome_to_data(outcome), sort_keys=True)
        stored = self._run(
            "INSERT OR REPLACE INTO results (key, claim, route, payload, digest, created) VALUES (?, ?, ?, ?, ?, ?)",
            (key, claim_id, outcome.route, payload, _sha(payload), time.time()),
        )
        if stored is not None:
            self.stored += 1

    def close(self) -> None:
        if self._db is not None:
            self._db.close()
            self._db = None

    def _run(self, sql: str, parameters: tuple):
        """Execute, or switch the cache off with a note: a cache problem never stops a run."""
        if self._db is None:
            return None
        try:
            return self._db.execute(sql, parameters)
        except sqlite3.Error as exc:
            self.notes.append(f"cache {self.path} switched off: {exc}")
            self.close()
            return None


def _connect_checked(path: str) -> sqlite3.Connection:
    fresh = not os.path.exists(path) or os.path.getsize(path) == 0
    if not fresh:
        with open(path, "rb") as stream:
            if stream.read(len(SQLITE_MAGIC)) != SQLITE_MAGIC:
                raise CacheUnusable("is not an SQLite file")
    try:
        db = sqlite3.connect(path, timeout=10.0, isolation_level=None)
    except sqlite3.Error as exc:
        raise CacheUnusable(f"cannot be opened ({exc})") from exc
    try:
        if fresh:
            _create(db)
        else:
            _check(db)
        db.execute("PRAGMA journal_mode=WAL")
        db.execute("PRAGMA synchronous=NORMAL")
    except sqlite3.Error as exc:
        db.close()
        raise CacheUnusable(f"is damaged ({exc})") from exc
    except CacheUnusable:
        db.close()
        raise
    return db


def _create(db: sqlite3.Connection) -> None:
    db.execute(f"PRAGMA application_id={APPLICATION_ID}")
    db.execute(f"PRAGMA user_version={SCHEMA_VERSION}")
    db.execute(_SCHEMA)


def _check(db: sqlite3.Connection) -> None:
    application = db.execute("PRAGMA application_id").fetchone()[0]
    if application != APPLICATION_ID:
        raise CacheUnusable(f"belongs to another program (application id {application:#x})")
    version = db.execute("PRAGMA user_version").fetchone()[0]
    if version != SCHEMA_VERSION:
        raise CacheUnusable(f"has schema version {version}, not {SCHEMA_VERSION}")
    if db.execute("PRAGMA quick_check").fetchone()[0] != "ok":
        raise CacheUnusable("fails SQLite's integrity check")
    columns = tuple(row[1] for row in db.execute("PRAGMA table_info(results)"))
    if columns != _COLUMNS:
        raise CacheUnusable("has an unexpected table layout")


def _companions(path: str) -> list[str]:
    return [path + "-wal", path + "-shm", path + "-journal"]


def _move_aside(path: str) -> None:
    """Keep the untrusted file for inspection (it may be someone's data), out of the way."""
    if os.path.exists(path):
        os.replace(path, path + ".broken")
    for companion in _companions(path):
        if os.path.exists(companion):
            os.unlink(companion)


def clear_cache(path: str) -> str:
    """Delete the cache file; refuse (CacheUnusable) when it is not a crosscheck cache."""
    if not os.path.exists(path):
        return f"no cache at {path}"
    db = _connect_checked(path)  # raises CacheUnusable for foreign or damaged files
    count = db.execute("SELECT COUNT(*) FROM results").fetchone()[0]
    db.close()
    for name in [path, *_companions(path)]:
        if os.path.exists(name):
            os.unlink(name)
    return f"removed {path} ({count} results)"
