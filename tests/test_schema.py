"""The claim JSON Schema: valid, in step with the loader, and accepting every built-in claim.

Validation uses jsonschema when it is installed; otherwise a small validator
written here for the keywords the schema uses (JSON Schema 2020-12 core and
validation vocabularies: type, enum, const, pattern, properties, required,
additionalProperties, propertyNames, items, min/maxItems, maxProperties,
maxLength, minimum, maximum, allOf, anyOf, oneOf, $ref).
"""

from __future__ import annotations

import glob
import json
import re
from pathlib import Path

import yaml

from crosscheck import claimfile, claimspacetime
from crosscheck.scaffold import DETECTOR_FAMILIES, DETECTOR_OBSERVABLES, observables, render_claim
from crosscheck.schema import load_schema, schema_text, write_schema
from crosscheck.spacetimes import FAMILIES

CLAIMS = Path(__file__).resolve().parent.parent / "claims"
SCHEMA = load_schema()
TYPES = {"object": dict, "array": list, "string": str, "integer": int, "number": (int, float), "boolean": bool}


def _is(value, kind: str) -> bool:
    if kind in ("integer", "number") and isinstance(value, bool):
        return False
    return isinstance(value, TYPES[kind])


def small_errors(value, schema: dict, root: dict = SCHEMA, where: str = "") -> list[str]:
    """The validation errors of `value` (empty when valid)."""
    if "$ref" in schema:
        target = root
        for part in schema["$ref"].lstrip("#/").split("/"):
            target = target[part]
        return small_errors(value, target, root, where)
    errors: list[str] = []
    kinds = schema.get("type")
    if kinds is not None and not any(_is(value, k) for k in ([kinds] if isinstance(kinds, str) else kinds)):
        return [f"{where}: not {kinds}"]
    if "enum" in schema and value not in schema["enum"]:
        errors.append(f"{where}: not one of {schema['enum']}")
    if "const" in schema and value != schema["const"]:
        errors.append(f"{where}: not {schema['const']}")
    if isinstance(value, str):
        if "pattern" in schema and not re.search(schema["pattern"], value):
            errors.append(f"{where}: does not match {schema['pattern']}")
        if len(value) > schema.get("maxLength", len(value)):
            errors.append(f"{where}: too long")
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        if value < schema.get("minimum", value) or value > schema.get("maximum", value):
            errors.append(f"{where}: out of range")
    if isinstance(value, list):
        if not schema.get("minItems", 0) <= len(value) <= schema.get("maxItems", len(value)):
            errors.append(f"{where}: wrong length")
        for i, item in enumerate(value):
            errors += small_errors(item, schema.get("items", {}), root, f"{where}[{i}]")
    if isinstance(value, dict):
        errors += [f"{where}: missing {k}" for k in schema.get("required", []) if k not in value]
        if len(value) > schema.get("maxProperties", len(value)):
            errors.append(f"{where}: too many keys")
        for key, item in value.items():
            if "propertyNames" in schema:
                errors += small_errors(key, schema["propertyNames"], root, f"{where}.{key}(name)")
            if key in schema.get("properties", {}):
                errors += small_errors(item, schema["properties"][key], root, f"{where}.{key}")
            elif schema.get("additionalProperties") is False:
                errors.append(f"{where}: unknown key {key}")
            elif isinstance(schema.get("additionalProperties"), dict):
                errors += small_errors(item, schema["additionalProperties"], root, f"{where}.{key}")
    for sub in schema.get("allOf", []):
        errors += small_errors(value, sub, root, where)
    if "anyOf" in schema and all(small_errors(value, s, root, where) for s in schema["anyOf"]):
        errors.append(f"{where}: matches none of anyOf")
    if "oneOf" in schema and sum(not small_errors(value, s, root, where) for s in schema["oneOf"]) != 1:
        errors.append(f"{where}: does not match exactly one of oneOf")
    return errors


def validation_errors(value) -> list[str]:
    try:
        import jsonschema
    except ImportError:
        return small_errors(value, SCHEMA)
    validator = jsonschema.Draft202012Validator(SCHEMA)
    return [e.message for e in validator.iter_errors(value)]


def test_schema_is_a_valid_2020_12_schema():
    assert SCHEMA["$schema"] == "https://json-schema.org/draft/2020-12/schema"
    try:
        import jsonschema
    except ImportError:
        return
    jsonschema.Draft202012Validator.check_schema(SCHEMA)


def test_schema_keys_are_the_loaders_keys():
    claim = SCHEMA["$defs"]["claim"]["properties"]
    assert set(claim) == set(claimfile.CLAIM_KEYS)
    assert set(SCHEMA["$defs"]["spacetime"]["properties"]) == set(claimspacetime.SPACETIME_KEYS)
    assert set(SCHEMA["$defs"]["static"]["properties"]) == set(claimspacetime.STATIC_KEYS)
    assert set(SCHEMA["$defs"]["stationary"]["properties"]) == set(claimspacetime.STATIONARY_KEYS)
    assert set(SCHEMA["$defs"]["metric"]["properties"]) == set(claimspacetime.METRIC_KEYS)
    detector = SCHEMA["$defs"]["detector"]["properties"]
    assert set(detector) == set(claimspacetime.DETECTOR_KEYS)
    assert set(detector["trajectory"]["enum"]) == set(claimspacetime.TRAJECTORY_ARGUMENTS)
    assert set(SCHEMA["$defs"]["spacetime"]["properties"]["name"]["enum"]) == set(FAMILIES)


def test_every_built_in_claim_and_every_scaffold_validates():
    files = sorted(glob.glob(str(CLAIMS / "**" / "*.yaml"), recursive=True))
    assert len(files) >= 20
    for path in files:
        with open(path, encoding="utf-8") as stream:
            assert validation_errors(yaml.safe_load(stream)) == [], path
    for name in FAMILIES:
        for observable in observables():
            if observable in DETECTOR_OBSERVABLES and name not in DETECTOR_FAMILIES:
                continue
            assert validation_errors(yaml.safe_load(render_claim(name, observable))) == [], (name, observable)


def test_schema_rejects_what_the_loader_rejects():
    good = {"id": "a/b", "spacetime": {"name": "schwarzschild"}, "parameters": {"M": [0.5, 20]}, "claim": "T = 1/(8*pi*M)"}
    assert validation_errors(good) == [] and small_errors(good, SCHEMA) == []
    for bad in (
        {**good, "titel": "typo"},  # unknown key
        {**good, "id": "Upper/Case"},
        {**good, "spacetime": {"name": "schwarzschild", "static": {"F": "1"}}},  # two forms
        {**good, "parameters": {"M": [1]}},
        {key: value for key, value in good.items() if key != "claim"},
        {**good, "agreement": "roughly"},
        {"claims": [{**good, "units": "cgs"}]},
    ):
        assert validation_errors(bad), bad
        assert small_errors(bad, SCHEMA), bad  # the fallback validator agrees


def test_write_schema(tmp_path, capsys):
    target = tmp_path / "claim.schema.json"
    assert write_schema(str(target)) == 0
    assert json.loads(target.read_text()) == SCHEMA
    assert write_schema(None) == 0 and capsys.readouterr().out == schema_text()
