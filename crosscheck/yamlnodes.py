"""YAML to a small tree of located values, with the traps of PyYAML closed.

Claim files are untrusted.  We compose PyYAML's node graph with the safe
loader (no Python tags), then convert it to `YMap` / `YSeq` / `YScalar`
objects that remember their 1-based line and column.  While converting we
reject what PyYAML would silently accept: duplicate keys (it keeps the last),
merge keys (`<<`), aliases (which can multiply a small file into a huge tree)
and non-scalar keys.  Scalars keep their source text: the claim loader
decides how to read each field, so `1e-9` (a string in YAML 1.1) and `0.5`
are both read exactly, as numbers, where a number is expected.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import yaml

from crosscheck.errors import ClaimError

MAX_FILE_BYTES = 256 * 1024
MAX_NODES = 20000


@dataclass(frozen=True)
class Loc:
    """A 1-based position in a file."""

    path: str
    line: int
    column: int

    def error(self, field_name: str, message: str) -> ClaimError:
        return ClaimError(self.path, self.line, self.column, field_name, message)


@dataclass(frozen=True)
class YScalar:
    """A scalar with its source text; `quoted` when written in quotes."""

    text: str
    loc: Loc
    tag: str = ""
    quoted: bool = False

    def describe(self) -> str:
        return repr(self.text)


@dataclass(frozen=True)
class YSeq:
    items: tuple[YNode, ...]
    loc: Loc

    def describe(self) -> str:
        return "a list"


@dataclass(frozen=True)
class YMap:
    """A mapping in source order; `key_locs` gives the position of each key."""

    items: dict[str, YNode]
    loc: Loc
    key_locs: dict[str, Loc] = field(default_factory=dict)

    def describe(self) -> str:
        return "a mapping"

    def key_loc(self, key: str) -> Loc:
        return self.key_locs.get(key, self.loc)


YNode = YScalar | YSeq | YMap


def _loc(path: str, node: yaml.Node) -> Loc:
    mark = node.start_mark
    return Loc(path, mark.line + 1, mark.column + 1)


class _Converter:
    """Walks PyYAML's composed node graph once, rejecting unsafe constructs."""

    def __init__(self, path: str) -> None:
        self.path = path
        self.seen: set[int] = set()

    def convert(self, node: yaml.Node) -> YNode:
        if id(node) in self.seen:
            raise _loc(self.path, node).error(
                "", "aliases (*name) are not allowed in claim files; write the value out"
            )
        self.seen.add(id(node))
        if len(self.seen) > MAX_NODES:
            raise _loc(self.path, node).error("", f"file has more than {MAX_NODES} YAML nodes")
        if isinstance(node, yaml.ScalarNode):
            return YScalar(str(node.value), _loc(self.path, node), node.tag, node.style in ("'", '"'))
        if isinstance(node, yaml.SequenceNode):
            return YSeq(tuple(self.convert(item) for item in node.value), _loc(self.path, node))
        if isinstance(node, yaml.MappingNode):
            return self._mapping(node)
        raise _loc(self.path, node).error("", "unsupported YAML node")

    def _mapping(self, node: yaml.MappingNode) -> YMap:
        items: dict[str, YNode] = {}
        key_locs: dict[str, Loc] = {}
        for key_node, value_node in node.value:
            key_loc = _loc(self.path, key_node)
            if not isinstance(key_node, yaml.ScalarNode):
                raise key_loc.error("", "mapping keys must be plain names")
            key = str(key_node.value)
            if key == "<<" or key_node.tag == "tag:yaml.org,2002:merge":
                raise key_loc.error(key, "merge keys (<<) are not allowed; write the keys out")
            if key in items:
                first = key_locs[key]
                raise key_loc.error(key, f"duplicate key (first given at line {first.line})")
            key_locs[key] = key_loc
            items[key] = self.convert(value_node)
        return YMap(items, _loc(self.path, node), key_locs)


def load_text(text: str, path: str) -> YNode | None:
    """Parse one YAML document into located nodes (None for an empty file)."""
    if len(text.encode("utf-8", "replace")) > MAX_FILE_BYTES:
        raise ClaimError(path, 1, 1, "", f"file is larger than {MAX_FILE_BYTES // 1024} KiB")
    try:
        documents = list(yaml.compose_all(text, Loader=yaml.SafeLoader))
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark or exc.context_mark
        line, column = (mark.line + 1, mark.column + 1) if mark else (1, 1)
        raise ClaimError(path, line, column, "", f"YAML syntax: {exc.problem or exc}") from None
    except yaml.YAMLError as exc:
        raise ClaimError(path, 1, 1, "", f"YAML: {exc}") from None
    documents = [d for d in documents if d is not None]
    if not documents:
        return None
    if len(documents) > 1:
        loc = _loc(path, documents[1])
        raise loc.error("", "one YAML document per file (use 'claims:' with a list for several)")
    return _Converter(path).convert(documents[0])


def load_file(path: str) -> YNode | None:
    """Read and parse a claim file; unreadable or non-UTF-8 files are ClaimErrors."""
    try:
        with open(path, "rb") as handle:
            raw = handle.read(MAX_FILE_BYTES + 1)
    except OSError as exc:
        raise ClaimError(path, 1, 1, "", f"cannot read file: {exc.strerror}") from None
    if len(raw) > MAX_FILE_BYTES:
        raise ClaimError(path, 1, 1, "", f"file is larger than {MAX_FILE_BYTES // 1024} KiB")
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise ClaimError(path, 1, 1, "", f"file is not UTF-8 text (byte {exc.start})") from None
    return load_text(text, path)
