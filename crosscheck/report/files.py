"""Writing report files atomically: a reader never sees half a report."""

from __future__ import annotations

import os
import tempfile


def write_atomic(path: str, text: str) -> None:
    """Write to a temporary file beside `path`, then rename it into place."""
    folder = os.path.dirname(os.path.abspath(path))
    os.makedirs(folder, exist_ok=True)
    handle, temporary = tempfile.mkstemp(prefix=".tmp-", dir=folder)
    try:
        with os.fdopen(handle, "w", encoding="utf-8") as stream:
            stream.write(text)
        os.chmod(temporary, 0o666 & ~_umask())  # mkstemp makes 0600; reports are for sharing
        os.replace(temporary, path)
    except BaseException:
        if os.path.exists(temporary):
            os.unlink(temporary)
        raise


def _umask() -> int:
    current = os.umask(0)
    os.umask(current)
    return current
