"""Shared fixtures: temporary claim files."""

from __future__ import annotations

import textwrap
from pathlib import Path

import pytest


@pytest.fixture
def claim_file(tmp_path: Path):
    """Write YAML text (dedented) to a file and return its path as a string."""

    def write(text: str, name: str = "claim.yaml") -> str:
        path = tmp_path / name
        path.parent.mkdir(parents=True, exist_ok=True)
        path.write_text(textwrap.dedent(text).lstrip("\n"), encoding="utf-8")
        return str(path)

    return write
