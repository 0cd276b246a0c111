"""Isolated execution: tasks in forked children with a time and memory limit.

Why fork: the parent has already parsed the claims (sympy objects) and loaded
the routes, so a forked child starts with them.  The child can hang, crash
(`os._exit`, a segfault) or run out of memory: the parent sees a missing
result, kills the child when its time is up, and reports that task alone.
Python's own `ProcessPoolExecutor` cannot do this: one dead worker breaks the
whole pool.

`run_isolated` forks one child for one task (nothing is pickled on the way
in; Dask workers use it).  `IsolatingExecutor` keeps one long-lived child per
job slot and sends it the tasks one after another as pickles: the child keeps
sympy's caches and the routes' compiled functions from one task to the next
(measured: a fresh fork per task cost 1.2x the CPU on the claim library).
A child that dies, overruns its time or grows past half its memory limit is
replaced by a fresh fork before the next task; a task that cannot be pickled
falls back to a fork of its own.  `InlineExecutor` runs tasks in the calling
process (for debugging, and for tests that inject fake routes and want to see
their exceptions directly).
"""

from __future__ import annotations

import functools
import gc
import os
import pickle
import resource
import select
import signal
import sys
import threading
import time
from collections.abc import Callable
from concurrent.futures import Executor, Future, ThreadPoolExecutor
from dataclasses import dataclass
from typing import Any

GRACE = 1.0  # seconds past the limit before the child is killed (it normally stops itself first)
TASKS_PER_WORKER = 200  # a long-lived worker is replaced after this many tasks (bounds slow leaks)
_HEADER = 8  # bytes of the length prefix of each message between a worker and its parent
_CHILD_FAILED = 70  # exit status of a child that could not even report its own failure


@dataclass(frozen=True)
class Limits:
    """What one task may use: wall-clock seconds, and address space in MB beyond what the
    worker inherits from the parent (0 = no limit)."""

    timeout: float = 60.0
    memory_mb: int = 4096
    grace: float = GRACE


class WorkerFailure(Exception):
    """A task gave no result; `seconds` is how long it ran."""

    def __init__(self, message: str, seconds: float) -> None:
        super().__init__(message)
        self.message = message
        self.seconds = seconds


class WorkerTimeout(WorkerFailure):
    """The task was still running at its time limit and was killed."""


class WorkerCrashed(WorkerFailure):
    """The task raised, or its process died, before returning a result."""


class _Children:
    """The live child processes of one executor, so that shutdown can kill them."""

    def __init__(self) -> None:
        self.lock = threading.Lock()
        self.pids: set[int] = set()
        self.stopping = False

    def kill_all(self) -> None:
        with self.lock:
            self.stopping = True
            for pid in self.pids:
                _kill(pid)


_DEFAULT_CHILDREN = _Children()


