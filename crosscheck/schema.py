"""The JSON Schema of the claim format, shipped as package data (`crosscheck schema`).

Editors with a YAML language server validate and complete claim files from
it (for example with a `# yaml-language-server: $schema=claim.schema.json`
line at the top of a claim file).  The schema describes the same keys as
`claimfile` (a test keeps the two in step); `claimfile` remains the judge,
since it also checks what a schema cannot: expressions, ranges, names.
"""

from __future__ import annotations

import json
import sys
from importlib import resources

SCHEMA_RESOURCE = "claim.schema.json"


def schema_text() -> str:
    """The schema as shipped (JSON text)."""
    return resources.files("crosscheck").joinpath("data", SCHEMA_RESOURCE).read_text(encoding="utf-8")


def load_schema() -> dict:
    return json.loads(schema_text())


def write_schema(path: str | None = None) -> int:
    """The `crosscheck schema` command: write the schema to `path`, or to standard output."""
    text = schema_text()
    if path:
        from crosscheck.report.files import write_atomic

        write_atomic(path, text)
    else:
        sys.stdout.write(text)
    return 0
