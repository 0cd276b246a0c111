"""Writing report files atomically: a reader never sees half a report.

A report is written to a temporary file beside its target, flushed to disk
and renamed into place, so an interrupted write leaves the earlier file
untouched.  An *incomplete* report (the run was interrupted) still replaces
the target, so that nobody mistakes an old result for the current one, but a
complete earlier report is kept beside it as `<name>.previous<ext>` first.
"""

from __future__ import annotations

import os
import shutil
import tempfile


def write_atomic(path: str, text: str) -> None:
    """Write to a temporary file beside `path`, then rename it into place."""
    folder = os.path.dirname(os.path.abspath(path))
    os.makedirs(folder, exist_ok=True)
    handle, temporary = tempfile.mkstemp(prefix=".tmp-", dir=folder)
    try:
        with os.fdopen(handle, "w", encoding="utf-8") as stream:
            stream.write(text)
            stream.flush()
            os.fsync(stream.fileno())
        os.chmod(temporary, 0o666 & ~_umask())  # mkstemp makes 0600; reports are for sharing
        os.replace(temporary, path)
    except BaseException:
        if os.path.exists(temporary):
            os.unlink(temporary)
        raise


def previous_path(path: str) -> str:
    """`out/report.html` -> `out/report.previous.html`."""
    stem, extension = os.path.splitext(path)
    return f"{stem}.previous{extension}"


def write_report(path: str, text: str, complete: bool = True, incomplete_mark: str | None = None) -> str | None:
    """Write a report atomically; before an incomplete one replaces a complete one, keep that.

    `incomplete_mark` is the text by which this format marks an incomplete
    report (an earlier file containing it is not worth keeping).  Returns the
    path of the kept earlier report, if one was kept.
    """
    kept = None
    if not complete and os.path.isfile(path) and not _contains(path, incomplete_mark):
        kept = previous_path(path)
        _copy_atomic(path, kept)
    write_atomic(path, text)
    return kept


def _contains(path: str, mark: str | None) -> bool:
    if not mark:
        return False
    with open(path, encoding="utf-8", errors="replace") as stream:
        return mark in stream.read()


def _copy_atomic(source: str, target: str) -> None:
    """A hard link (or copy) of `source` renamed onto `target`: the target is never half there."""
    folder = os.path.dirname(os.path.abspath(target))
    handle, temporary = tempfile.mkstemp(prefix=".tmp-", dir=folder)
    os.close(handle)
    try:
        os.unlink(temporary)
        try:
            os.link(source, temporary)
        except OSError:  # file systems without hard links
            shutil.copy2(source, temporary)
        os.replace(temporary, target)
    except BaseException:
        if os.path.exists(temporary):
            os.unlink(temporary)
        raise


def _umask() -> int:
    current = os.umask(0)
    os.umask(current)
    return current