def default_jobs() -> int:
    """The cores this process may use (affinity-aware where the OS tells)."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except (AttributeError, OSError):
        return max(1, os.cpu_count() or 1)


def run_isolated(func: Callable[[], Any], limits: Limits, children: _Children = _DEFAULT_CHILDREN) -> Any:
    """func() in a forked child; return its (picklable) result or raise WorkerFailure."""
    read_fd, write_fd = os.pipe()
    started = time.monotonic()
    with children.lock:
        if children.stopping:
            os.close(read_fd)
            os.close(write_fd)
            raise WorkerCrashed("run stopped before this task started", 0.0)
        pid = os.fork()
        if pid == 0:  # the child never leaves _child
            _child(func, limits, read_fd, write_fd)
        children.pids.add(pid)
    os.close(write_fd)
    data, finished = b"", False
    try:
        data, finished = _collect(read_fd, started + limits.timeout + limits.grace)
    finally:  # also on Ctrl-C in this thread: never leave a child behind
        if not finished:
            _kill(pid)
        _, status = os.waitpid(pid, 0)
        os.close(read_fd)
        with children.lock:
            children.pids.discard(pid)
    seconds = time.monotonic() - started
    if not finished:
        raise WorkerTimeout(f"no result within {limits.timeout:g} s (worker process killed)", seconds)
    return _decode(data, os.waitstatus_to_exitcode(status), seconds)


def _kill(pid: int) -> None:
    try:
        os.kill(pid, signal.SIGKILL)
    except ProcessLookupError:
        pass


def _collect(fd: int, deadline: float) -> tuple[bytes, bool]:
    """Read the pipe to its end; (data, False) when the deadline came first."""
    chunks = []
    while True:
        left = deadline - time.monotonic()
        if left <= 0:
            return b"".join(chunks), False
        ready, _, _ = select.select([fd], [], [], min(left, 0.5))
        if not ready:
            continue
        chunk = os.read(fd, 1 << 16)
        if not chunk:
            return b"".join(chunks), True
        chunks.append(chunk)


def _decode(data: bytes, code: int, seconds: float) -> Any:
    if data:
        try:
            kind, value = pickle.loads(data)
        except Exception:
            kind, value = "garbled", None
        if kind == "ok":
            return value
        if kind == "raised":
            raise WorkerCrashed(str(value), seconds)
    raise WorkerCrashed(_death_text(code), seconds)


def _death_text(code: int) -> str:
    if code < 0:
        try:
            name = signal.Signals(-code).name
        except ValueError:
            name = f"signal {-code}"
        hint = " (out of memory?)" if -code == signal.SIGKILL else ""
        return f"worker process died from {name}{hint} before returning a result"
    return f"worker process exited with status {code} before returning a result"


# -- the child side ----------------------------------------------------------------------------
def _child(func: Callable[[], Any], limits: Limits, read_fd: int, write_fd: int) -> None:
    code = 0
    try:
        os.close(read_fd)
        _prepare_child(limits, write_fd)
        try:
            payload = pickle.dumps(("ok", func()), protocol=pickle.HIGHEST_PROTOCOL)
        except BaseException as exc:  # the task's failure is its result
            payload = pickle.dumps(("raised", f"{type(exc).__name__}: {exc}"))
        _write_all(write_fd, payload)
    except BaseException:
        code = _CHILD_FAILED
    finally:
        os._exit(code)


def _prepare_child(limits: Limits, *keep_fds: int) -> None:
    """Limits on, signals back to defaults, and nothing shared with the parent.

    Other fds are closed so that a sibling's pipe never stays open here (its
    parent would wait for an end of file that never comes); output goes to
    /dev/null, since the parent's stream locks may have been held by another
    thread at the moment of the fork.
    """
    gc.freeze()  # collections here skip the inherited objects: their pages stay shared, not copied
    signal.signal(signal.SIGINT, signal.SIG_IGN)  # Ctrl-C is the parent's to handle
    signal.signal(signal.SIGTERM, signal.SIG_DFL)
    low = 3
    for fd in sorted(keep_fds):
        os.closerange(low, fd)
        low = fd + 1
    os.closerange(low, _fd_limit())
    devnull = os.open(os.devnull, os.O_RDWR)
    for fd in (0, 1, 2):
        os.dup2(devnull, fd)
    sys.stdin = sys.stdout = sys.stderr = open(devnull, "r+", closefd=False)  # noqa: SIM115
    if limits.memory_mb > 0:
        _limit_memory(_address_space() + limits.memory_mb * 1024 * 1024)


def _address_space() -> int:
    """Bytes of address space this process has now (inherited from the parent at the fork).

    The limit is counted on top of it: the parent's mappings (its libraries, its
    threads' malloc arenas) are shared, not the task's doing, and they vary with
    what the parent imported.
    """
    try:
        with open("/proc/self/statm", encoding="ascii") as stream:
            return int(stream.read().split()[0]) * os.sysconf("SC_PAGE_SIZE")
    except (OSError, ValueError, IndexError):
        return 0


def _fd_limit() -> int:
    try:
        return max(int(os.sysconf("SC_OPEN_MAX")), 1 << 10)
    except (ValueError, OSError):
        return 1 << 16


def _limit_memory(limit: int) -> None:
    _, hard = resource.getrlimit(resource.RLIMIT_AS)
    if hard != resource.RLIM_INFINITY:
        limit = min(limit, hard)
    resource.setrlimit(resource.RLIMIT_AS, (limit, hard))


def _write_all(fd: int, data: bytes) -> None:
    view = memoryview(data)
    while view:
        written = os.write(fd, view)
        view = view[written:]


# -- long-lived workers ------------------------------------------------------------------------
class _Worker:
    """A forked child that runs pickled tasks one after another (see the module text).

    Messages both ways are a length prefix and a pickle.  The parent waits for
    each result with the task's deadline and kills the child when it passes;
    a dead child is never reused.
    """

    def __init__(self, limits: Limits, children: _Children) -> None:
        task_read, self._task_write = os.pipe()
        self._result_read, result_write = os.pipe()
        self.limits, self.tasks, self.alive = limits, 0, True
        self._children = children
        self._stopping = threading.Lock()  # shutdown (main thread) may race the slot's thread
        with children.lock:
            if children.stopping:
                for fd in (task_read, self._task_write, self._result_read, result_write):
                    os.close(fd)
                raise WorkerCrashed("run stopped before this task started", 0.0)
            self.pid = os.fork()
            if self.pid == 0:  # the child never leaves _serve
                _serve(limits, task_read, result_write)
            children.pids.add(self.pid)
        os.close(task_read)
        os.close(result_write)

    def run(self, payload: bytes) -> Any:
        """The result of one pickled task, or WorkerFailure (the worker is then dead)."""
        started = time.monotonic()
        self.tasks += 1
        try:
            _write_all(self._task_write, len(payload).to_bytes(_HEADER, "big") + payload)
            data, finished = _receive(self._result_read, started + self.limits.timeout + self.limits.grace)
        except OSError:  # the child is gone (a broken pipe)
            data, finished = None, True
        except BaseException:  # e.g. Ctrl-C in this thread: never leave a child mid-task
            self.stop(kill=True)
            raise
        seconds = time.monotonic() - started
        if not finished:
            self.stop(kill=True)
            raise WorkerTimeout(f"no result within {self.limits.timeout:g} s (worker process killed)", seconds)
        if data is None:  # end of file before a whole result: the child died
            raise WorkerCrashed(_death_text(self.stop(kill=False)), seconds)
        kind, value, retire = pickle.loads(data)
        if retire or self.tasks >= TASKS_PER_WORKER:
            self.stop(kill=False)
        if kind == "raised":
            raise WorkerCrashed(str(value), seconds)
        return value

    def stop(self, kill: bool) -> int:
        """End the child (politely: close its task pipe; or SIGKILL); its exit code."""
        with self._stopping:
            if not self.alive:
                return 0
            self.alive = False
        os.close(self._task_write)
        if kill:
            _kill(self.pid)
        _, status = os.waitpid(self.pid, 0)
        os.close(self._result_read)
        with self._children.lock:
            self._children.pids.discard(self.pid)
        return os.waitstatus_to_exitcode(status)


def _receive(fd: int, deadline: float) -> tuple[bytes | None, bool]:
    """One length-prefixed message: (data, True); (None, True) at end of file;
    (None, False) when the deadline came first."""
    header, finished = _read_before(fd, _HEADER, deadline)
    if header is None:
        return None, finished
    return _read_before(fd, int.from_bytes(header, "big"), deadline)


def _read_before(fd: int, count: int, deadline: float) -> tuple[bytes | None, bool]:
    chunks, left = [], count
    while left:
        wait = deadline - time.monotonic()
        if wait <= 0:
            return None, False
        ready, _, _ = select.select([fd], [], [], min(wait, 0.5))
        if not ready:
            continue
        chunk = os.read(fd, min(left, 1 << 20))
        if not chunk:
            return None, True
        chunks.append(chunk)
        left -= len(chunk)
    return b"".join(chunks), True


def _read_message(fd: int) -> bytes | None:
    """A whole message from the parent, or None at end of file (the parent is done)."""
    header = _read_exactly(fd, _HEADER)
    if header is None:
        return None
    return _read_exactly(fd, int.from_bytes(header, "big"))


def _read_exactly(fd: int, count: int) -> bytes | None:
    chunks, left = [], count
    while left:
        chunk = os.read(fd, min(left, 1 << 20))
        if not chunk:
            return None
        chunks.append(chunk)
        left -= len(chunk)
    return b"".join(chunks)


def _serve(limits: Limits, task_fd: int, result_fd: int) -> None:
    """The worker's life: run tasks until the parent closes the pipe."""
    code = 0
    try:
        _prepare_child(limits, task_fd, result_fd)
        retire_above = _address_space() + limits.memory_mb * 1024 * 1024 // 2 if limits.memory_mb > 0 else 0
        while (message := _read_message(task_fd)) is not None:
            _write_message(result_fd, _run_task(message, retire_above))
    except BaseException:
        code = _CHILD_FAILED
    finally:
        os._exit(code)


