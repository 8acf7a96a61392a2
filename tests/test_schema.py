"""`sizing schema`: the JSON Schema of requirement files, for editor completion.

Checked with the general-purpose `jsonschema` package (Draft 2020-12 metaschema):
the schema is valid, generated from the same pydantic models that validate the
files, accepts every example file and rejects the broken files whose defect JSON
Schema can express. # common practice, no source
"""
from __future__ import annotations

import json
from pathlib import Path

import jsonschema
import pytest
import yaml
from pydantic import BaseModel

from sizing.inputs import aircraft, kinds, mission
from sizing.inputs import schema as schema_models
from sizing.inputs import spec as S

from .cliutil import run as run_cli

MODEL_MODULES = (aircraft, mission, kinds, schema_models)

ROOT = Path(__file__).resolve().parents[1]
EXAMPLES = sorted((ROOT / "requirements").glob("*.yaml"))
BROKEN = ROOT / "tests" / "broken"

# Broken files whose defect the schema can see: key names, value types, the listed kinds,
# models and engine types, the number-then-unit form, and the ranges the schema carries
# (CLmax, Mach, load factor).
EXPRESSIBLE = [
    "unknown-key", "unknown-key-requirement", "bare-number", "clmax-implausible", "mach-negative",
    "unknown-kind", "empty", "not-a-mapping", "cd0-with-unit", "missing-field", "missing-kind",
    "unknown-engine-type", "requirements-not-a-list", "null-value",
]
# ... and those it cannot: units and their dimensions (wrong-dimension, unknown-unit), values
# inside a valid-looking string (negative-speed, altitude-outside-atmosphere), ranges kept in
# the validators only (fractions above 1, NaN), rules across fields (duplicate ids, Mach above
# the drag table, segment names, engine-mass units, increasing Mach tables), and files that
# are not YAML at all or that YAML itself resolves (syntax, tabs, binary, encoding, duplicate
# keys, alias cycles). Only `sizing check` catches these.
NOT_EXPRESSIBLE = [
    "wrong-dimension", "unknown-unit", "negative-speed", "altitude-outside-atmosphere",
    "weight-fraction-above-one", "fuel-fraction-above-one", "empty-fraction-above-one", "not-a-number",
    "duplicate-id", "mach-above-polar-table", "segment-unknown", "jet-engine-mass-per-power",
    "cd0-table-not-increasing", "yaml-syntax", "yaml-tab", "binary-garbage", "not-utf8",
    "duplicate-yaml-key", "alias-cycle",
]


@pytest.fixture(scope="module")
def schema():
    r = run_cli("schema")
    assert r.returncode == 0, r.stderr
    return json.loads(r.stdout)


@pytest.fixture(scope="module")
def validator(schema):
    return jsonschema.Draft202012Validator(schema)


def test_schema_is_valid_draft_2020_12(schema):
    # Source: JSON Schema draft 2020-12 metaschema, as shipped with the jsonschema package
    assert schema["$schema"] == "https://json-schema.org/draft/2020-12/schema"
    jsonschema.Draft202012Validator.check_schema(schema)
    assert schema["type"] == "object" and schema["additionalProperties"] is False


def test_schema_comes_from_the_validating_models(schema):
    # common practice, no source: every model of sizing.inputs appears with exactly its fields
    models = {n: o for mod in MODEL_MODULES for n, o in vars(mod).items()
              if isinstance(o, type) and issubclass(o, BaseModel) and o.__module__ == mod.__name__
              and not n.startswith("_") and n != "Strict"}
    defs = schema["$defs"]
    seen = 0
    for name, model in models.items():
        if name == "RequirementFile":
            props = schema["properties"]
        elif name in defs:
            props = defs[name]["properties"]
        else:
            continue
        assert set(props) == {f.alias or n for n, f in model.model_fields.items()}, name
        seen += 1
    assert seen >= 20
    kinds = {r["properties"]["kind"]["const"] for r in defs.values()
             if "kind" in r.get("properties", {}) and "const" in r["properties"]["kind"]}
    from sizing.constraints import KINDS
    assert set(KINDS) <= kinds


@pytest.mark.parametrize("path", EXAMPLES, ids=[p.stem for p in EXAMPLES])
def test_schema_accepts_every_example(validator, path):
    data = yaml.safe_load(path.read_text())
    errors = [e.message for e in validator.iter_errors(data)]
    assert errors == []
    S.load(path)      # and the models agree


def test_broken_files_are_all_classified():
    names = {f.stem for f in BROKEN.glob("*.yaml")}
    assert names == set(EXPRESSIBLE) | set(NOT_EXPRESSIBLE)
    assert not set(EXPRESSIBLE) & set(NOT_EXPRESSIBLE)


@pytest.mark.parametrize("name", EXPRESSIBLE)
def test_schema_rejects_what_it_can_express(validator, name):
    data = yaml.safe_load((BROKEN / f"{name}.yaml").read_text())
    assert list(validator.iter_errors(data)), name


def test_schema_follows_the_file_format(schema):
    # common practice, no source: docs/file-format.md §2 -- dimensional values are strings with a unit, a
    # temperature offset may be a bare 0, a fraction may be '6 %'
    v = jsonschema.Draft202012Validator(schema)
    good = yaml.safe_load(EXAMPLES[0].read_text())
    req = good["requirements"][0]
    # (the form only: "0.9 1/h" passes as an altitude; telling a length from a rate takes pint)
    for value, ok in (("35000 ft", True), ("0.9 1/h", True), ("15000", False), (15000, False),
                      ("ft", False)):
        req["altitude"] = value
        assert (not list(v.iter_errors(good))) == ok, value
    req["altitude"] = "0 ft"
    req["temperature_offset"] = 0
    assert not list(v.iter_errors(good))
    req["weight_fraction"] = "85 %"
    assert not list(v.iter_errors(good))
