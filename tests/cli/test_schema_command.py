"""`benchcheck schema` prints a valid JSON Schema that every shipped layout satisfies."""

from __future__ import annotations

import json
import tomllib

import jsonschema


def test_schema_is_valid_and_accepts_shipped_layouts(run_cli, shipped_layout):
    result = run_cli(["schema"])
    assert result.code == 0
    schema = json.loads(result.output)
    jsonschema.Draft202012Validator.check_schema(schema)
    document = tomllib.loads(shipped_layout.read_text())
    errors = [error.message for error in jsonschema.Draft202012Validator(schema).iter_errors(document)]
    assert errors == []


def test_schema_rejects_an_unknown_element_field(run_cli):
    schema = json.loads(run_cli(["schema"]).output)
    document = {"format": 1, "bench": {"wavelength": "1 um"}, "source": {"waist": "1 mm"},
                "element": [{"name": "L", "type": "lens", "z": "1 mm", "focal_length": "1 m", "colour": "red"}]}
    assert list(jsonschema.Draft202012Validator(schema).iter_errors(document))