def _run_task(message: bytes, retire_above: int) -> bytes:
    """(kind, value, retire) as a pickle.  Retire once the worker has used half its
    memory allowance, so the next task starts in a fresh fork with all of it."""
    try:
        result = ("ok", pickle.loads(message)())
    except BaseException as exc:  # the task's failure is its result
        result = ("raised", f"{type(exc).__name__}: {exc}")
    retire = result[0] == "raised" or (retire_above > 0 and _address_space() > retire_above)
    try:
        return pickle.dumps((*result, retire), protocol=pickle.HIGHEST_PROTOCOL)
    except Exception as exc:
        return pickle.dumps(("raised", f"the result could not be pickled ({type(exc).__name__}: {exc})", True))


def _write_message(fd: int, data: bytes) -> None:
    _write_all(fd, len(data).to_bytes(_HEADER, "big") + data)


# -- executors ---------------------------------------------------------------------------------
class IsolatingExecutor(ThreadPoolExecutor):
    """`jobs` tasks at a time under `limits`, each job slot with its own long-lived worker."""

    def __init__(self, jobs: int, limits: Limits) -> None:
        super().__init__(max_workers=max(1, jobs), thread_name_prefix="crosscheck-job")
        self.limits = limits
        self._children = _Children()
        self._slot = threading.local()
        self._workers: list[_Worker] = []
        self._workers_lock = threading.Lock()

    def submit(self, fn, /, *args, **kwargs) -> Future:  # type: ignore[override]
        task = functools.partial(fn, *args, **kwargs)
        return super().submit(self._run, task)

    def _run(self, task: Callable[[], Any]) -> Any:
        """In a pool thread: the task on this slot's worker (a fresh one if needed)."""
        try:
            payload = pickle.dumps(task, protocol=pickle.HIGHEST_PROTOCOL)
        except Exception:  # e.g. a lambda from a test: it gets a fork of its own
            return run_isolated(task, self.limits, self._children)
        worker = getattr(self._slot, "worker", None)
        if worker is None or not worker.alive:
            worker = _Worker(self.limits, self._children)
            self._slot.worker = worker
            with self._workers_lock:
                self._workers.append(worker)
        return worker.run(payload)

    def shutdown(self, wait: bool = True, *, cancel_futures: bool = False) -> None:
        if cancel_futures:
            self._children.kill_all()
        super().shutdown(wait=wait, cancel_futures=cancel_futures)
        with self._workers_lock:
            for worker in self._workers:
                worker.stop(kill=cancel_futures)
            self._workers.clear()


class InlineExecutor(Executor):
    """Runs each task at once in this process (no isolation beyond the route time limit)."""

    def submit(self, fn, /, *args, **kwargs) -> Future:
        future: Future = Future()
        future.set_running_or_notify_cancel()
        try:
            future.set_result(fn(*args, **kwargs))
        except Exception as exc:  # KeyboardInterrupt and friends propagate: they stop the run
            future.set_exception(exc)
        return future
